// The `sallyport` CLI as a pipeline sees it: spawned, exit codes, --json, --probes CSV.

import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, test } from "vitest";

const ROOT = join(import.meta.dirname, "../..");
const BIN = join(ROOT, "server/cli/sallyport.mjs");
const MODELS = join(ROOT, "tests/fixtures/models");

function sallyport(...args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: "utf8", timeout: 30_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const model = (name: string): string => join(MODELS, name);

describe("sallyport CLI", { timeout: 60_000 }, () => {
  test("trace --json follows the trace contract", () => {
    const r = sallyport("trace", model("harbourline-edge.json"), "--from", "198.51.100.20", "--on", "outside", "--service", "https", "--at", "2025-03-04T10:00", "--json");
    expect(r.code).toBe(0);
    const t = JSON.parse(r.stdout);
    expect(t).toMatchObject({ outcome: "login-mfa", at: "2025-03-04T09:00:00.000Z", ruleId: "r-noc", eligibleAccounts: ["ops-lena"] });
    expect(t.layers.map((l: { layer: string }) => l.layer)).toEqual(["arrival", "inbound-rules", "listener", "service-kind", "login-sources", "second-factor"]);
    expect(t.layers[1]).toMatchObject({ result: "pass", ruleId: "r-noc" });
  });

  test("validate sums a model up with plurals that agree (CLDR plural rules: one for exactly 1)", () => {
    const dir = mkdtempSync(join(tmpdir(), "sallyport-"));
    const file = join(dir, "one-of-each.json");
    writeFileSync(
      file,
      JSON.stringify({
        schemaVersion: 1,
        device: { name: "one-of-each" },
        interfaces: [{ name: "uplink", addresses: ["192.0.2.1/24"], listeners: ["ssh"] }],
        inboundRules: [{ id: "r1", interface: "any", sources: ["any"], destinations: ["any"], services: ["ssh"], action: "allow" }],
        accounts: [{ name: "ops-lena", secondFactor: "totp" }],
      }),
    );
    const r = sallyport("validate", file);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('valid — device "one-of-each", 1 interface, 1 inbound rule, 1 account, 0 warnings');
  });

  test("a readable table without --json; a probe input error exits 2 with a message on stderr", () => {
    const ok = sallyport("trace", model("harbourline-edge.json"), "--from", "203.0.113.50", "--on", "outside", "--service", "ssh");
    expect(ok.code).toBe(0);
    expect(ok.stdout).toMatch(/outcome\s+silent\s+rule r-drop/);
    const bad = sallyport("trace", model("harbourline-edge.json"), "--from", "10.0.0", "--on", "outside", "--service", "ssh");
    expect(bad.code).toBe(2);
    expect(bad.stdout).toBe("");
    expect(bad.stderr).toContain('"10.0.0"');
  });

  test("--probes CSV: one JSON line per row in input order; a bad row prints an error and processing continues", () => {
    const dir = mkdtempSync(join(tmpdir(), "sallyport-"));
    const csv = join(dir, "probes.csv");
    writeFileSync(
      csv,
      [
        "from,interface,service,to,at,account",
        "198.51.100.20,outside,https,,2025-03-04T10:00,",
        "198.51.100.20,outside,rdp,,,",
        "192.0.2.70,outside,https,203.0.113.10,2025-03-04T09:00:00Z,vendor-kit",
        '"2001:db8:99::5",outside,ssh,,2025-03-04T10:00,',
      ].join("\n") + "\n",
    );
    const r = sallyport("trace", model("harbourline-edge.json"), "--probes", csv);
    expect(r.code).toBe(0);
    const lines = r.stdout.trim().split("\n").map((l) => JSON.parse(l));
    expect(lines.length).toBe(4);
    expect(lines[0].outcome).toBe("login-mfa");
    expect(lines[1]).toEqual({ error: expect.stringContaining("rdp") });
    expect([lines[2].outcome, lines[2].eligibleAccounts]).toEqual(["login-password", ["vendor-kit"]]);
    expect(lines[3].outcome).toBe("login-mfa");
  });

  test("--probes CSV with a stray quote: exit 2 naming the file and line, nothing traced", () => {
    const dir = mkdtempSync(join(tmpdir(), "sallyport-"));
    const csv = join(dir, "probes.csv");
    // RFC 4180 §2.5: an unquoted field may not hold a double quote.
    writeFileSync(csv, ["from,interface,service,to,at,account", "198.51.100.20,outside,https,,,", '198.51.100.20,out"side,ssh,,,', ""].join("\n"));
    const r = sallyport("trace", model("harbourline-edge.json"), "--probes", csv);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe("");
    expect(r.stderr).toContain(`${csv}: line 3: a double quote inside an unquoted field`);
  });

  test("exposure --at --json: entries for every interface × address × catalogue service", () => {
    const r = sallyport("exposure", model("kestrel-dental.json"), "--at", "2025-06-02T12:00:00Z", "--json");
    expect(r.code).toBe(0);
    const map = JSON.parse(r.stdout);
    expect(map.entries.length).toBe(3 * 6);
    const telnet = map.entries.find((e: { to: string; service: string }) => e.to === "2001:db8:4d::2" && e.service === "telnet");
    expect(telnet.counts["login-password"]).toBe((2n ** 128n).toString());
    expect(telnet.ranges["login-password"]).toEqual(["::/0"]);
  });

  test("findings --fail-on: 1 when a finding is at or above the severity, 0 otherwise", () => {
    expect(sallyport("findings", model("kestrel-dental.json"), "--fail-on", "critical").code).toBe(1);
    const hardened = sallyport("findings", model("kestrel-dental-hardened.json"), "--fail-on", "medium", "--json");
    expect(hardened.code).toBe(0);
    expect(JSON.parse(hardened.stdout).findings[0]).toMatchObject({ code: "internet-login-exposed", severity: "low" });
  });

  test("diff --fail-on-lockout exits 1 on a lockout and 0 without", () => {
    const locked = sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-lockout.json"), "--fail-on-lockout", "--json");
    expect(locked.code).toBe(1);
    expect(JSON.parse(locked.stdout).lockout[0].operatorNetwork).toBe("it-contractor");
    expect(sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-hardened.json"), "--fail-on-lockout").code).toBe(0);
  });

  test("diff --expectations checks both revisions: exit 1 when one that held no longer does, 0 when none broke, 2 with paths for a malformed file", () => {
    const dir = mkdtempSync(join(tmpdir(), "sallyport-"));
    const file = join(dir, "expectations.json");
    const expectations = (list: unknown[]) => writeFileSync(file, JSON.stringify({ format: "sallyport-expectations", version: 1, expectations: list }));
    // The contractor (203.0.113.40/29, RFC 5737) reaches the https login before; the lockout revision drops it.
    const contractor = { id: "contractor-https", note: "the IT contractor logs in", kind: "probe", from: "203.0.113.41", interface: "wan", service: "https", expect: "login-password" };
    const quiet = { id: "no-internet-ssh", kind: "bound", sources: "non-private", interface: "wan", service: "ssh", atMost: "silent" };
    expectations([contractor, quiet]);
    const broken = sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-lockout.json"), "--expectations", file, "--json");
    expect(broken.code).toBe(1);
    const body = JSON.parse(broken.stdout);
    // The diff's contract is kept: its keys first and unchanged, the expectations beside them.
    expect(Object.keys(body)).toEqual(["changes", "lockout", "findingsAdded", "findingsResolved", "expectations"]);
    expect(body.lockout[0].operatorNetwork).toBe("it-contractor");
    expect(body.expectations.map((e: { id: string; broken: boolean; before: { status: string }; after: { status: string } }) => [e.id, e.before.status, e.after.status, e.broken])).toEqual([
      ["contractor-https", "holds", "fails", true],
      ["no-internet-ssh", "holds", "holds", false],
    ]);
    expect(body.expectations[0].after.witness).toMatchObject({ from: "203.0.113.41", interface: "wan", service: "https", outcome: "silent" });
    const text = sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-lockout.json"), "--expectations", file);
    expect(text.code).toBe(1);
    expect(text.stdout).toMatch(/contractor-https\s+holds\s+fails\s+BROKEN/);
    // Only the bound: nothing that held breaks, so the exit code is the diff's own (0 without --fail-on-lockout).
    expectations([quiet]);
    expect(sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-lockout.json"), "--expectations", file).code).toBe(0);
    expect(sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-lockout.json"), "--expectations", file, "--fail-on-lockout").code).toBe(1);
    expectations([{ ...contractor, from: "not-an-address" }]);
    const malformed = sallyport("diff", model("kestrel-dental.json"), model("kestrel-dental-lockout.json"), "--expectations", file);
    expect(malformed.code).toBe(2);
    expect(malformed.stdout).toBe("");
    expect(malformed.stderr).toContain("expectations[0].from: must be one IPv4 or IPv6 address");
  });

  test("a version-1 document is read as version 2: the same answers, and one line on stderr says so", () => {
    // PRODUCT.md §4: version-1 documents are still read and upgraded on read; the CLI says so.
    const v1 = join(ROOT, "tests/fixtures/version-1/harbourline-edge.json");
    const args = ["--from", "198.51.100.20", "--on", "outside", "--service", "https", "--at", "2025-03-04T10:00", "--json"];
    const old = sallyport("trace", v1, ...args);
    const current = sallyport("trace", model("harbourline-edge.json"), ...args);
    expect(old.code).toBe(0);
    expect(old.stdout).toBe(current.stdout);
    expect(current.stderr).toBe("");
    const notes = old.stderr.split("\n").filter((line) => line !== "");
    expect(notes).toEqual([`${v1}: note: version-1 document read as version 2 (roles outside → wan, inside → lan, mgmt → management; schedule always → all-week); the file is unchanged`]);
    const validated = sallyport("validate", v1);
    expect(validated.code).toBe(0);
    expect(validated.stderr).toContain("version-1 document read as version 2");
    expect(sallyport("findings", v1, "--json").stdout).toBe(sallyport("findings", model("harbourline-edge.json"), "--json").stdout);
  });

  test("a document of a version Sallyport does not know is refused with a clear message", () => {
    const dir = mkdtempSync(join(tmpdir(), "sallyport-"));
    const future = join(dir, "future.json");
    writeFileSync(future, JSON.stringify({ schemaVersion: 3, device: { name: "x" } }));
    const v = sallyport("validate", future);
    expect(v.code).toBe(2);
    expect(v.stderr).toContain("schemaVersion: 3 is not a version Sallyport reads: it reads 1 and 2, and writes 2");
  });

  test("validation errors and usage errors exit 2", () => {
    const dir = mkdtempSync(join(tmpdir(), "sallyport-"));
    const broken = join(dir, "broken.json");
    writeFileSync(
      broken,
      JSON.stringify({
        schemaVersion: 2,
        device: { name: "x" },
        interfaces: [{ name: "o", addresses: ["192.0.2.1/24"] }],
        inboundRules: [{ id: "r1", interface: "o", sources: ["noc"], destinations: ["any"], services: ["any"], action: "deny" }],
      }),
    );
    const v = sallyport("validate", broken);
    expect(v.code).toBe(2);
    expect(v.stderr).toContain('inboundRules[0].sources[0]: unknown address "noc"');
    expect(sallyport("validate", model("harbourline-edge.json")).code).toBe(0);
    expect(sallyport("frobnicate").code).toBe(2);
    expect(sallyport("findings", model("kestrel-dental.json"), "--fail-on", "severe").code).toBe(2);
    expect(sallyport("trace", model("kestrel-dental.json")).code).toBe(2);
  });
});
