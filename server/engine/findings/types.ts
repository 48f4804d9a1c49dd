// What a finding is, what a check is, and what a witness is. Pure types.
import type { ElementRef, Outcome, Severity } from "../vocabulary.ts";
import type { FindingContext } from "./context.ts";

export const FINDING_CODES = [
  "default-account-name",
  "unrestricted-account",
  "no-second-factor",
  "cleartext-listener",
  "internet-login-exposed",
  "internet-ping",
  "broad-login-sources",
  "shadowed-rule",
  "redundant-rule",
  "no-final-drop",
  "lockout",
  "rule-never-active",
  "unused-object",
] as const;
export type FindingCode = (typeof FINDING_CODES)[number];

/** A concrete probe, in the words `trace` takes (the CLI's flags, the trace page's query). */
export interface WitnessProbe {
  readonly from: string;
  readonly interface: string;
  readonly service: string;
  readonly to: string;
  /** An instant (ISO 8601, UTC) in the slice of the week the witness needs. */
  readonly at: string;
}

/**
 * Evidence for a finding that `trace` can replay. `probe` is a probe that shows it: tracing it
 * gives `outcome`, decided by `ruleId` (null: no rule matched, or the probe stopped before the
 * rules). For a "never" finding (a rule never first, never active; a network with no login
 * path) the probe is one instance and `proof` says which partition of the probe space proves
 * the rest.
 */
export interface Witness {
  readonly probe: WitnessProbe;
  readonly outcome: Outcome;
  readonly ruleId: string | null;
  readonly shows: string;
  readonly proof?: string;
}

export interface Finding {
  readonly code: FindingCode;
  readonly severity: Severity;
  readonly title: string;
  readonly detail: string;
  /** Affected elements as "kind:name", e.g. "account:admin", "interface:outside", "rule:r-7". */
  readonly elements: readonly ElementRef[];
  readonly source: string;
  /** A probe that shows it, where one exists (exposure and rule findings). */
  readonly witness?: Witness;
}

/** One hardening check: its code, how it grades severity, its published source, and the check. */
export interface FindingCheck {
  readonly code: FindingCode;
  /** How the severity is chosen, in words (docs and tests read it). */
  readonly severityRule: string;
  readonly source: string;
  readonly check: (context: FindingContext) => Finding[];
}
