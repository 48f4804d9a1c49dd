// Schedules, slices and the device clock.

import { describe, expect, test } from "vitest";
import { LocalClock, formatWeekMinute, parseInstant, planWeek, windowIntervals } from "#server/engine/schedules.ts";

describe("windows", () => {
  test("a same-day window is start ≤ time < end on each listed day", () => {
    expect(windowIntervals({ days: ["mon", "wed"], start: "08:00", end: "17:00" })).toEqual([
      [480, 1020],
      [2 * 1440 + 480, 2 * 1440 + 1020],
    ]);
  });

  test("end ≤ start crosses midnight into the next day; Sunday wraps to Monday", () => {
    expect(windowIntervals({ days: ["sun"], start: "22:00", end: "02:00" })).toEqual([
      [6 * 1440 + 1320, 7 * 1440],
      [0, 120],
    ]);
  });

  test("end == start lasts 24 hours; 00:00–00:00 is the whole listed day", () => {
    expect(windowIntervals({ days: ["tue"], start: "00:00", end: "00:00" })).toEqual([[1440, 2880]]);
    expect(windowIntervals({ days: ["tue"], start: "09:30", end: "09:30" })).toEqual([[1440 + 570, 2880 + 570]]);
  });
});

describe("slices", () => {
  test("no schedules: one slice, the whole week", () => {
    const plan = planWeek([]);
    expect(plan.slices).toEqual([{ start: 0, end: 10080, active: [] }]);
  });

  test("maximal intervals of constant state, merged across the week's end", () => {
    const plan = planWeek([
      [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "08:00", end: "17:00" }],
      [{ days: ["sun"], start: "22:00", end: "06:00" }],
    ]);
    const text = plan.slices.map((s) => `${formatWeekMinute(s.start)}–${formatWeekMinute(s.end)} ${s.active.map(Number).join("")}`);
    expect(text).toEqual([
      "mon 06:00–mon 08:00 00",
      "mon 08:00–mon 17:00 10",
      "mon 17:00–tue 08:00 00",
      "tue 08:00–tue 17:00 10",
      "tue 17:00–wed 08:00 00",
      "wed 08:00–wed 17:00 10",
      "wed 17:00–thu 08:00 00",
      "thu 08:00–thu 17:00 10",
      "thu 17:00–fri 08:00 00",
      "fri 08:00–fri 17:00 10",
      "fri 17:00–sun 22:00 00",
      "sun 22:00–mon 06:00 01",
    ]);
    // Every minute maps to the slice that holds it.
    expect(plan.sliceAt[0]).toBe(11);
    expect(plan.sliceAt[479]).toBe(0);
    expect(plan.sliceAt[480]).toBe(1);
  });

  test("abutting windows of one schedule do not cut a slice", () => {
    const plan = planWeek([[{ days: ["mon"], start: "08:00", end: "12:00" }, { days: ["mon"], start: "12:00", end: "13:00" }]]);
    expect(plan.slices.map((s) => [s.start, s.end])).toEqual([
      [480, 780],
      [780, 480],
    ]);
  });
});

describe("the device clock", () => {
  // Europe/Berlin leaves CET (UTC+1) for CEST (UTC+2) at 01:00 UTC on 2025-03-30 (EU summer-time rule; from memory).
  const berlin = new LocalClock("Europe/Berlin");
  test("local week minute honours daylight saving per instant", () => {
    expect(formatWeekMinute(berlin.weekMinute(Date.UTC(2025, 2, 30, 0, 59)))).toBe("sun 01:59");
    expect(formatWeekMinute(berlin.weekMinute(Date.UTC(2025, 2, 30, 1, 0)))).toBe("sun 03:00");
    expect(berlin.localText(Date.UTC(2025, 2, 30, 1, 0))).toBe("2025-03-30T03:00:00+02:00");
  });

  test("a half-hour zone: Asia/Kolkata is UTC+05:30 (from memory)", () => {
    const kolkata = new LocalClock("Asia/Kolkata");
    expect(formatWeekMinute(kolkata.weekMinute(Date.UTC(2025, 0, 5, 20, 0)))).toBe("mon 01:30");
  });

  test("ISO text without an offset is read on the device clock; with one, as that instant", () => {
    expect(parseInstant("2025-03-04T10:00", "Europe/Berlin")).toBe(Date.UTC(2025, 2, 4, 9, 0));
    expect(parseInstant("2025-03-04T10:00:00Z", "Europe/Berlin")).toBe(Date.UTC(2025, 2, 4, 10, 0));
    expect(parseInstant("2025-03-04T10:00:00-05:00", "Europe/Berlin")).toBe(Date.UTC(2025, 2, 4, 15, 0));
    expect(parseInstant("next tuesday", "UTC")).toBeNull();
  });
});
