// A proposal's change window: start and end instants, entered as wall-clock times in the
// device's time zone (luxon reads IANA zones, daylight saving included), and whether an
// instant falls inside it. Pure.
import { DateTime } from "luxon";
import { formatInstant } from "../engine/format.ts";

export type ChangeWindow = { start: Date; end: Date };

/** The longest window a proposal may name: a change window is an evening or a weekend, not a season. */
export const LONGEST_WINDOW_DAYS = 14;

const LOCAL = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}$/;

/**
 * A wall-clock time ("2026-12-08T22:00", as a datetime-local field sends it) in the zone, or
 * the reason it is not one: malformed, or skipped when the clocks went forward.
 */
export function instantInZone(text: string, zone: string): { ok: true; at: Date } | { ok: false; problem: string } {
  const trimmed = text.trim();
  if (!LOCAL.test(trimmed)) return { ok: false, problem: "Enter a date and time, like 2026-12-08T22:00." };
  const parsed = DateTime.fromISO(trimmed, { zone });
  if (!parsed.isValid) return { ok: false, problem: `“${trimmed}” is not a date and time.` };
  // Luxon moves a time the clocks skipped; said instead of saved as another time.
  if (parsed.toFormat("yyyy-MM-dd'T'HH:mm") !== trimmed) return { ok: false, problem: `${trimmed.replace("T", " ")} does not exist in ${zone} (the clocks go forward then).` };
  return { ok: true, at: parsed.toJSDate() };
}

/** The datetime-local text of an instant in the zone, for a form's default value. */
export function localText(at: Date, zone: string): string {
  return DateTime.fromJSDate(at, { zone }).toFormat("yyyy-MM-dd'T'HH:mm");
}

/** A starting point for a new proposal's window: tomorrow evening, 20:00–22:00 in the device's zone, as datetime-local texts. */
export function defaultWindowText(now: Date, zone: string): { windowStart: string; windowEnd: string } {
  const start = DateTime.fromJSDate(now, { zone }).plus({ days: 1 }).set({ hour: 20, minute: 0, second: 0, millisecond: 0 });
  return { windowStart: localText(start.toJSDate(), zone), windowEnd: localText(start.plus({ hours: 2 }).toJSDate(), zone) };
}

/** What is wrong with a window as a whole (order, length, already over), or null. */
export function windowProblem(window: ChangeWindow, now: Date): string | null {
  if (window.end.getTime() <= window.start.getTime()) return "The window must end after it starts.";
  if (window.end.getTime() - window.start.getTime() > LONGEST_WINDOW_DAYS * 86_400_000) return `A change window lasts at most ${LONGEST_WINDOW_DAYS} days.`;
  if (window.end.getTime() <= now.getTime()) return "That window is over already: choose one that ends in the future.";
  return null;
}

/** Inside the window: from its start (inclusive) to its end (exclusive). */
export function isInsideWindow(window: ChangeWindow, now: Date): boolean {
  return window.start.getTime() <= now.getTime() && now.getTime() < window.end.getTime();
}

/** The window in words, in the device's zone with UTC beside it. */
export function windowWords(window: ChangeWindow, zone: string): string {
  return `${formatInstant(window.start, zone)} to ${formatInstant(window.end, zone)}`;
}
