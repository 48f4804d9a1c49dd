import { describe, expect, it } from "vitest";
import { reachSummary, worstByPlace } from "#app/utils/reach-words";
import type { Outcome } from "#server/engine/vocabulary";

// The reach headline (device and fleet pages). Found in the user walk of 2026-12-02: the fleet
// headline said "0 answer, 0 refuse and reveal the device" above rows that were answered and
// refused (each device is counted by the most it gives), so zero counts are left out.
describe("reachSummary", () => {
  const device = { one: "device", other: "devices" } as const;
  const service = { one: "service", other: "services" } as const;

  it("says the logins always and the other outcomes only when some place gets them", () => {
    expect(reachSummary(["login-password", "silent", "silent", "silent", "silent", "silent"], device)).toBe("reaches 1 device with a login (1 with a password only), 5 give no answer");
    expect(reachSummary(["silent"], service)).toBe("reaches 0 services with a login, 1 gives no answer");
  });

  it("counts every outcome kind with its own plural", () => {
    const outcomes: Outcome[] = ["login-password", "login-mfa", "login-denied", "answered", "refused", "refused", "silent"];
    expect(reachSummary(outcomes, service)).toBe("reaches 3 services with a login (1 with a password only, 1 with a second factor, 1 shown but refused), 1 answers, 2 refuse and reveal the device, 1 gives no answer");
  });

  it("counts each place once, by the most exposed outcome any row gives it", () => {
    const rows = [
      { place: "a", outcome: "refused" as const },
      { place: "a", outcome: "login-mfa" as const },
      { place: "b", outcome: "silent" as const },
    ];
    expect(worstByPlace(rows, (row) => row.place).sort()).toEqual(["login-mfa", "silent"]);
  });
});
