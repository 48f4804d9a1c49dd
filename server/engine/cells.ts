// The cells probes fall in — every arrival (interface × destination, analysis.ts) × service
// class, in that order — and the census of the first-match partitions they use. After an
// edit of a few inbound rules (CompiledModel.incrementalBasis) the census is kept by
// difference: only the cells a changed rule is a candidate for are looked at, so the
// findings' walks over "every distinct partition" cost what the edit changed.

import { arrivals } from "./analysis.ts";
import type { CompiledModel, RulePartition } from "./compile.ts";
import type { Runs } from "./domain.ts";

/** Every cell, in probe order: parallel arrays of interface, destination and class. */
export interface Cells {
  readonly count: number;
  readonly iface: Int32Array;
  readonly to: Int32Array;
  readonly cls: Int32Array;
}

export interface Census {
  /** The distinct live partitions, each with the number of (cell, slice) places that use it. */
  readonly refs: ReadonlyMap<RulePartition, number>;
  /** Per slot: in how many live partitions the rule owns elements (is the first match). */
  readonly owning: Int32Array;
  /**
   * For a census kept by difference: the cells the edit may have changed (ascending), and per
   * slot whether the rule is in a partition such a cell had or has — every other rule's
   * first-match decisions, partitions and neighbours are the basis's; `changed` marks those
   * cells by index. Null for a census
   * taken afresh.
   */
  readonly edit: {
    readonly cells: Int32Array;
    readonly changed: Uint8Array;
    readonly affected: Uint8Array;
    /** The partitions the changed cells had or have (live before, after, or both). */
    readonly marked: readonly RulePartition[];
  } | null;
}

const cellsCache = new WeakMap<CompiledModel, Cells>();

/** The cells of a model (the basis's own when the edit changed inbound rules only: same interfaces, addresses and catalogue). */
export function cellsOf(engine: CompiledModel): Cells {
  const cached = cellsCache.get(engine);
  if (cached !== undefined) return cached;
  const basis = engine.incrementalBasis;
  const inherited = basis === undefined ? undefined : cellsCache.get(basis);
  if (inherited !== undefined) {
    cellsCache.set(engine, inherited);
    return inherited;
  }
  const places = arrivals(engine);
  const classes = engine.classes.length;
  const count = places.length * classes;
  const cells: Cells = { count, iface: new Int32Array(count), to: new Int32Array(count), cls: new Int32Array(count) };
  let c = 0;
  for (const { iface, to } of places) {
    for (let cls = 0; cls < classes; cls++, c++) {
      cells.iface[c] = iface;
      cells.to[c] = to;
      cells.cls[c] = cls;
    }
  }
  cellsCache.set(engine, cells);
  return cells;
}

/** A cell's interface, destination and class, and its first-match partitions by slice. */
export function cellPartitions(engine: CompiledModel, cells: Cells, cell: number): { iface: number; to: number; cls: number; partitions: readonly RulePartition[] } {
  const iface = cells.iface[cell];
  const to = cells.to[cell];
  const cls = cells.cls[cell];
  return { iface, to, cls, partitions: engine.weekRulePartitions(iface, to, cls) };
}

const censusCache = new WeakMap<CompiledModel, Census>();

/** The census of a model's partitions: by difference from the basis's after a rule edit, else taken afresh. */
export function censusOf(engine: CompiledModel): Census {
  const cached = censusCache.get(engine);
  if (cached !== undefined) return cached;
  const basis = engine.incrementalBasis;
  const census = basis === undefined ? freshCensus(engine) : keptCensus(engine, basis);
  censusCache.set(engine, census);
  return census;
}

/** Every cell counted; cells with the same candidate list (and family) share their partitions, so each list is walked once and counted by its number of cells. */
function freshCensus(engine: CompiledModel): Census {
  const cells = cellsOf(engine);
  const lists = new Map<number, { partitions: readonly RulePartition[]; cells: number }>();
  for (let c = 0; c < cells.count; c++) {
    const to = cells.to[c];
    const key = engine.candidateRules(cells.iface[c], to, cells.cls[c]).id * 2 + (engine.addresses[to].family === 4 ? 0 : 1);
    const seen = lists.get(key);
    if (seen !== undefined) seen.cells++;
    else lists.set(key, { partitions: engine.weekRulePartitions(cells.iface[c], to, cells.cls[c]), cells: 1 });
  }
  const refs = new Map<RulePartition, number>();
  for (const { partitions, cells: times } of lists.values()) {
    // Neighbouring slices mostly share a partition: count each stretch of equal ones at once.
    for (let slice = 0; slice < partitions.length; ) {
      const p = partitions[slice];
      let end = slice + 1;
      while (end < partitions.length && partitions[end] === p) end++;
      refs.set(p, (refs.get(p) ?? 0) + times * (end - slice));
      slice = end;
    }
  }
  const owning = new Int32Array(engine.slotCount);
  for (const p of refs.keys()) countOwners(p, owning, 1);
  return { refs, owning, edit: null };
}

