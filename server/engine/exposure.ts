// Exposure map: for every interface × its addresses × catalogue service × slice, the exact
// partition of the destination's family by outcome, as counts and minimal CIDR lists.

import type { Family } from "./addresses.ts";
import { rangesToCidrs } from "./address-sets.ts";
import type { Ranges } from "./address-sets.ts";
import type { CompiledModel, OutcomePartition } from "./compile.ts";
import type { Runs } from "./domain.ts";
import { OUTCOMES, outcomeRecord } from "./vocabulary.ts";
import type { OutcomeRecord } from "./vocabulary.ts";
import { formatWeekMinute } from "./schedules.ts";

export interface ExposureEntry {
  readonly interface: string;
  readonly to: string;
  readonly service: string;
  /** Decimal address counts; they sum to 2^32 or 2^128. */
  readonly counts: OutcomeRecord<string>;
  /** Minimal CIDR lists, ascending. */
  readonly ranges: OutcomeRecord<string[]>;
}

export interface ExposureSlice {
  /** Local week time, e.g. "mon 08:00" (inclusive). */
  readonly start: string;
  /** Exclusive; earlier than start when the slice wraps past the end of Sunday. */
  readonly end: string;
  readonly startMinute: number;
  readonly endMinute: number;
  readonly activeSchedules: readonly string[];
  readonly entries: readonly ExposureEntry[];
}

export interface ExposureAt {
  readonly at: string;
  readonly localTime: string;
  readonly slice: { readonly start: string; readonly end: string };
  readonly entries: readonly ExposureEntry[];
}

export interface ExposureMap {
  readonly slices: readonly ExposureSlice[];
}

/** One cell of the map before rendering: indices into the compiled model and its partition. */
export interface ExposureCell {
  readonly iface: number;
  readonly to: number;
  readonly cls: number;
  readonly partition: OutcomePartition;
}

/** Partition of sources by outcome for a cell: counts, and address ranges per outcome index (computed on first use). */
export interface OutcomeSets {
  readonly family: Family;
  readonly counts: readonly bigint[];
  readonly ranges: readonly Ranges[];
}

/** Cells for one slice: every interface × each of its addresses × every catalogue service. */
export function exposureCells(engine: CompiledModel, slice: number): ExposureCell[] {
  const cells: ExposureCell[] = [];
  const services = engine.catalogue.length;
  engine.interfaceAddresses.forEach((addresses, iface) => {
    for (const to of addresses) {
      for (let cls = 0; cls < services; cls++) cells.push({ iface, to, cls, partition: engine.outcomeOf(iface, to, cls, slice) });
    }
  });
  return cells;
}

const setsCache = new WeakMap<Runs, OutcomeSets>();
const countsCache = new WeakMap<Runs, readonly bigint[]>();

/**
 * Address counts per outcome index of a partition, once per distinct runs object. Readers of
 * counts alone (the revision summary's worst outcome) take this path: after an edit most
 * partitions are the basis's runs, whose counts are kept, and no sets object is made.
 */
export function outcomeCounts(engine: CompiledModel, partition: OutcomePartition): readonly bigint[] {
  let counts = countsCache.get(partition.outcome);
  if (counts === undefined) {
    counts = engine.domains[partition.family].countsByValue(partition.outcome, OUTCOMES.length);
    countsCache.set(partition.outcome, counts);
  }
  return counts;
}

/** Outcome counts and ranges of a partition; shared partitions are computed once, ranges only when read. */
export function outcomeSets(engine: CompiledModel, partition: OutcomePartition): OutcomeSets {
  const cached = setsCache.get(partition.outcome);
  if (cached !== undefined) return cached;
  const domain = engine.domains[partition.family];
  let ranges: Ranges[] | null = null;
  const sets: OutcomeSets = {
    family: partition.family,
    counts: outcomeCounts(engine, partition),
    get ranges(): Ranges[] {
      ranges ??= OUTCOMES.map((_, i) => domain.rangesWhere(partition.outcome, i));
      return ranges;
    },
  };
  setsCache.set(partition.outcome, sets);
  return sets;
}

/** An outcome partition's entry parts, shared by every entry of the partition: one look-up per entry. */
interface EntryParts {
  readonly counts: OutcomeRecord<string>;
  readonly ranges: OutcomeRecord<string[]>;
}

const partsCache = new WeakMap<Runs, EntryParts>();
const setsOfLists = new WeakMap<object, OutcomeSets>();

