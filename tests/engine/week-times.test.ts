// Week times and their instants (server/engine/week-times.ts), the one home every caller uses:
// finding witnesses, expectations, the gate's login paths, the effect's and the shared-object
// review's example probes. An instant for a week time must be one at which the device's clock
// shows that week time (its weekday and wall-clock minute), whether the caller holds the compiled
// model or only the device's zone name; the two ways agree; a slice's instant falls in the slice.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, parseModel, type CompiledModel, type DeviceModelInput } from "#server/engine/index.ts";
import { formatWeekMinute, MINUTES_PER_DAY, WEEK_MINUTES } from "#server/engine/schedules.ts";
import { instantInSlice, instantOfWeekMinute, instantOfWeekTime, parseWeekTime } from "#server/engine/week-times.ts";
import { FindingContext } from "#server/engine/findings/context.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";

// Zones with whole, half- and quarter-hour offsets, both hemispheres' daylight saving, the date
// line and zones without daylight saving (IANA time zone database names; offsets from memory).
const ZONES = ["UTC", "Europe/Oslo", "America/New_York", "America/St_Johns", "Asia/Kolkata", "Asia/Kathmandu", "Australia/Lord_Howe", "Pacific/Chatham", "Pacific/Kiritimati", "Pacific/Pago_Pago", "America/Santiago"];

/** A device in the zone whose schedules cut the week at odd minutes, so it has several slices. */
function deviceIn(timezone: string): CompiledModel {
  const input: DeviceModelInput = {
    schemaVersion: 2,
    device: { name: "clock-test", timezone },
    interfaces: [{ name: "wan", role: "wan", addresses: ["203.0.113.5/24"], listeners: ["https"] }],
    schedules: [
      { name: "early", windows: [{ days: ["mon", "wed", "sun"], start: "00:00", end: "06:45" }] },
      { name: "late", windows: [{ days: ["fri", "sat"], start: "21:15", end: "23:59" }] },
    ],
    inboundRules: [
      { id: "early-web", interface: "wan", sources: ["any"], destinations: ["any"], services: ["https"], schedule: "early", action: "allow" },
      { id: "late-web", interface: "wan", sources: ["any"], destinations: ["any"], services: ["https"], schedule: "late", action: "deny" },
    ],
  };
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`fixture invalid: ${JSON.stringify(parsed.errors)}`);
  return compileModel(parsed.model);
}

const devices = new Map(ZONES.map((zone) => [zone, deviceIn(zone)]));

describe("An instant for a week time is one at which the device's clock shows it", () => {
  test("Every week time written as text reads back as its week minute", () => {
    for (let minute = 0; minute < WEEK_MINUTES; minute += 7) expect(parseWeekTime(formatWeekMinute(minute))).toBe(minute);
    expect(parseWeekTime("someday 08:00")).toBeNull();
    expect(parseWeekTime("mon 24:00")).toBeNull();
  });

  test("From the compiled model and from the zone's name alike, at random week minutes in every zone (property)", () => {
    fc.assert(
      fc.property(fc.constantFrom(...ZONES), fc.integer({ min: 0, max: WEEK_MINUTES - 1 }), (zone, minute) => {
        const device = devices.get(zone)!;
        const ms = instantOfWeekMinute(device, minute);
        expect(device.clock.weekMinute(ms), `${zone} ${formatWeekMinute(minute)}`).toBe(minute);
        expect(instantOfWeekTime(formatWeekMinute(minute), zone)).toBe(new Date(ms).toISOString());
      }),
      propertyParameters({ numRuns: 400, timeoutMs: 20_000 }),
    );
  }, 20_000);

  test("The reference week is Monday 5 January 2026 on the device's clock", () => {
    // Offsets in the week of 2026-01-05 (IANA time zone database, from memory): Oslo UTC+1,
    // Lisbon UTC+0, New York UTC−5 (standard time), Kolkata UTC+5:30, Lord Howe UTC+11 (its summer time).
    expect(instantOfWeekTime("mon 08:00", "Europe/Oslo")).toBe("2026-01-05T07:00:00.000Z");
    expect(instantOfWeekTime("mon 08:00", "Europe/Lisbon")).toBe("2026-01-05T08:00:00.000Z");
    expect(instantOfWeekTime("wed 17:30", "America/New_York")).toBe("2026-01-07T22:30:00.000Z");
    expect(instantOfWeekTime("sun 00:00", "Asia/Kolkata")).toBe("2026-01-10T18:30:00.000Z");
    expect(instantOfWeekTime("mon 00:15", "Australia/Lord_Howe")).toBe("2026-01-04T13:15:00.000Z");
    expect(() => instantOfWeekTime("someday 08:00", "UTC")).toThrow("not a week time");
  });

  test("Each slice's instant falls in that slice, on its first minute; the finding witnesses use the same instant", () => {
    for (const [zone, device] of devices) {
      expect(device.week.slices.length, zone).toBeGreaterThan(1);
      device.week.slices.forEach((slice, index) => {
        const at = instantInSlice(device, index);
        expect(device.sliceAt(Date.parse(at)), `${zone} slice ${index}`).toBe(index);
        expect(device.clock.weekMinute(Date.parse(at)), `${zone} slice ${index}`).toBe(slice.start);
        // A witness probe in this slice is stamped with the same instant.
        const probe = new FindingContext(device).probe(0, device.interfaceAddresses[0][0], 0, 4, 0n, index);
        expect(probe.at).toBe(at);
      });
    }
  });

  test("A week minute out of range is read modulo the week", () => {
    const device = devices.get("Europe/Oslo")!;
    expect(instantOfWeekMinute(device, WEEK_MINUTES + 90)).toBe(instantOfWeekMinute(device, 90));
    expect(instantOfWeekMinute(device, -MINUTES_PER_DAY)).toBe(instantOfWeekMinute(device, WEEK_MINUTES - MINUTES_PER_DAY));
  });
});
