// Field checks: a file of observations read (server/formats/observations.ts) and each row predicted
// with the revision live at its time (server/engine/field-checks.ts), every row answered.

import { readFileSync } from "node:fs";
import { describe, expect, test } from "vitest";
import { checkObservations, compileModel, parseModel, trace } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModelInput, RevisionAtTime } from "#server/engine/index.ts";
import { readObservationsCsv } from "#server/formats/observations.ts";
import { demoModelledAt } from "../../seeders/demo-data.ts";
import { SALTMARSH, SALTMARSH_R2 } from "#tests/support/saltmarsh.ts";

function compiled(input: DeviceModelInput): CompiledModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
  return compileModel(parsed.model);
}

const R1_AT = Date.parse("2026-11-01T09:00:00Z");
const R2_AT = Date.parse("2026-11-20T09:00:00Z");
const NOW = Date.parse("2026-12-02T12:00:00Z");
const first = compiled(SALTMARSH);
const second = compiled(SALTMARSH_R2);
const REVISIONS: RevisionAtTime[] = [
  { number: 1, liveFromMs: R1_AT, compiled: () => first },
  { number: 2, liveFromMs: R2_AT, compiled: () => second },
];

const FILE = [
  "when,from,to,service,observed,note",
  "2026-11-10T10:00:00Z,203.0.113.9,198.51.100.20,https,login-denied,laptop on the train",
  "2026-11-25T10:00:00Z,203.0.113.9,198.51.100.20,https,silent,",
  "2026-11-25T10:05:00+01:00,203.0.113.9,198.51.100.20,ping,answered,",
  "2026-11-26T08:00:00Z,10.30.0.7,10.30.0.1,ssh,login,from the desk",
  "2026-11-25T11:00:00Z,203.0.113.9,198.51.100.20,tcp/8443,silent,",
  "2026-11-25 11:00,203.0.113.9,198.51.100.20,https,silent,",
  "2026-11-25T11:00:00Z,203.0.113.9,198.51.100.20,https,maybe,",
].join("\n");

describe("A field check", () => {
  test("with agreements, one difference and two bad rows gives exactly those results, every row in order", () => {
    const read = readObservationsCsv(FILE);
    if (!read.ok) throw new Error(read.message);
    const result = checkObservations(read.observations, REVISIONS, NOW);
    expect(result.rows.map((row) => [row.line, row.status, row.revision, row.predicted])).toEqual([
      [2, "agrees", 1, "login-denied"],
      [3, "agrees", 2, "silent"],
      [4, "agrees", 2, "answered"],
      [5, "agrees", 2, "login-mfa"],
      // unlistenedPort reset: a port nothing listens on answers with a TCP reset (PRODUCT.md §3, layer 3).
      [6, "differs", 2, "refused"],
      [7, "invalid", null, null],
      [8, "invalid", null, null],
    ]);
    expect(result.counts).toEqual({ rows: 7, agreements: 4, differences: 1, invalid: 2, agreementRate: 0.8 });
    expect(result.rows[5].problem).toMatch(/ISO 8601 instant with an offset/);
    expect(result.rows[6].problem).toMatch(/"maybe" is not one of silent, refused, answered, login-denied, login-mfa, login-password, login/);
    // The interface is the one holding the address tried, in the revision live then.
    expect(result.rows[3].interface).toBe("office");
    expect(result.rows[0].note).toBe("laptop on the train");
    // Each prediction is the engine's trace at the row's instant.
    expect(result.rows[0].predicted).toBe(trace(first, { from: "203.0.113.9", interface: "uplink", service: "https", at: "2026-11-10T10:00:00Z" }).outcome);
    expect(result.rows[5].at).toBeNull();
  });

  test("gives each difference its likely reason: a later revision agrees, an earlier one does, or none", () => {
    const rows = [
      // r1 was live; r2 (later) drops it: the device already ran r2.
      { line: 2, when: "2026-11-10T10:00:00Z", from: "203.0.113.9", to: "198.51.100.20", service: "https", observed: "silent" },
      // r2 was live; r1 (earlier) presents the login: the drop may not be on the device yet.
      { line: 3, when: "2026-11-25T10:00:00Z", from: "203.0.113.9", to: "198.51.100.20", service: "https", observed: "login" },
      // No revision lets ssh answer on the uplink.
      { line: 4, when: "2026-11-25T10:00:00Z", from: "203.0.113.9", to: "198.51.100.20", service: "ssh", observed: "login-password" },
    ];
    const result = checkObservations(rows, REVISIONS, NOW);
    expect(result.rows.map((row) => [row.status, row.difference?.reason, row.difference?.revision])).toEqual([
      ["differs", "model-out-of-date", 2],
      ["differs", "not-applied", 1],
      ["differs", "device-differs", null],
    ]);
    expect(result.rows[0].difference?.words).toMatch(/revision r2, saved later, predicts what was seen/);
    expect(result.rows[2].difference?.words).toMatch(/Confirm on the device in a maintenance window/);
  });

  test("reports each row it cannot check with its own problem", () => {
    const base = { when: "2026-11-25T10:00:00Z", from: "203.0.113.9", to: "198.51.100.20", service: "https", observed: "silent" };
    const cases: [Record<string, string>, RegExp][] = [
      [{ when: "2026-10-01T10:00:00Z" }, /observed before revision r1 was saved/],
      [{ when: "2026-12-24T10:00:00Z" }, /is in the future/],
      [{ from: "203.0.113.0/24" }, /a vantage point is one source address/],
      [{ from: "203.0.113" }, /not an IPv4 address/],
      [{ to: "198.51.100.99" }, /"198.51.100.99" is not an address of the device in revision r2/],
      [{ service: "gopher" }, /unknown service "gopher"/],
      [{ interface: "nowhere" }, /unknown interface "nowhere"/],
      [{ to: "2001:db8::1" }, /different families|not an address of the device/],
      [{ observed: "" }, /observed is empty/],
      [{ note: "tab\there" }, /note holds a control character/],
    ];
    const rows = cases.map(([change], index) => ({ ...base, ...change, line: index + 2 }));
    const result = checkObservations(rows, REVISIONS, NOW);
    result.rows.forEach((row, index) => {
      expect(row.status).toBe("invalid");
      expect(row.problem).toMatch(cases[index][1]);
    });
    expect(result.counts).toMatchObject({ rows: cases.length, invalid: cases.length, agreementRate: null });
  });
});

