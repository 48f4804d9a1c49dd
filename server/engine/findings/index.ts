// Findings: hardening checks with a severity, the affected elements, why it matters, the
// published source (or "common practice, no source") and, where one exists, a witness probe.
// The registry below is the list of checks; each lives in its own module under checks/.
import type { CompiledModel } from "../compile.ts";
import { severityRank } from "../vocabulary.ts";
import { broadLoginSources, defaultAccountName, noSecondFactor, unrestrictedAccount } from "./checks/accounts.ts";
import { cleartextListener, internetLoginExposed, internetPing, noFinalDrop } from "./checks/exposure.ts";
import { lockout } from "./checks/lockout.ts";
import { redundantRule, ruleNeverActive, shadowedRule } from "./checks/rules.ts";
import { unusedObject } from "./checks/unused-object.ts";
import { FindingContext } from "./context.ts";
import type { Finding, FindingCheck } from "./types.ts";

export { DEFAULT_ACCOUNT_NAMES } from "./checks/accounts.ts";
export { NON_GLOBAL, nonPrivate } from "./context.ts";
export { FINDING_CODES } from "./types.ts";
export type { Finding, FindingCheck, FindingCode, Witness, WitnessProbe } from "./types.ts";

/** Every check, in the order of PRODUCT.md §5. */
export const FINDING_CHECKS: readonly FindingCheck[] = [
  defaultAccountName,
  unrestrictedAccount,
  noSecondFactor,
  cleartextListener,
  internetLoginExposed,
  internetPing,
  broadLoginSources,
  shadowedRule,
  redundantRule,
  noFinalDrop,
  lockout,
  ruleNeverActive,
  unusedObject,
];

const contexts = new WeakMap<CompiledModel, FindingContext>();
const collator = new Intl.Collator();

/** Every finding for a compiled model, most severe first. A model compiled on a basis re-uses what the basis's findings computed and the edit left alone. */
export function findingsOf(engine: CompiledModel): Finding[] {
  const basis = engine.basisModel;
  const context = new FindingContext(engine, basis === undefined ? undefined : contexts.get(basis));
  contexts.set(engine, context);
  const found = FINDING_CHECKS.flatMap((check) => check.check(context));
  context.releaseBasis();
  // The collator of localeCompare, made once; each finding's keys computed once (a model may have thousands of findings).
  const keyed = found.map((finding) => ({ finding, rank: severityRank(finding.severity), elements: finding.elements.join(" ") }));
  keyed.sort((a, b) => b.rank - a.rank || collator.compare(a.finding.code, b.finding.code) || collator.compare(a.elements, b.elements));
  return keyed.map((k) => k.finding);
}