/** The basis's census with the changed cells' places moved from their old partitions to their new ones. */
function keptCensus(engine: CompiledModel, basis: CompiledModel): Census {
  const before = censusOf(basis);
  const cells = cellsOf(engine);
  // Copied by forEach: a Map made from a Map's iterator makes an entry array per partition.
  const refs = new Map<RulePartition, number>();
  before.refs.forEach((count, p) => refs.set(p, count));
  const affected = new Uint8Array(engine.slotCount);
  const marked = new Set<RulePartition>();
  const mark = (p: RulePartition): void => {
    if (marked.has(p)) return;
    marked.add(p);
    for (const slot of p.active) affected[slot] = 1;
  };
  const dirty: number[] = [];
  // Changed cells with the same old and new week arrays (one per candidate list) move alike: each pair once, by its number of cells.
  const pairs = new Map<readonly RulePartition[], Map<readonly RulePartition[], number>>();
  for (let c = 0; c < cells.count; c++) {
    const iface = cells.iface[c];
    const to = cells.to[c];
    const cls = cells.cls[c];
    if (!engine.cellMayDiffer(iface, to, cls)) continue;
    dirty.push(c);
    const old = basis.weekRulePartitions(iface, to, cls);
    const now = engine.weekRulePartitions(iface, to, cls);
    let byNow = pairs.get(old);
    if (byNow === undefined) pairs.set(old, (byNow = new Map()));
    byNow.set(now, (byNow.get(now) ?? 0) + 1);
  }
  for (const [old, byNow] of pairs) {
    for (const [now, times] of byNow) {
      for (let slice = 0; slice < old.length; slice++) {
        mark(old[slice]);
        mark(now[slice]);
        if (old[slice] === now[slice]) continue;
        const left = (refs.get(old[slice]) ?? 0) - times;
        if (left === 0) refs.delete(old[slice]);
        else refs.set(old[slice], left);
        refs.set(now[slice], (refs.get(now[slice]) ?? 0) + times);
      }
    }
  }
  const owning = new Int32Array(engine.slotCount);
  owning.set(before.owning);
  for (const p of marked) {
    const was = before.refs.has(p);
    const is = refs.has(p);
    if (was && !is) countOwners(p, owning, -1);
    else if (!was && is) countOwners(p, owning, 1);
  }
  const changed = new Uint8Array(cells.count);
  for (const c of dirty) changed[c] = 1;
  return { refs, owning, edit: { cells: Int32Array.from(dirty), changed, affected, marked: [...marked] } };
}

/** Adds `by` to the count of every slot that owns elements of the partition. */
function countOwners(p: RulePartition, owning: Int32Array, by: number): void {
  for (const slot of ownerSlots(p)) owning[slot] += by;
}

/** The rules that own elements of a partition, each once, in order of their first run there, with that run's first element. */
export interface Owners {
  readonly slots: Int32Array;
  readonly firstElements: Int32Array;
}

/** By owner runs: a partition derived with off rules that owned nothing shares its base's runs, and so its owners. */
const ownersCache = new WeakMap<Runs, Owners>();

/** The owners of a partition (a slot's runs need not be adjacent): walks its runs once, then kept with them. */
export function ownersOf(p: RulePartition): Owners {
  const cached = ownersCache.get(p.owner);
  if (cached !== undefined) return cached;
  const { starts, values } = p.owner;
  let size = 0;
  for (let k = 0; k < values.length; k++) if (values[k] >= size) size = values[k] + 1;
  if (counted.length < size) counted = new Uint8Array(size * 2);
  const slots: number[] = [];
  const firstElements: number[] = [];
  for (let k = 0; k < values.length; k++) {
    const slot = values[k];
    if (slot < 0 || counted[slot] === 1) continue;
    counted[slot] = 1;
    slots.push(slot);
    firstElements.push(starts[k]);
  }
  for (const slot of slots) counted[slot] = 0;
  const owners = { slots: Int32Array.from(slots), firstElements: Int32Array.from(firstElements) };
  ownersCache.set(p.owner, owners);
  return owners;
}

/** The slots that own elements of a partition, each once. */
export function ownerSlots(p: RulePartition): Int32Array {
  return ownersOf(p).slots;
}

/** Scratch marks for ownersOf, all zero between calls. */
let counted = new Uint8Array(0);
