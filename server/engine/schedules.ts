// Schedules and slices of the week. Times are minutes since Monday 00:00 local time
// ("week minutes"); the week is circular.

import { DateTime, IANAZone } from "luxon";
import { DAYS } from "./vocabulary.ts";
import type { Day } from "./vocabulary.ts";

export const MINUTES_PER_DAY = 1440;
export const WEEK_MINUTES = 7 * MINUTES_PER_DAY;

export interface ScheduleWindow {
  readonly days: readonly Day[];
  readonly start: string;
  readonly end: string;
}

export function minutesOfDay(hhmm: string): number {
  return Number(hhmm.slice(0, 2)) * 60 + Number(hhmm.slice(3, 5));
}

/**
 * Half-open week-minute intervals in which one window is active, split at the week's end.
 * end ≤ start crosses midnight into the next day; end == start lasts 24 hours.
 */
export function windowIntervals(window: ScheduleWindow): [number, number][] {
  const start = minutesOfDay(window.start);
  const end = minutesOfDay(window.end);
  const length = end > start ? end - start : end + MINUTES_PER_DAY - start;
  const out: [number, number][] = [];
  for (const day of new Set(window.days)) {
    const from = DAYS.indexOf(day) * MINUTES_PER_DAY + start;
    const to = from + length;
    if (to <= WEEK_MINUTES) out.push([from, to]);
    else out.push([from, WEEK_MINUTES], [0, to - WEEK_MINUTES]);
  }
  return out;
}

/** A maximal stretch of the week in which every schedule's state is constant. */
export interface Slice {
  /** Week minute where the slice starts (inclusive). */
  readonly start: number;
  /** Week minute where it ends (exclusive); smaller than start when the slice wraps past Sunday 24:00. */
  readonly end: number;
  /** Per schedule (in the order given), whether it is active in this slice. */
  readonly active: readonly boolean[];
}

export interface WeekPlan {
  readonly slices: readonly Slice[];
  /** Slice index for each week minute. */
  readonly sliceAt: Int32Array;
}

/** Splits the week into slices for the given schedules (each a list of windows). */
export function planWeek(schedules: readonly (readonly ScheduleWindow[])[]): WeekPlan {
  const minuteState = schedules.map(() => new Uint8Array(WEEK_MINUTES));
  const boundaries = new Set<number>();
  schedules.forEach((windows, s) => {
    for (const w of windows) {
      for (const [from, to] of windowIntervals(w)) {
        minuteState[s].fill(1, from, to);
        boundaries.add(from % WEEK_MINUTES);
        boundaries.add(to % WEEK_MINUTES);
      }
    }
  });
  const stateKey = (m: number): string => minuteState.map((st) => st[m]).join("");
  const sorted = [...boundaries].sort((a, b) => a - b);
  // Keep only boundaries where some schedule changes state.
  const cuts = sorted.filter((b) => stateKey(b) !== stateKey((b + WEEK_MINUTES - 1) % WEEK_MINUTES));
  const sliceAt = new Int32Array(WEEK_MINUTES);
  if (cuts.length === 0) {
    return { slices: [{ start: 0, end: WEEK_MINUTES, active: schedules.map((_, s) => minuteState[s][0] === 1) }], sliceAt };
  }
  const slices: Slice[] = cuts.map((start, i) => ({
    start,
    end: cuts[(i + 1) % cuts.length],
    active: schedules.map((_, s) => minuteState[s][start] === 1),
  }));
  slices.forEach((slice, i) => {
    for (let m = slice.start; m !== slice.end; m = (m + 1) % WEEK_MINUTES) sliceAt[m] = i;
  });
  return { slices, sliceAt };
}

export function formatWeekMinute(minute: number): string {
  if (minute === WEEK_MINUTES) return "sun 24:00";
  const day = DAYS[Math.floor(minute / MINUTES_PER_DAY)];
  const m = minute % MINUTES_PER_DAY;
  return `${day} ${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`;
}

export function isValidTimeZone(name: string): boolean {
  return IANAZone.isValidZone(name);
}

const MS_PER_HOUR = 3_600_000;

/** Converts instants to week minutes in one IANA time zone; offsets are cached per UTC hour. */
export class LocalClock {
  private readonly zone: IANAZone;
  private readonly offsetByHour = new Map<number, number>();
  private readonly textBySecond = new Map<number, string>();

  constructor(readonly timezone: string) {
    this.zone = IANAZone.create(timezone);
  }

  /** Offset from UTC in minutes at the instant. */
  offsetAt(ms: number): number {
    const hour = Math.floor(ms / MS_PER_HOUR);
    const cached = this.offsetByHour.get(hour);
    if (cached !== undefined) return cached;
    const atStart = this.zone.offset(hour * MS_PER_HOUR);
    const atEnd = this.zone.offset(hour * MS_PER_HOUR + MS_PER_HOUR - 1);
    // A transition inside this hour: no caching, ask for the exact instant.
    if (atStart !== atEnd) return this.zone.offset(ms);
    if (this.offsetByHour.size > 100_000) this.offsetByHour.clear();
    this.offsetByHour.set(hour, atStart);
    return atStart;
  }

  weekMinute(ms: number): number {
    const local = ms + this.offsetAt(ms) * 60_000;
    const dayNumber = Math.floor(local / 86_400_000);
    // 1970-01-01 was a Thursday (index 3 with Monday = 0).
    const weekday = (((dayNumber + 3) % 7) + 7) % 7;
    const minuteOfDay = Math.floor((local - dayNumber * 86_400_000) / 60_000);
    return weekday * MINUTES_PER_DAY + minuteOfDay;
  }

  /** Local wall-clock text with offset, e.g. 2025-03-03T09:00:00+01:00 (seconds kept, milliseconds dropped). */
  localText(ms: number): string {
    const second = Math.floor(ms / 1000);
    const cached = this.textBySecond.get(second);
    if (cached !== undefined) return cached;
    const offset = this.offsetAt(ms);
    const wall = new Date(Math.floor(ms / 1000) * 1000 + offset * 60_000).toISOString().slice(0, 19);
    const abs = Math.abs(offset);
    const sign = offset < 0 ? "-" : "+";
    const text = `${wall}${sign}${String(Math.floor(abs / 60)).padStart(2, "0")}:${String(abs % 60).padStart(2, "0")}`;
    if (this.textBySecond.size > 100_000) this.textBySecond.clear();
    this.textBySecond.set(second, text);
    return text;
  }
}

const FULL_ISO = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,3})?)?(Z|[+-]\d{2}:\d{2})$/;

/**
 * Parses a probe time. Text with an offset (or Z) is that instant; ISO text without an
 * offset is wall-clock time in the device's time zone. Returns epoch milliseconds or null.
 */
export function parseInstant(text: string, timezone: string): number | null {
  if (FULL_ISO.test(text)) {
    const ms = Date.parse(text);
    if (!Number.isNaN(ms)) return ms;
  }
  const parsed = DateTime.fromISO(text, { zone: timezone });
  return parsed.isValid ? parsed.toMillis() : null;
}
