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
/** Each model's findings in the order findingsOf returns them, for a model compiled on it to keep that order. */
const sortedFindings = new WeakMap<CompiledModel, readonly Finding[]>();
const collator = new Intl.Collator();

/** Every finding for a compiled model, most severe first. A model compiled on a basis re-uses what the basis's findings computed and the edit left alone. */
export function findingsOf(engine: CompiledModel): Finding[] {
  const basis = engine.basisModel;
  const context = new FindingContext(engine, basis === undefined ? undefined : contexts.get(basis));
  contexts.set(engine, context);
  const found = FINDING_CHECKS.flatMap((check) => check.check(context));
  context.releaseBasis();
  const sorted = sortedLike(found, basis === undefined ? undefined : sortedFindings.get(basis));
  sortedFindings.set(engine, sorted);
  return [...sorted];
}

/**
 * The findings most severe first, then by code and elements (ties in the order found). After
 * an edit most findings are the basis's own objects, already in order: only the others are
 * sorted and put in their places.
 */
function sortedLike(found: readonly Finding[], basisOrder: readonly Finding[] | undefined): Finding[] {
  const index = new Map<Finding, number>();
  found.forEach((finding, i) => index.set(finding, i));
  // The key of each finding computed once (a model may have thousands of findings).
  const keys = new Map<Finding, { rank: number; elements: string }>();
  const keyOf = (finding: Finding) => {
    let key = keys.get(finding);
    if (key === undefined) keys.set(finding, (key = { rank: severityRank(finding.severity), elements: finding.elements.join(" ") }));
    return key;
  };
  const compare = (a: Finding, b: Finding): number => {
    const x = keyOf(a);
    const y = keyOf(b);
    return y.rank - x.rank || collator.compare(a.code, b.code) || collator.compare(x.elements, y.elements) || (index.get(a) ?? 0) - (index.get(b) ?? 0);
  };
  if (basisOrder === undefined) return [...found].sort(compare);
  const kept = basisOrder.filter((finding) => index.has(finding));
  const keptSet = new Set(kept);
  const added = found.filter((finding) => !keptSet.has(finding)).sort(compare);
  // Ties are ordered by place in `found`: the kept ones must be in that order among equals too.
  for (let i = 1; i < kept.length; i++) if (sameKey(kept[i - 1], kept[i]) && (index.get(kept[i - 1]) ?? 0) > (index.get(kept[i]) ?? 0)) return [...found].sort(compare);
  const out: Finding[] = [];
  let k = 0;
  for (const finding of added) {
    let lo = k;
    let hi = kept.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (compare(kept[mid], finding) < 0) lo = mid + 1;
      else hi = mid;
    }
    while (k < lo) out.push(kept[k++]);
    out.push(finding);
  }
  while (k < kept.length) out.push(kept[k++]);
  return out;
}

/** Whether two findings tie in the order: same severity and code, and elements the collator holds equal. */
function sameKey(a: Finding, b: Finding): boolean {
  if (a.severity !== b.severity || a.code !== b.code) return false;
  if (a.elements.length === b.elements.length && a.elements.every((element, i) => element === b.elements[i])) return true;
  // Different printable ASCII text never collates equal; other text (canonically equivalent forms) may.
  if (!a.elements.some(NOT_ASCII) && !b.elements.some(NOT_ASCII)) return false;
  return collator.compare(a.elements.join(" "), b.elements.join(" ")) === 0;
}

const NOT_ASCII = (text: string) => /[^ -~]/.test(text);
