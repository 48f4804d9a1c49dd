// Whole-model analyses shared by findings and diff: every probe class the model can see,
// which rules are ever the first match, and which sources have a login path.

import type { Family } from "./addresses.ts";
import { intersect } from "./address-sets.ts";
import type { AddressSet } from "./address-sets.ts";
import type { CompiledModel, EntryPartition, OutcomePartition, RulePartition } from "./compile.ts";
import { censusOf, cellsOf, ownerSlots } from "./cells.ts";
import type { Runs } from "./domain.ts";
import { LOGIN_MFA, LOGIN_PASSWORD } from "./vocabulary.ts";

export interface ProbeClass {
  readonly iface: number;
  readonly to: number;
  readonly cls: number;
  readonly slice: number;
}

/** Where a probe can arrive and be sent: an interface and a device address of a family it has. */
export interface Arrival {
  readonly iface: number;
  readonly to: number;
}

/**
 * The one enumeration of where probes go (PRODUCT.md §3): every interface × every device
 * address a probe arriving there may be sent to — any interface's address, but only of a
 * family the arrival interface has (layer 1: otherwise the probe never arrives). Every
 * analysis and finding walks this, so none can count a probe that `trace` would call silent
 * at arrival.
 */
export function arrivals(engine: CompiledModel): Arrival[] {
  const out: Arrival[] = [];
  for (let iface = 0; iface < engine.interfaceAddresses.length; iface++) {
    const families = new Set(engine.interfaceAddresses[iface].map((a) => engine.addresses[a].family));
    for (const target of engine.addresses) if (families.has(target.family)) out.push({ iface, to: target.index });
  }
  return out;
}

/**
 * Every (interface, destination, service class, slice) a probe can fall in once it has
 * arrived: the arrivals above × the catalogue plus "any other port" × the week's slices.
 */
export function* probeClasses(engine: CompiledModel, options: { loginOnly?: boolean } = {}): Generator<ProbeClass> {
  const slices = engine.week.slices.length;
  for (const { iface, to } of arrivals(engine)) {
    for (const c of engine.classes) {
      if (options.loginOnly === true && c.kind !== "login") continue;
      for (let slice = 0; slice < slices; slice++) yield { iface, to, cls: c.index, slice };
    }
  }
}

export function partitionsOf(engine: CompiledModel, options: { loginOnly?: boolean } = {}): EntryPartition[] {
  const out: EntryPartition[] = [];
  for (const p of probeClasses(engine, options)) out.push(engine.entry(p.iface, p.to, p.cls, p.slice));
  return out;
}

/** The distinct first-match partitions over every probe class (the census's, kept by difference after a rule edit). */
export function distinctRulePartitions(engine: CompiledModel): RulePartition[] {
  return [...censusOf(engine).refs.keys()];
}

/** Positions of rules that are the first match for at least one probe. */
export function firstMatchRules(engine: CompiledModel): Set<number> {
  const owning = censusOf(engine).owning;
  const used = new Set<number>();
  for (let slot = 0; slot < owning.length; slot++) {
    if (owning[slot] === 0) continue;
    const position = engine.positionOfSlot(slot);
    if (position >= 0) used.add(position);
  }
  return used;
}

/**
 * Whether every element in [start, end) has its first match among active[from…] (or the
 * default) with the given action: a sweep of the later rules' bitsets over the run's words
 * only, stopping at the first rule of the other action that takes an element.
 */
function actsAlikeAfter(engine: CompiledModel, family: Family, active: Int32Array, from: number, start: number, end: number, allow: boolean, remaining: Int32Array): boolean {
  const firstWord = start >>> 5;
  const lastWord = (end - 1) >>> 5;
  let left = 0;
  for (let w = firstWord; w <= lastWord; w++) {
    const lo = w === firstWord ? start & 31 : 0;
    const hi = w === lastWord ? (end - 1) & 31 : 31;
    remaining[w - firstWord] = hi - lo === 31 ? -1 : ((1 << (hi - lo + 1)) - 1) << lo;
    left++;
  }
  for (let i = from; i < active.length; i++) {
    const position = engine.positionOfSlot(active[i]);
    const bits = engine.ruleSourceBits(position, family);
    const words = bits.words;
    let lo = 0;
    let hi = words.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (words[mid] < firstWord) lo = mid + 1;
      else hi = mid;
    }
    const same = engine.rules[position].allow === allow;
    for (let j = lo; j < words.length && words[j] <= lastWord; j++) {
      const w = words[j] - firstWord;
      const fresh = remaining[w] & bits.masks[j];
      if (fresh === 0) continue;
      if (!same) return false;
      remaining[w] ^= fresh;
      if (remaining[w] === 0 && --left === 0) return true;
    }
  }
  return engine.defaultAllow === allow;
}

