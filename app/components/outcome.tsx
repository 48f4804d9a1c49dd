import { OUTCOME_LABELS, OUTCOMES, outcomeRank, type Outcome } from "#server/engine/vocabulary";
import { cx } from "./ui/cx";

// The labels live with the codes (server/engine/vocabulary.ts) so screens and CSV exports agree.
export { OUTCOME_LABELS };

// Each outcome's colour is the theme token --color-outcome-<outcome> (app.css).
export const OUTCOME_TONES: Record<Outcome, string> = {
  silent: "text-outcome-silent border-outcome-silent/40 bg-outcome-silent/10",
  refused: "text-outcome-refused border-outcome-refused/40 bg-outcome-refused/10",
  answered: "text-outcome-answered border-outcome-answered/40 bg-outcome-answered/10",
  "login-denied": "text-outcome-login-denied border-outcome-login-denied/40 bg-outcome-login-denied/10",
  "login-mfa": "text-outcome-login-mfa border-outcome-login-mfa/40 bg-outcome-login-mfa/10",
  "login-password": "text-outcome-login-password border-outcome-login-password/40 bg-outcome-login-password/10",
};

/** An outcome as a labelled chip: the colour helps, the words carry the meaning. */
export function OutcomeChip({ outcome, className }: { outcome: Outcome; className?: string }) {
  const rank = outcomeRank(outcome);
  return (
    <span className={cx("inline-flex items-center gap-1.5 rounded-full border px-2 py-0.5 text-xs font-medium whitespace-nowrap", OUTCOME_TONES[outcome], className)} title={outcome}>
      <span aria-hidden="true" className="flex gap-px">
        {OUTCOMES.slice(1).map((_, index) => (
          <span key={index} className={cx("h-2 w-1 rounded-[1px]", index < rank ? "bg-current" : "bg-current opacity-20")} />
        ))}
      </span>
      {OUTCOME_LABELS[outcome]}
    </span>
  );
}
