// The one home of local week times ("tue 10:00", as slices and diff stretches are written) and
// the instants that stand for them. A probe that `trace` replays needs an instant, and every
// instant the product gives for a week time — finding witnesses, expectation checks, the
// effect's and the shared-object review's example probes, the gate's login paths — comes from
// one reference week read on the device's clock, through the functions below.

import { LocalClock, MINUTES_PER_DAY, WEEK_MINUTES, formatWeekMinute } from "./schedules.ts";
import type { CompiledModel } from "./compile.ts";
import { DAYS } from "./vocabulary.ts";
import type { Day } from "./vocabulary.ts";

export { formatWeekMinute };

/**
 * Monday 5 January 2026, 00:00, as wall-clock milliseconds: a week without daylight-saving
 * changes in the zones that have them (they fall in March–April and September–November).
 */
const REFERENCE_MONDAY_WALL = Date.UTC(2026, 0, 5);

/** "mon 08:00" … "sun 23:59": a day of the week and a time on the device's clock. */
export const WEEK_TIME_PATTERN = /^(mon|tue|wed|thu|fri|sat|sun) ([01][0-9]|2[0-3]):([0-5][0-9])$/;

/** The week minute of a week time (Monday 00:00 is 0), or null when the text is not one. */
export function parseWeekTime(text: string): number | null {
  const match = WEEK_TIME_PATTERN.exec(text);
  if (match === null) return null;
  return DAYS.indexOf(match[1] as Day) * MINUTES_PER_DAY + Number(match[2]) * 60 + Number(match[3]);
}

/** A clock per zone for the callers that know only the zone's name (offsets cached per hour). */
const clocks = new Map<string, LocalClock>();

function clockOf(timezone: string): LocalClock {
  let clock = clocks.get(timezone);
  if (clock === undefined) {
    if (clocks.size > 1000) clocks.clear();
    clock = new LocalClock(timezone);
    clocks.set(timezone, clock);
  }
  return clock;
}

/**
 * The instant (epoch ms) in the reference week at which the clock shows this week minute;
 * around a daylight-saving gap, the first later minute it does show.
 */
function instantOnClock(clock: LocalClock, minute: number): number {
  const wanted = ((minute % WEEK_MINUTES) + WEEK_MINUTES) % WEEK_MINUTES;
  const wall = REFERENCE_MONDAY_WALL + wanted * 60_000;
  // The offset near the wall time, then the offset at the instant it gives (right unless an offset change lies between).
  const guess = wall - clock.offsetAt(wall) * 60_000;
  const ms = wall - clock.offsetAt(guess) * 60_000;
  for (let step = 0; step < 180; step++) {
    const at = ms + step * 60_000;
    if (clock.weekMinute(at) === (wanted + step) % WEEK_MINUTES) return at;
  }
  return ms;
}

/** The instant (epoch ms) in the reference week at which the device's clock shows this week minute. */
export function instantOfWeekMinute(engine: CompiledModel, minute: number): number {
  return instantOnClock(engine.clock, minute);
}

/**
 * The instant at week time `text` ("mon 08:00") on a clock in `timezone`, in the reference week,
 * as ISO 8601 in UTC — for callers that hold a diff's week times and the device's zone, not its
 * compiled model. Throws on text that is not a week time.
 */
export function instantOfWeekTime(text: string, timezone: string): string {
  const minute = parseWeekTime(text);
  if (minute === null) throw new Error(`not a week time: "${text}"`);
  return new Date(instantOnClock(clockOf(timezone), minute)).toISOString();
}

/** An instant (ISO 8601, UTC) in the given slice of the week: its first minute where the clock shows it. */
export function instantInSlice(engine: CompiledModel, slice: number): string {
  // Thousands of witnesses ask for the same few slices: each slice's instant is found once per model.
  let known = instantsInSlices.get(engine);
  if (known === undefined) instantsInSlices.set(engine, (known = new Array<string | undefined>(engine.week.slices.length)));
  return (known[slice] ??= findInstantInSlice(engine, slice));
}

/** instantInSlice's answers per model, by slice. */
const instantsInSlices = new WeakMap<CompiledModel, (string | undefined)[]>();

function findInstantInSlice(engine: CompiledModel, slice: number): string {
  const s = engine.week.slices[slice];
  const length = (s.end - s.start + WEEK_MINUTES) % WEEK_MINUTES || WEEK_MINUTES;
  for (let offset = 0; offset < length; offset++) {
    const ms = instantOfWeekMinute(engine, s.start + offset);
    if (engine.sliceAt(ms) === slice) return new Date(ms).toISOString();
  }
  return new Date(instantOfWeekMinute(engine, s.start)).toISOString();
}