const redundantCache = new WeakMap<CompiledModel, Set<number>>();

/**
 * Rules that are the first match somewhere and whose removal alone changes no outcome:
 * wherever such a rule is the first match, the next match (or the default) acts alike. One
 * walk over the distinct partitions; a rule is dropped at the first element where its next
 * match differs, so rules that matter (nearly all) cost a single check. After a rule edit,
 * only the rules in the changed cells' partitions are judged again, by counting the live
 * partitions where each matters (mattersCount).
 */
export function redundantRules(engine: CompiledModel): Set<number> {
  const cached = redundantCache.get(engine);
  if (cached !== undefined) return cached;
  const census = censusOf(engine);
  const basis = engine.incrementalBasis;
  const redundant = new Set<number>();
  if (census.edit !== null && basis !== undefined) {
    const before = redundantRules(basis);
    const affected = census.edit.affected;
    for (const position of before) {
      // The same rule (slot: id and sources) at its position in this model.
      const slot = basis.slotOf(position);
      if (affected[slot] === 1) continue;
      const now = engine.positionOfSlot(slot);
      if (now >= 0) redundant.add(now);
    }
    for (let slot = 0; slot < affected.length; slot++) {
      if (affected[slot] === 0 || census.owning[slot] === 0) continue;
      const position = engine.positionOfSlot(slot);
      if (position >= 0 && mattersCount(engine, slot) === 0) redundant.add(position);
    }
  } else {
    // Per slot: 0 never the first match, 1 the first match somewhere, 2 and removing it matters.
    const state = new Uint8Array(engine.slotCount);
    for (const p of distinctRulePartitions(engine)) {
      // A partition whose owners are all known to matter already cannot change the answer: its runs are skipped.
      const owners = ownerSlots(p);
      let open = false;
      for (let i = 0; i < owners.length && !open; i++) open = state[owners[i]] !== 2;
      if (!open) continue;
      const { values } = p.owner;
      for (let k = 0; k < values.length; k++) {
        const slot = values[k];
        if (slot < 0 || state[slot] === 2) continue;
        state[slot] = 1;
        if (runMatters(engine, p, k, placeInList(engine, p.active, slot))) state[slot] = 2;
      }
    }
    for (let slot = 0; slot < state.length; slot++) if (state[slot] === 1 && engine.positionOfSlot(slot) >= 0) redundant.add(engine.positionOfSlot(slot));
  }
  redundantCache.set(engine, redundant);
  return redundant;
}

/** Per model, per slot asked for: the number of live partitions in which the rule owns elements and removing it changes an outcome. */
const mattersCounts = new WeakMap<CompiledModel, Map<number, number>>();

/** In how many live partitions removing the rule (by slot) matters: the basis's count moved by the changed cells' partitions, else counted afresh. */
function mattersCount(engine: CompiledModel, slot: number): number {
  let counts = mattersCounts.get(engine);
  if (counts === undefined) mattersCounts.set(engine, (counts = new Map()));
  const known = counts.get(slot);
  if (known !== undefined) return known;
  const census = censusOf(engine);
  const basis = engine.incrementalBasis;
  let count = 0;
  if (census.edit !== null && basis !== undefined && slot < basis.slotCount) {
    count = mattersCount(basis, slot) + (census.edit.affected[slot] === 1 ? (mattersMoves(engine, basis).get(slot) ?? 0) : 0);
  } else {
    // A slot new in this model (a rule added, or its sources changed) is in no basis partition:
    // the live partitions holding it are among the changed cells' new ones.
    const holding = census.edit !== null && basis !== undefined ? census.edit.marked.filter((p) => census.refs.has(p)) : census.refs.keys();
    for (const p of holding) if (ownerSlots(p).includes(slot) && mattersInPartition(engine, p, slot)) count++;
  }
  counts.set(slot, count);
  return count;
}