describe("The field-check file", () => {
  test("refuses a file whose header is not ours, in words", () => {
    expect(readObservationsCsv("time,source,target\n")).toEqual({ ok: false, message: expect.stringMatching(/“time”, “source”, “target”, not a column/) });
    expect(readObservationsCsv("when,from,to,service\n")).toEqual({ ok: false, message: expect.stringMatching(/lacks the column observed/) });
    expect(readObservationsCsv("when,from,to,service,observed\n")).toEqual({ ok: false, message: "The file has a header but no observations." });
    expect(readObservationsCsv('when,from,to,service,observed\n"2026-11-25,x\n')).toEqual({ ok: false, message: expect.stringMatching(/not readable CSV: line \d/) });
  });

  test("keeps a short row as a row with its problem, and reads columns in any order", () => {
    const read = readObservationsCsv("observed,service,to,from,when\nsilent,https,198.51.100.20,203.0.113.9,2026-11-25T10:00:00Z\n\nsilent,https\n");
    if (!read.ok) throw new Error(read.message);
    expect(read.observations).toHaveLength(2);
    expect(read.observations[0]).toMatchObject({ line: 2, observed: "silent", from: "203.0.113.9", interface: "" });
    expect(read.observations[1]).toMatchObject({ line: 4, problem: "expected 5 fields as the header names, found 2" });
  });
});

describe("The documented example file", () => {
  test("public/examples/field-check.csv reads, and every row agrees with the demo device it was written for (clf-fw-01)", () => {
    const read = readObservationsCsv(readFileSync(new URL("../../public/examples/field-check.csv", import.meta.url), "utf8"));
    if (!read.ok) throw new Error(read.message);
    const device = compiled(JSON.parse(readFileSync(new URL("../../seeders/devices/clf-fw-01.json", import.meta.url), "utf8")));
    const result = checkObservations(read.observations, [{ number: null, liveFromMs: -Infinity, compiled: () => device }], NOW);
    expect(result.counts).toEqual({ rows: read.observations.length, agreements: read.observations.length, differences: 0, invalid: 0, agreementRate: 1 });
    // The example shows the optional interface column in use.
    expect(read.observations.some((row) => row.interface !== "")).toBe(true);
  });

  test("on the demo as seeded, every row of the example is predicted with r1, not refused as older than the device's model", () => {
    // Found in the user walk of 2026-12-02: seeded "now", r1 was newer than every row of the
    // example, so the file linked from the Field checks tab gave 6 rows "not checked".
    const read = readObservationsCsv(readFileSync(new URL("../../public/examples/field-check.csv", import.meta.url), "utf8"));
    if (!read.ok) throw new Error(read.message);
    const device = compiled(JSON.parse(readFileSync(new URL("../../seeders/devices/clf-fw-01.json", import.meta.url), "utf8")));
    const seededAt = new Date(NOW);
    const result = checkObservations(read.observations, [{ number: 1, liveFromMs: demoModelledAt(seededAt).getTime(), compiled: () => device }], NOW);
    expect(result.counts).toMatchObject({ rows: read.observations.length, agreements: read.observations.length, invalid: 0 });
    // Without it (r1 saved at the seeding instant) the same rows are refused, with the instant in words.
    const refused = checkObservations(read.observations, [{ number: 1, liveFromMs: NOW, compiled: () => device }], NOW);
    expect(refused.counts.invalid).toBe(read.observations.length);
    expect(refused.rows[0].problem).toBe("observed before revision r1 was saved (Wed 2 Dec 2026, 12:00 UTC): no model of the device then");
  });
});
