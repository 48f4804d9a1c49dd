// The week × hour view of the exposure map: the engine's week slices laid on 168 hour cells
// (device wall clock, Monday first). Pure; the page component only needs the cell type.

import { WEEK_MINUTES } from "../engine/schedules.ts";
import { NO_RANK } from "./address-grids.ts";

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
  /** Set by callers: more sources get an answer in this hour than in the week's quietest slice. */
  readonly wider?: boolean;
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
