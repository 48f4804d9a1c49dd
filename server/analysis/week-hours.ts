// The week × hour view of the exposure map: the engine's week slices laid on 168 hour cells
// (device wall clock, Monday first). Pure; the page component only needs the cell type.
//
// What the picture colours: the sources whose answer changes during the week. Sources that get
// the same answer all week (an operator network that always reaches the login, the internet that
// is always dropped) would paint every hour alike and hide the schedule, so the page states them
// once in words and the hours show the worst outcome of the others — "worst" in the product's
// exposure order (PRODUCT.md §3: silent < refused < answered < login-denied < login-mfa <
// login-password; anything above silent reveals the device, and a login that a password alone
// opens is the most exposed). When nothing is steady, this is simply each hour's worst outcome.

import { FAMILY, rangeToCidrs, type Family } from "../engine/addresses.ts";
import { WEEK_MINUTES } from "../engine/schedules.ts";
import { NO_RANK, type Segment } from "./address-grids.ts";
import type { Outcome } from "../engine/vocabulary.ts";

export interface RankedSlice {
  /** Local week minutes (0 = Monday 00:00); end is exclusive and ≤ start when the slice wraps past Sunday 24:00. */
  readonly startMinute: number;
  readonly endMinute: number;
  readonly rank: number;
}

export interface HourCell {
  /** The most exposed rank during the hour. */
  readonly top: number;
  /** The rank changes inside this hour (a window edge not on the hour). */
  readonly changes: boolean;
}

/** 7 × 24 cells (index = day × 24 + hour, Monday first, device wall clock). */
export function weekHourGrid(slices: readonly RankedSlice[]): HourCell[] {
  const intervals: { start: number; end: number; rank: number }[] = [];
  for (const slice of slices) {
    if (slice.endMinute > slice.startMinute) intervals.push({ start: slice.startMinute, end: slice.endMinute, rank: slice.rank });
    else {
      // Wraps past the end of the week (a lone slice with end == start is the whole week).
      intervals.push({ start: slice.startMinute, end: WEEK_MINUTES, rank: slice.rank });
      if (slice.endMinute > 0) intervals.push({ start: 0, end: slice.endMinute, rank: slice.rank });
    }
  }
  const cells: HourCell[] = [];
  for (let hour = 0; hour < 168; hour++) {
    const start = hour * 60;
    const end = start + 60;
    const ranks = new Set<number>();
    for (const interval of intervals) if (interval.start < end && interval.end > start) ranks.add(interval.rank);
    cells.push({ top: ranks.size ? Math.max(...ranks) : NO_RANK, changes: ranks.size > 1 });
  }
  return cells;
}

/** One slice's partition of the source space, as sorted segments (address-grids.ts `segmentsOf`). */
export interface SlicePartition {
  readonly startMinute: number;
  readonly endMinute: number;
  readonly segments: readonly Segment[];
}

export interface WeekChanges {
  /** Addresses whose outcome is not the same in every slice, as minimal CIDR blocks, ascending; at most `limit`. */
  readonly changing: string[];
  /** How many blocks `changing` would hold without the limit. */
  readonly changingBlocks: number;
  readonly changingCount: bigint;
  /** Addresses with the same outcome all week, per rank. */
  readonly steady: bigint[];
  /** Per slice: the changing addresses per rank during it. */
  readonly perSlice: bigint[][];
}

/**
 * Splits the source space into the addresses whose answer stays the same all week and those
 * whose answer changes, by a sweep over every slice's boundaries (work: boundaries × slices).
 * Every partition must cover the family's whole space, as the engine's do.
 */
export function weekChanges(family: Family, slices: readonly SlicePartition[], ranks = 6, limit = 20): WeekChanges {
  const points = new Set<bigint>([0n]);
  for (const slice of slices) for (const segment of slice.segments) points.add(segment.first);
  const starts = [...points].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  const cursors = slices.map(() => 0);
  const steady = Array<bigint>(ranks).fill(0n);
  const perSlice = slices.map(() => Array<bigint>(ranks).fill(0n));
  const changing: string[] = [];
  let changingBlocks = 0;
  let changingCount = 0n;
  let open: { first: bigint; last: bigint } | null = null;
  const close = () => {
    if (!open) return;
    const blocks = rangeToCidrs(family, open.first, open.last);
    changingBlocks += blocks.length;
    changing.push(...blocks.slice(0, limit - changing.length));
    open = null;
  };
  const max = FAMILY[family].max;
  starts.forEach((first, index) => {
    const last = index + 1 < starts.length ? starts[index + 1] - 1n : max;
    const size = last - first + 1n;
    const here = slices.map((slice, s) => {
      while (cursors[s] < slice.segments.length && slice.segments[cursors[s]].last < first) cursors[s] += 1;
      const segment = slice.segments[cursors[s]];
      return segment && segment.first <= first ? segment.rank : NO_RANK;
    });
    if (here.every((rank) => rank === here[0])) {
      if (here[0] < ranks) steady[here[0]] += size;
      close();
      return;
    }
    changingCount += size;
    here.forEach((rank, s) => {
      if (rank < ranks) perSlice[s][rank] += size;
    });
    if (open && open.last + 1n === first) open.last = last;
    else {
      close();
      open = { first, last };
    }
  });
  close();
  return { changing, changingBlocks, changingCount, steady, perSlice };
}

/** The week of the focused entry: what stays the same, what changes, and when. */
export interface WeekView {
  /** 168 hour cells coloured by the worst outcome of the changing sources (week-hours.ts). */
  readonly hours: HourCell[];
  /** Addresses with the same answer all week, per outcome rank (decimal). */
  readonly steady: string[];
  /** The changing addresses as CIDR blocks (the first few) and how many blocks and addresses in all. */
  readonly changing: string[];
  readonly changingBlocks: number;
  readonly changingCount: string;
  readonly slices: { start: string; end: string; outcome: Outcome | null; counts: string[] }[];
}
