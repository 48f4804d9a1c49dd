// Local week times ("tue 10:00", as slices and diff stretches are written) and the instants
// that stand for them: a probe replayed by `trace` needs an instant, and the engine's instants
// for week times come from one reference week in the device's time zone.

import { DateTime } from "luxon";
import type { CompiledModel } from "./compile.ts";
import { MINUTES_PER_DAY, WEEK_MINUTES } from "./schedules.ts";
import { DAYS } from "./vocabulary.ts";
import type { Day } from "./vocabulary.ts";

/** Monday 5 January 2026: a week without daylight-saving changes in the usual zones (the finding witnesses use it too). */
const REFERENCE_MONDAY = { year: 2026, month: 1, day: 5 } as const;

/** "mon 08:00" … "sun 23:59": a day of the week and a time on the device's clock. */
export const WEEK_TIME_PATTERN = /^(mon|tue|wed|thu|fri|sat|sun) ([01][0-9]|2[0-3]):([0-5][0-9])$/;

/** The week minute of a week time, or null when the text is not one. */
export function parseWeekTime(text: string): number | null {
  const match = WEEK_TIME_PATTERN.exec(text);
  if (match === null) return null;
  return DAYS.indexOf(match[1] as Day) * MINUTES_PER_DAY + Number(match[2]) * 60 + Number(match[3]);
}

/**
 * The instant (epoch ms) in the reference week at which the device's clock shows this week
 * minute; around a daylight-saving gap, the first later minute the clock does show.
 */
export function instantOfWeekMinute(engine: CompiledModel, minute: number): number {
  const wanted = ((minute % WEEK_MINUTES) + WEEK_MINUTES) % WEEK_MINUTES;
  const day = Math.floor(wanted / MINUTES_PER_DAY);
  const ofDay = wanted % MINUTES_PER_DAY;
  const ms = DateTime.fromObject({ ...REFERENCE_MONDAY, day: REFERENCE_MONDAY.day + day, hour: Math.floor(ofDay / 60), minute: ofDay % 60 }, { zone: engine.model.device.timezone }).toMillis();
  for (let step = 0; step < 180; step++) {
    const at = ms + step * 60_000;
    if (engine.clock.weekMinute(at) === (wanted + step) % WEEK_MINUTES) return at;
  }
  return ms;
}

/** An instant (ISO 8601, UTC) in the given slice of the week: its first minute where the clock shows it. */
export function instantInSlice(engine: CompiledModel, slice: number): string {
  const s = engine.week.slices[slice];
  const length = (s.end - s.start + WEEK_MINUTES) % WEEK_MINUTES || WEEK_MINUTES;
  for (let offset = 0; offset < length; offset++) {
    const ms = instantOfWeekMinute(engine, s.start + offset);
    if (engine.sliceAt(ms) === slice) return new Date(ms).toISOString();
  }
  return new Date(instantOfWeekMinute(engine, s.start)).toISOString();
}
