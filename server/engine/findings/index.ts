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
import { FINDING_CODES } from "./types.ts";
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
const sortedFindings = new WeakMap<CompiledModel, SortedFindings>();
const collator = new Intl.Collator();

/** Every finding for a compiled model, most severe first. A model compiled on a basis re-uses what the basis's findings computed and the edit left alone. */
export function findingsOf(engine: CompiledModel): Finding[] {
  const basis = engine.basisModel;
  const context = new FindingContext(engine, basis === undefined ? undefined : contexts.get(basis));
  contexts.set(engine, context);
  // Pushed, not flatMap: four thousand findings on the benchmark model, gathered after every edit.
  const found: Finding[] = [];
  for (const check of FINDING_CHECKS) for (const finding of check.check(context)) found.push(finding);
  context.releaseBasis();
  const sorted = sortedLike(found, basis === undefined ? undefined : sortedFindings.get(basis));
  sortedFindings.set(engine, sorted);
  return [...sorted.list];
}

/** Findings in order, and whether two neighbours tie (same severity, code and elements): only then does the order among equals need the order found. */
interface SortedFindings {
  readonly list: readonly Finding[];
  readonly ties: boolean;
}

/** What a finding is ordered by: severity, code (by collation) and elements. */
interface SortKey {
  readonly rank: number;
  readonly code: number;
  readonly elements: string;
  /** Whether the elements are printable ASCII, which never collates equal to other text. */
  readonly ascii: boolean;
}

/** The codes in collation order, sorted once, so comparing two findings' codes needs no collation. */
const CODE_ORDER: ReadonlyMap<string, number> = new Map([...FINDING_CODES].sort(collator.compare).map((code, i) => [code, i]));

/** Findings pass unchanged from a model to the next after an edit, and so do their keys. */
const keyCache = new WeakMap<Finding, SortKey>();

function keyOf(finding: Finding): SortKey {
  let key = keyCache.get(finding);
  if (key === undefined) {
    const elements = finding.elements.join(" ");
    key = { rank: severityRank(finding.severity), code: CODE_ORDER.get(finding.code) as number, elements, ascii: !NOT_ASCII.test(elements) };
    keyCache.set(finding, key);
  }
  return key;
}

/** Most severe first, then by code and elements. */
function compareKeys(x: SortKey, y: SortKey): number {
  return y.rank - x.rank || x.code - y.code || (x.elements === y.elements ? 0 : collator.compare(x.elements, y.elements));
}

/** Same severity, code and elements (elements the collator holds equal). */
function tie(x: SortKey, y: SortKey): boolean {
  if (x.rank !== y.rank || x.code !== y.code) return false;
  if (x.elements === y.elements) return true;
  return !(x.ascii && y.ascii) && collator.compare(x.elements, y.elements) === 0;
}

/** Indices into `findings` in order; equals in the order of their indices. */
function sortedIndices(findings: readonly Finding[], indices: number[]): number[] {
  const keys = new Array<SortKey>(findings.length);
  for (const i of indices) keys[i] = keyOf(findings[i]);
  return indices.sort((a, b) => compareKeys(keys[a], keys[b]) || a - b);
}

/**
 * The findings most severe first, then by code and elements (ties in the order found). After
 * an edit most findings are the basis's own objects, already in order: only the others are
 * sorted and put in their places.
 */
function sortedLike(found: readonly Finding[], basis: SortedFindings | undefined): SortedFindings {
  if (basis === undefined || basis.ties) return sortedAfresh(found);
  // One look-up per finding found: where it stands in the basis's list, if it is the basis's.
  const at = placesOf(basis);
  const keptAt = new Uint8Array(basis.list.length);
  const addedAt: number[] = [];
  for (let i = 0; i < found.length; i++) {
    const place = at.get(found[i]);
    if (place === undefined) addedAt.push(i);
    else keptAt[place] = 1;
  }
  // A new finding with the exact sort key of a basis finding no longer found (most are made
  // again by a check whose inputs the edit touched) takes that one's place: no two basis
  // findings tie, so it sorts there without a collation. Only the rest are sorted and put in.
  let dropped: Map<string, number> | undefined;
  const takenPlace = new Int32Array(addedAt.length).fill(-1);
  const rest: number[] = [];
  for (let a = 0; a < addedAt.length; a++) {
    dropped ??= droppedPlaces(basis, keptAt);
    const place = dropped.get(exactKey(keyOf(found[addedAt[a]])));
    if (place === undefined || keptAt[place] !== 0) rest.push(addedAt[a]);
    else {
      // Claimed: a second finding with the same key ties, and is sorted with the rest.
      keptAt[place] = 2;
      takenPlace[a] = place;
    }
  }
  const placed = new Array<Finding | undefined>(basis.list.length);
  for (let a = 0; a < addedAt.length; a++) if (takenPlace[a] >= 0) placed[takenPlace[a]] = found[addedAt[a]];
  const kept: Finding[] = [];
  for (let place = 0; place < keptAt.length; place++) {
    if (keptAt[place] === 1) kept.push(basis.list[place]);
    else if (keptAt[place] === 2) kept.push(placed[place] as Finding);
  }
  const added = sortedIndices(found, rest);
  // The kept findings' places in `found` are not needed: no two of them tie, and a new one that ties with one is sorted afresh.
  const out: Finding[] = [];
  let ties = false;
  let k = 0;
  for (let a = 0; a < added.length; a++) {
    const finding = found[added[a]];
    const key = keyOf(finding);
    let lo = k;
    let hi = kept.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (compareKeys(keyOf(kept[mid]), key) < 0) lo = mid + 1;
      else hi = mid;
    }
    if ((lo > 0 && tie(keyOf(kept[lo - 1]), key)) || (lo < kept.length && tie(keyOf(kept[lo]), key))) return sortedAfresh(found);
    if (a > 0 && tie(keyOf(found[added[a - 1]]), key)) ties = true;
    while (k < lo) out.push(kept[k++]);
    out.push(finding);
  }
  while (k < kept.length) out.push(kept[k++]);
  return { list: out, ties };
}

/** A sort key as one string: equal strings are equal keys (collation-equal ones need not be). */
function exactKey(key: SortKey): string {
  return `${key.rank}|${key.code}|${key.elements}`;
}

/** The places of the basis's findings that were not found again, by their exact sort key. */
function droppedPlaces(basis: SortedFindings, keptAt: Uint8Array): Map<string, number> {
  const out = new Map<string, number>();
  for (let place = 0; place < keptAt.length; place++) if (keptAt[place] === 0) out.set(exactKey(keyOf(basis.list[place])), place);
  return out;
}

/** Each sorted list's findings by their place in it, made when a model compiled on it first asks. */
const placesCache = new WeakMap<SortedFindings, ReadonlyMap<Finding, number>>();

function placesOf(sorted: SortedFindings): ReadonlyMap<Finding, number> {
  let places = placesCache.get(sorted);
  if (places === undefined) {
    const made = new Map<Finding, number>();
    sorted.list.forEach((finding, place) => made.set(finding, place));
    placesCache.set(sorted, (places = made));
  }
  return places;
}

function sortedAfresh(found: readonly Finding[]): SortedFindings {
  const order = sortedIndices(
    found,
    found.map((_, i) => i),
  );
  const list = order.map((i) => found[i]);
  let ties = false;
  for (let i = 1; i < list.length && !ties; i++) ties = tie(keyOf(list[i - 1]), keyOf(list[i]));
  return { list, ties };
}

const NOT_ASCII = /[^ -~]/;
