import { cx } from "./ui/cx";

export const OUTCOME_ORDER = ["silent", "refused", "answered", "login-denied", "login-mfa", "login-password"] as const;
export type OutcomeName = (typeof OUTCOME_ORDER)[number];

/** Plain words for each outcome, as an outsider would experience it. */
export const OUTCOME_LABELS: Record<OutcomeName, string> = {
  silent: "No answer",
  refused: "Refused (device revealed)",
  answered: "Answered",
  "login-denied": "Login shown, refused",
  "login-mfa": "Login with second factor",
  "login-password": "Login with password only",
};

const TONES: Record<OutcomeName, string> = {
  silent: "text-outcome-silent border-outcome-silent/40 bg-outcome-silent/10",
  refused: "text-outcome-refused border-outcome-refused/40 bg-outcome-refused/10",
  answered: "text-outcome-answered border-outcome-answered/40 bg-outcome-answered/10",
  "login-denied": "text-outcome-login-denied border-outcome-login-denied/40 bg-outcome-login-denied/10",
  "login-mfa": "text-outcome-login-mfa border-outcome-login-mfa/40 bg-outcome-login-mfa/10",
  "login-password": "text-outcome-login-password border-outcome-login-password/40 bg-outcome-login-password/10",
};

export function isOutcome(value: unknown): value is OutcomeName {
  return typeof value === "string" && (OUTCOME_ORDER as readonly string[]).includes(value);
}

/** An outcome as a labelled chip: the colour helps, the words carry the meaning. */
export function OutcomeChip({ outcome, className }: { outcome: OutcomeName; className?: string }) {
  const rank = OUTCOME_ORDER.indexOf(outcome);
  return (
    <span className={cx("inline-flex items-center gap-1.5 rounded-full border px-2 py-0.5 text-xs font-medium whitespace-nowrap", TONES[outcome], className)} title={outcome}>
      <span aria-hidden="true" className="flex gap-px">
        {OUTCOME_ORDER.slice(1).map((_, index) => (
          <span key={index} className={cx("h-2 w-1 rounded-[1px]", index < rank ? "bg-current" : "bg-current opacity-20")} />
        ))}
      </span>
      {OUTCOME_LABELS[outcome]}
    </span>
  );
}
