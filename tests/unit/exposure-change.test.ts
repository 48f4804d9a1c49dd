// The exposure change the shared-object review shows (server/analysis/exposure-change.ts): the
// engine's diff as rows, each with a probe that `trace` replays on both models, and who gains
// and loses each outcome. No database.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { exposureChangeOf } from "#server/analysis/exposure-change";
import { compileModel, diffModels, parseModel, trace, type DeviceModel, type DeviceModelInput } from "#server/engine/index";
import { generateModel, prng, SMALL_SIZE } from "#server/engine/testing/generate-model";
import { propertyParameters } from "#tests/support/property-runs";

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

describe("The exposure change of an address object edit", () => {
  const budget = { numRuns: 40, timeoutMs: 60_000 };
  test(
    "Every row's probe, on each of its services and addresses, traces to the row's outcomes before and after; rows cover every transition (property)",
    () => {
      let seen = 0;
      fc.assert(
        fc.property(fc.integer(), fc.integer(), (seed, editSeed) => {
          const generated = generateModel(seed, SMALL_SIZE);
          const model = validated(generated.model);
          if (model.addresses.length === 0) return;
          // What a shared-object change does to a device: one address object gets new entries.
          const rnd = prng(editSeed);
          const next = structuredClone(model);
          const object = next.addresses[Math.floor(rnd() * next.addresses.length)];
          object.entries = Array.from({ length: 1 + Math.floor(rnd() * 3) }, () => generated.sampleSources[Math.floor(rnd() * generated.sampleSources.length)]);
          const before = compileModel(model);
          const after = compileModel(validated(next));
          const diff = diffModels(before, after);
          const change = exposureChangeOf(diff, model.device.timezone, { rows: Infinity, rangesPerRow: Infinity });
          const transitions = diff.changes.reduce((total, c) => total + c.transitions.length, 0);
          expect(change.transitions).toBe(transitions);
          expect(change.rows.reduce((total, row) => total + row.services.length * row.to.length, 0)).toBe(transitions);
          if (transitions > 0) seen++;
          for (const row of change.rows) {
            for (const service of row.services) {
              for (const to of row.to) {
                const probe = { ...row.witness, service, to };
                expect(trace(before, probe).outcome, JSON.stringify(probe)).toBe(row.before);
                expect(trace(after, probe).outcome, JSON.stringify(probe)).toBe(row.after);
              }
            }
          }
          // Distinct sources: no more than all the rows' counts together, no fewer than the largest row.
          const total = (rows: typeof change.rows) => rows.reduce((sum, row) => sum + BigInt(row.count), 0n);
          const largest = (rows: typeof change.rows) => rows.reduce((max, row) => (BigInt(row.count) > max ? BigInt(row.count) : max), 0n);
          for (const shift of change.byOutcome) {
            const gaining = change.rows.filter((row) => row.after === shift.outcome);
            const losing = change.rows.filter((row) => row.before === shift.outcome);
            expect(BigInt(shift.gained) <= total(gaining) && BigInt(shift.gained) >= largest(gaining)).toBe(true);
            expect(BigInt(shift.lost) <= total(losing) && BigInt(shift.lost) >= largest(losing)).toBe(true);
          }
        }),
        propertyParameters(budget),
      );
      // Not vacuous: most edits moved some sources.
      expect(seen).toBeGreaterThan(budget.numRuns / 4);
    },
    budget.timeoutMs,
  );

  test("Rows are grouped by the same move of the same sources, more exposed first, and cut at the limit", () => {
    // An invented device: https and ssh from ops-desk; documentation addresses (RFC 5737).
    const model = validated({
      schemaVersion: 2,
      device: { name: "quay-edge" },
      interfaces: [{ name: "outside", role: "wan", addresses: ["203.0.113.10/24", "203.0.113.11/24"], listeners: ["https", "ssh"] }],
      addresses: [{ name: "ops-desk", entries: ["198.51.100.0/28"] }],
      inboundRules: [
        { id: "ops-in", interface: "outside", sources: ["ops-desk"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      ],
      accounts: [{ name: "ops-lena", secondFactor: "totp" }],
    });
    const next = validated({ ...model, addresses: [{ name: "ops-desk", entries: ["198.51.100.16/28", "198.51.100.64/30", "198.51.100.72/30", "198.51.100.80/30"] }] });
    const change = exposureChangeOf(diffModels(compileModel(model), compileModel(next)), "UTC", { rows: 1, rangesPerRow: 2 });
    // 2 addresses × 2 services × 2 moves = 8 transitions in 2 rows; the climb comes first.
    expect(change.transitions).toBe(8);
    expect(change.totalRows).toBe(2);
    expect(change.rows).toHaveLength(1);
    const [row] = change.rows;
    // Services in the catalogue's order, whichever that is.
    expect([row.before, row.after, [...row.services].sort(), row.to]).toEqual(["silent", "login-mfa", ["https", "ssh"], ["203.0.113.10", "203.0.113.11"]]);
    expect(row.ranges).toEqual(["198.51.100.16/28", "198.51.100.64/30"]);
    expect(row.moreRanges).toBe(2);
    // 16 + 3 × 4 addresses (RFC 4632 §3.1) gain a login; the old /28 (16) loses it.
    expect(row.count).toBe("28");
    expect([change.moreExposed, change.lessExposed]).toEqual(["28", "16"]);
    expect(change.byOutcome).toEqual([
      { outcome: "silent", gained: "16", lost: "28" },
      { outcome: "login-mfa", gained: "28", lost: "16" },
    ]);
    expect(change.lockout).toEqual([]);
  });
});