/** The outcome sets behind an exposure entry's `ranges` (a writer that renders CIDRs its own way reads them); undefined for any other object. */
export function outcomeSetsOfRanges(ranges: OutcomeRecord<string[]>): OutcomeSets | undefined {
  return setsOfLists.get(ranges);
}

/**
 * An exposure entry. Its counts are shared by every entry of the same partition; its CIDR
 * lists are rendered each time one is read (JSON.stringify reads each once) and kept by
 * nobody, so a map of millions of CIDRs is written out in flat memory. (Keeping the last
 * few partitions' lists for neighbouring entries that share one measured no faster and 50 MB
 * larger on the benchmark model.) A caller that reads a list twice keeps it in a variable.
 */
export function renderEntry(engine: CompiledModel, cell: ExposureCell): ExposureEntry {
  let parts = partsCache.get(cell.partition.outcome);
  if (parts === undefined) {
    const sets = outcomeSets(engine, cell.partition);
    const ranges = cidrLists(sets);
    setsOfLists.set(ranges, sets);
    parts = { counts: outcomeRecord((_, i) => sets.counts[i].toString()), ranges };
    partsCache.set(cell.partition.outcome, parts);
  }
  // A plain data object (no accessor of its own): entries are made by the ten thousand and an
  // object literal with a getter is several times slower to create.
  return { interface: engine.model.interfaces[cell.iface].name, to: engine.addresses[cell.to].text, service: engine.catalogue[cell.cls].name, counts: parts.counts, ranges: parts.ranges };
}

/** The six CIDR lists of a partition as enumerable getters, in outcome order: each read renders its list afresh (shared by the partition's entries, kept by none). */
function cidrLists(sets: OutcomeSets): OutcomeRecord<string[]> {
  const lists = {} as OutcomeRecord<string[]>;
  OUTCOMES.forEach((outcome, i) => {
    Object.defineProperty(lists, outcome, { enumerable: true, get: () => rangesToCidrs(sets.ranges[i], sets.family) });
  });
  return lists;
}

/**
 * The most exposed outcome (highest in OUTCOMES order) any source gets on the given
 * interfaces' own addresses, any catalogue service, any time of the week — what the exposure
 * map would show at its worst, read from each distinct outcome partition's counts without
 * rendering the map. -1 when there are no such cells.
 */
export function worstOutcomeOn(engine: CompiledModel, interfaces: readonly number[]): number {
  let worst = -1;
  for (const iface of interfaces) {
    for (const to of engine.interfaceAddresses[iface]) {
      for (let cls = 0; cls < engine.catalogue.length; cls++) {
        for (const partition of engine.weekOutcomes(iface, to, cls)) {
          const counts = outcomeCounts(engine, partition);
          for (let rank = counts.length - 1; rank > worst; rank--) if (counts[rank] !== 0n) worst = rank;
        }
      }
    }
  }
  return worst;
}

/** The exposure map at one instant (the slice holding it). */
export function exposureAt(engine: CompiledModel, atMs: number): ExposureAt {
  const slice = engine.sliceAt(atMs);
  const s = engine.week.slices[slice];
  return {
    at: new Date(atMs).toISOString(),
    localTime: engine.clock.localText(atMs),
    slice: { start: formatWeekMinute(s.start), end: formatWeekMinute(s.end) },
    entries: exposureCells(engine, slice).map((c) => renderEntry(engine, c)),
  };
}

/** One slice of the week with its entries. */
function exposureSlice(engine: CompiledModel, index: number): ExposureSlice {
  const s = engine.week.slices[index];
  return {
    start: formatWeekMinute(s.start),
    end: formatWeekMinute(s.end),
    startMinute: s.start,
    endMinute: s.end,
    activeSchedules: engine.model.schedules.filter((_, k) => s.active[k]).map((sc) => sc.name),
    entries: exposureCells(engine, index).map((c) => renderEntry(engine, c)),
  };
}

/** The slices of the week in order, each built when asked for: a writer holds one slice at a time. */
export function* exposureSlices(engine: CompiledModel): Generator<ExposureSlice, void, undefined> {
  for (let i = 0; i < engine.week.slices.length; i++) yield exposureSlice(engine, i);
}

/** The exposure map for every slice of the week. */
export function exposureMap(engine: CompiledModel): ExposureMap {
  return { slices: [...exposureSlices(engine)] };
}