const mattersMovesCache = new WeakMap<CompiledModel, Map<number, number>>();

/**
 * After a rule edit, per slot: how the number of live partitions where removing the rule
 * matters moved, over the changed cells' old and new partitions (one pass over each).
 */
function mattersMoves(engine: CompiledModel, basis: CompiledModel): Map<number, number> {
  const cached = mattersMovesCache.get(engine);
  if (cached !== undefined) return cached;
  const census = censusOf(engine);
  const before = censusOf(basis).refs;
  const moves = new Map<number, number>();
  for (const p of census.edit?.marked ?? []) {
    const was = before.has(p);
    const is = census.refs.has(p);
    // Live before and after with the same actions: it matters in both or in neither.
    if (was === is && (!was || sameActions(engine, basis, p))) continue;
    for (const slot of ownerSlots(p)) {
      const move = (is && mattersInPartition(engine, p, slot) ? 1 : 0) - (was && mattersInPartition(basis, p, slot) ? 1 : 0);
      if (move !== 0) moves.set(slot, (moves.get(slot) ?? 0) + move);
    }
  }
  mattersMovesCache.set(engine, moves);
  return moves;
}

/** Whether every rule of the partition, and the default, has the same action in the model as in its basis. */
function sameActions(engine: CompiledModel, basis: CompiledModel, p: RulePartition): boolean {
  if (engine.defaultAllow !== basis.defaultAllow) return false;
  for (let k = 0; k < p.active.length; k++) if (engine.rules[engine.positionOfSlot(p.active[k])].allow !== basis.rules[basis.positionOfSlot(p.active[k])].allow) return false;
  return true;
}

/**
 * Where a rule (by slot) sits in a partition's list of active rules: the list is in rule
 * order, so a binary search by position finds it without a table over the whole list.
 */
