// `sallyport check` and CIDR sources on the command line, spawned as a pipeline runs them:
// exit 0 when every observation agrees, 1 on any difference, 2 on bad usage or a row that
// could not be checked; each bad row named on stderr.

import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, test } from "vitest";

const ROOT = join(import.meta.dirname, "../..");
const BIN = join(ROOT, "server/cli/sallyport.mjs");
const MODEL = join(ROOT, "tests/fixtures/models/harbourline-edge.json");
const dir = mkdtempSync(join(tmpdir(), "sallyport-check-"));

function sallyport(...args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: "utf8", timeout: 30_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

function file(name: string, lines: readonly string[]): string {
  const path = join(dir, name);
  writeFileSync(path, `${lines.join("\n")}\n`);
  return path;
}

const HEADER = "when,from,to,service,observed,note";
// harbourline-edge: the NOC (198.51.100.0/26) logs in with a second factor on outside; everything else is dropped by r-drop.
const AGREE = [
  "2026-11-30T10:00:00Z,198.51.100.20,203.0.113.10,https,login,NOC desk",
  "2026-11-30T10:01:00Z,198.51.100.20,203.0.113.10,ping,answered,",
  "2026-11-30T10:02:00Z,203.0.113.50,203.0.113.10,ssh,silent,from a phone hotspot",
];
const DIFFER = "2026-11-30T10:03:00Z,203.0.113.50,203.0.113.10,https,login-password,the console answered";
const BAD = ["2026-11-30T10:04:00Z,203.0.113.50,203.0.113.10,https,maybe,", "2026-11-30T10:05:00Z,198.51.100,203.0.113.10,https,silent,"];

describe("sallyport check", { timeout: 60_000 }, () => {
  test("exits 0 when every observation agrees", () => {
    const r = sallyport("check", MODEL, "--observations", file("agree.csv", [HEADER, ...AGREE]));
    expect(r.code).toBe(0);
    expect(r.stdout).toContain("3 observations agree, 0 differ, 0 rows not checked; agreement 100%");
    // Every column of the table is named (the walk of 2026-12-02 found the result column without a heading).
    expect(r.stdout.split("\n")[0].trim().split(/\s{2,}/)).toEqual(["line", "when", "from", "to", "service", "observed", "predicted", "result", "why"]);
    expect(r.stderr).toBe("");
  });

  test("exits 1 on a difference, and --json lists every row: agreements, the difference and both bad rows", () => {
    const r = sallyport("check", MODEL, "--observations", file("mixed.csv", [HEADER, ...AGREE, DIFFER, ...BAD]), "--json");
    expect(r.code).toBe(1);
    const result = JSON.parse(r.stdout);
    expect(result.counts).toEqual({ rows: 6, agreements: 3, differences: 1, invalid: 2, agreementRate: 0.75 });
    expect(result.rows.map((row: { line: number; status: string; predicted: string | null }) => [row.line, row.status, row.predicted])).toEqual([
      [2, "agrees", "login-mfa"],
      [3, "agrees", "answered"],
      [4, "agrees", "silent"],
      [5, "differs", "silent"],
      [6, "invalid", null],
      [7, "invalid", null],
    ]);
    expect(result.rows[3].difference).toMatchObject({ reason: "device-differs", revision: null });
    // Each bad row on its own line of stderr, with its line in the file.
    expect(r.stderr.trim().split("\n")).toEqual([expect.stringMatching(/mixed\.csv: line 6: observed: "maybe" is not one of/), expect.stringMatching(/mixed\.csv: line 7: from: "198\.51\.100" is not an IPv4 address/)]);
  });

  test("exits 2 when a row could not be checked and none differs, and on bad usage", () => {
    const bad = sallyport("check", MODEL, "--observations", file("bad.csv", [HEADER, ...AGREE, ...BAD]));
    expect(bad.code).toBe(2);
    expect(bad.stdout).toContain("3 observations agree, 0 differ, 2 rows not checked");
    expect(sallyport("check", MODEL).code).toBe(2);
    expect(sallyport("check", MODEL, "--observations", join(dir, "missing.csv")).code).toBe(2);
    const header = sallyport("check", MODEL, "--observations", file("header.csv", ["time,source,target", "x,y,z"]));
    expect(header.code).toBe(2);
    expect(header.stderr).toMatch(/“time”, “source”, “target”, not a column of a field-check file/);
  });
});

describe("CIDR sources on the command line", { timeout: 60_000 }, () => {
  test("trace --json answers per group: the NOC block logs in with a second factor, the rest of the /24 is dropped", () => {
    const r = sallyport("trace", MODEL, "--from", "198.51.100.0/24", "--on", "outside", "--service", "https", "--at", "2026-11-30T10:00:00Z", "--json");
    expect(r.code).toBe(0);
    const t = JSON.parse(r.stdout);
    expect(t).toMatchObject({ from: "198.51.100.0/24", count: "256", interface: "outside", to: "203.0.113.10" });
    expect(t.groups.map((g: { sources: string[]; count: string; outcome: string; ruleId: string }) => [g.sources, g.count, g.outcome, g.ruleId])).toEqual([
      // RFC 4632 §3.1: 198.51.100.0/26 holds 64 addresses; 198.51.100.7 is blocklisted on its own.
      [["198.51.100.0/30", "198.51.100.4/31", "198.51.100.6/32", "198.51.100.8/29", "198.51.100.16/28", "198.51.100.32/27"], "63", "login-mfa", "r-noc"],
      [["198.51.100.7/32"], "1", "silent", "r-block"],
      [["198.51.100.64/26", "198.51.100.128/25"], "192", "silent", "r-drop"],
    ]);
  });

  test("a block wider than its family is refused with exit 2 and a clear message", () => {
    const r = sallyport("reach", MODEL, "--from", "198.51.100.0/40");
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('"198.51.100.0/40" is wider than IPv4 allows: a prefix length is /0 to /32');
  });
});
