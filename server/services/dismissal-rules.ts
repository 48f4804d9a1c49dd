// Which findings may be dismissed, by whom, and how. Pure and browser-safe, so the service that
// enforces the rule, the form schema that checks the reason and the pages that offer (or do
// not offer) the controls all read the same one.
import type { Role } from "#models/roles.ts";
import { severityRank } from "../engine/vocabulary.ts";

/** The least role that may ask for a dismissal, withdraw one or restore a finding. */
export const DISMISS_ROLE: Role = "engineer";
/** The least role that may confirm (or decline) someone else's dismissal. */
export const CONFIRM_ROLE: Role = "reviewer";

export const REASON_MAX = 500;
/** Medium and below: a short reason is enough and the dismissal applies at once. */
export const REASON_MIN = 3;
/** High and critical: a reason a second person can judge, and that person's confirmation. */
export const CONFIRMED_REASON_MIN = 20;
/** From this severity up a dismissal needs a second person. */
export const CONFIRMATION_FROM = "high";

export const LOCKOUT_NOT_DISMISSIBLE =
  "A lockout cannot be dismissed, only fixed: give the operator network a login path again (an inbound rule that allows it, a listener, an account whose login sources include it) and the finding goes away.";

export type DismissalRule =
  /** Never dismissed (a lockout): the words say why and what to do instead. */
  | { kind: "refused"; message: string }
  /** Applies as soon as it is asked for. */
  | { kind: "direct"; minReason: number }
  /** Applies only after a second person (CONFIRM_ROLE or above, not the one who asked) confirms it. */
  | { kind: "confirmed"; minReason: number };

/** The rule for a finding of this code and severity. */
export function dismissalRuleOf(finding: { code: string; severity: string }): DismissalRule {
  if (finding.code === "lockout") return { kind: "refused", message: LOCKOUT_NOT_DISMISSIBLE };
  if (severityRank(finding.severity) >= severityRank(CONFIRMATION_FROM)) return { kind: "confirmed", minReason: CONFIRMED_REASON_MIN };
  return { kind: "direct", minReason: REASON_MIN };
}

/** The message for a reason shorter than the rule asks, counting what was typed (trimmed). */
export function shortReasonMessage(rule: Exclude<DismissalRule, { kind: "refused" }>, typed: number): string {
  if (rule.kind === "confirmed") {
    return `A high or critical finding needs a reason of at least ${rule.minReason} characters (this one has ${typed}), so the reviewer who confirms it can judge the risk.`;
  }
  return `Say why this finding is accepted (at least ${rule.minReason} characters), so the next reader knows.`;
}