function placeInList(engine: CompiledModel, active: Int32Array, slot: number): number {
  const position = engine.positionOfSlot(slot);
  let lo = 0;
  let hi = active.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (engine.positionOfSlot(active[mid]) < position) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Per model, per partition: the slots whose removal changes an outcome in it (mattersInPartition for every owner at once). */
const slotsThatMatterCache = new WeakMap<CompiledModel, WeakMap<RulePartition, ReadonlySet<number>>>();

/** Whether removing the rule (by slot) changes an outcome somewhere in the partition, with the engine's actions. */
function mattersInPartition(engine: CompiledModel, p: RulePartition, slot: number): boolean {
  return slotsThatMatter(engine, p).has(slot);
}

/** The owners of a partition whose removal changes an outcome in it: kept per model and partition. */
function slotsThatMatter(engine: CompiledModel, p: RulePartition): ReadonlySet<number> {
  let byPartition = slotsThatMatterCache.get(engine);
  if (byPartition === undefined) slotsThatMatterCache.set(engine, (byPartition = new WeakMap()));
  const cached = byPartition.get(p);
  if (cached !== undefined) return cached;
  const basis = engine.incrementalBasis;
  const from = basis === undefined ? undefined : engine.partitionBasis(p);
  // After an edit, a partition updated from a basis partition: an owner none of whose elements
  // (in either version) a changed rule covers has the same elements and, for each, the same
  // next match with the same action (the changed rules are the only ones that moved, came,
  // went or changed action), so it matters here exactly when it did there.
  let before: ReadonlySet<number> | undefined;
  if (basis !== undefined && from !== undefined) {
    before = slotsThatMatter(basis, from);
    const dirty = changedSources(engine, basis)[p.family];
    if (ownerStates.length < engine.slotCount) ownerStates = new Uint8Array(engine.slotCount * 2);
    markTouching(from.owner, dirty, engine.domains[p.family].size);
    // Often the same runs object (the edited rule owns nothing in either): marked already.
    if (p.owner !== from.owner) markTouching(p.owner, dirty, engine.domains[p.family].size);
  }
  // One pass over the partition's runs; an owner is judged until one of its runs matters.
  const found = new Set<number>();
  const states = ownerStates;
  const values = p.owner.values;
  for (let k = 0; k < values.length; k++) {
    const owner = values[k];
    if (owner < 0) continue;
    const state = before === undefined ? (found.has(owner) ? SETTLED : TOUCHED) : states[owner];
    if (state === SETTLED) continue;
    if (state === UNTOUCHED) {
      states[owner] = SETTLED;
      if ((before as ReadonlySet<number>).has(owner)) found.add(owner);
    } else if (runMatters(engine, p, k, placeInList(engine, p.active, owner))) {
      if (before !== undefined) states[owner] = SETTLED;
      found.add(owner);
    }
  }
  if (before !== undefined && from !== undefined) {
    for (const slot of ownerSlots(p)) states[slot] = UNTOUCHED;
    for (const slot of ownerSlots(from)) if (slot < states.length) states[slot] = UNTOUCHED;
  }
  byPartition.set(p, found);
  return found;
}

/** Per slot, while slotsThatMatter walks an updated partition: a changed rule's sources touch its elements, or it is settled; zero between calls. */
let ownerStates = new Uint8Array(0);
const UNTOUCHED = 0;
const TOUCHED = 1;
const SETTLED = 2;

const changedSourcesCache = new WeakMap<CompiledModel, Readonly<Record<Family, Int32Array>>>();

/** Per family, a dense bitset of the elements in the sources of every rule the edit changed, as the basis and as the model have them. */
function changedSources(engine: CompiledModel, basis: CompiledModel): Readonly<Record<Family, Int32Array>> {
  const cached = changedSourcesCache.get(engine);
  if (cached !== undefined) return cached;
  const ids = engine.changedRuleIds ?? new Set<string>();
  const out = { 4: new Int32Array(engine.domains[4].words), 6: new Int32Array(engine.domains[6].words) };
  for (const model of [basis, engine]) {
    for (const rule of model.rules) {
      if (!ids.has(rule.id)) continue;
      for (const family of [4, 6] as const) {
        const { words, masks } = model.ruleSourceBits(rule.position, family);
        for (let j = 0; j < words.length; j++) out[family][words[j]] |= masks[j];
      }
    }
  }
  changedSourcesCache.set(engine, out);
  return out;
}

/** Marks TOUCHED every owner with a run holding an element of the dense bitset: one pass over the runs and the bitset's words. */
function markTouching(runs: Runs, dense: Int32Array, size: number): void {
  const { starts, values } = runs;
  const states = ownerStates;
  for (let k = 0; k < starts.length; k++) {
    const owner = values[k];
    if (owner < 0 || states[owner] === TOUCHED) continue;
    const start = starts[k];
    const last = (k + 1 < starts.length ? starts[k + 1] : size) - 1;
    const firstWord = start >>> 5;
    const lastWord = last >>> 5;
    for (let w = firstWord; w <= lastWord; w++) {
      let mask = dense[w];
      if (mask === 0) continue;
      if (w === firstWord) mask &= -1 << (start & 31);
      if (w === lastWord && (last & 31) !== 31) mask &= (1 << ((last & 31) + 1)) - 1;
      if (mask !== 0) {
        states[owner] = TOUCHED;
        break;
      }
    }
  }
}

/** Scratch for actsAlikeAfter, large enough for either family's words. */
let remainingScratch = new Int32Array(0);

/** Whether the k-th run's owner (at index `at` of the partition's active list) decides it differently from what would decide without it (the next match or the default). */
function runMatters(engine: CompiledModel, p: RulePartition, k: number, at: number): boolean {
  const { starts, values } = p.owner;
  const slot = values[k];
  const words = engine.domains[p.family].words + 1;
  if (remainingScratch.length < words) remainingScratch = new Int32Array(words);
  const end = k + 1 < starts.length ? starts[k + 1] : engine.domains[p.family].size;
  return !actsAlikeAfter(engine, p.family, p.active, at + 1, starts[k], end, engine.rules[engine.positionOfSlot(slot)].allow, remainingScratch);
}

/**
 * Which sources reach a login, kept so an edit updates it: per distinct login outcome runs,
 * the number of login cells whose week has it, and per family a coverage difference array
 * over the elements (each distinct runs' login-allowing elements counted once).
 */
interface LoginCoverage {
  readonly cells: ReadonlyMap<Runs, { readonly family: Family; readonly count: number }>;
  readonly diff: Readonly<Record<Family, Int32Array>>;
  readonly reachable: AddressSet;
}

const loginCoverageCache = new WeakMap<CompiledModel, LoginCoverage>();

/** Outcome values that reach a login with an eligible account. */
const LOGIN_OUTCOMES = (1 << LOGIN_MFA) | (1 << LOGIN_PASSWORD);

/** Sources (both families) that reach a login with an eligible account somewhere, at some time. */
export function loginReachable(engine: CompiledModel): AddressSet {
  return loginCoverage(engine).reachable;
}

/**
 * The login coverage of every login cell (each distinct outcome of a cell's week once; a
 * login service nothing listens to has no login outcome, whether or not its rules are
 * evaluated). After a rule edit, the basis's with the changed login cells' outcomes moved.
 */
function loginCoverage(engine: CompiledModel): LoginCoverage {
  const cached = loginCoverageCache.get(engine);
  if (cached !== undefined) return cached;
  const cells = cellsOf(engine);
  const basis = engine.incrementalBasis;
  const edit = basis === undefined ? null : censusOf(engine).edit;
  const before = basis === undefined || edit === null ? undefined : loginCoverage(basis);
  const isLogin = (c: number) => engine.classes[cells.cls[c]].kind === "login";
  if (before !== undefined && edit !== null && !edit.cells.some(isLogin)) {
    loginCoverageCache.set(engine, before);
    return before;
  }
  const counts = new Map(before?.cells);
  const diff = { 4: before === undefined ? new Int32Array(engine.domains[4].size + 1) : before.diff[4].slice(), 6: before === undefined ? new Int32Array(engine.domains[6].size + 1) : before.diff[6].slice() };
  const move = (outcomes: readonly OutcomePartition[], by: number) => {
    for (const { family, outcome } of outcomes) {
      const was = counts.get(outcome)?.count ?? 0;
      const now = was + by;
      if (now === 0) counts.delete(outcome);
      else counts.set(outcome, { family, count: now });
      if (was === 0 || now === 0) engine.domains[family].addCoverage(diff[family], outcome, LOGIN_OUTCOMES, now === 0 ? -1 : 1);
    }
  };
  if (before !== undefined && basis !== undefined && edit !== null) {
    for (const c of edit.cells) {
      if (!isLogin(c)) continue;
      move(basis.weekOutcomes(cells.iface[c], cells.to[c], cells.cls[c]), -1);
      move(engine.weekOutcomes(cells.iface[c], cells.to[c], cells.cls[c]), 1);
    }
  } else {
    // Cells with the same candidate list, class, listening and family have the same week of outcomes: one look, counted once per cell.
    const byList = new Map<number, { cell: number; cells: number }>();
    for (let c = 0; c < cells.count; c++) {
      if (!isLogin(c)) continue;
      const iface = cells.iface[c];
      const to = cells.to[c];
      const cls = cells.cls[c];
      const service = engine.classes[cls].service;
      const listening = service !== null && engine.listening[iface].has(service.name) ? 1 : 0;
      const key = ((engine.candidateRules(iface, to, cls).id * engine.classes.length + cls) * 2 + listening) * 2 + (engine.addresses[to].family === 4 ? 0 : 1);
      const seen = byList.get(key);
      if (seen === undefined) byList.set(key, { cell: c, cells: 1 });
      else seen.cells++;
    }
    for (const { cell, cells: times } of byList.values()) move(engine.weekOutcomes(cells.iface[cell], cells.to[cell], cells.cls[cell]), times);
  }
  const coverage = { cells: counts, diff, reachable: { v4: engine.domains[4].rangesCovered(diff[4]), v6: engine.domains[6].rangesCovered(diff[6]) } };
  loginCoverageCache.set(engine, coverage);
  return coverage;
}

export function intersectsSet(a: AddressSet, b: AddressSet): boolean {
  return intersect(a.v4, b.v4).length > 0 || intersect(a.v6, b.v6).length > 0;
}
