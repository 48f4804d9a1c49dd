// Hand-written fixture models (invented scenarios) with outcomes explained layer by layer
// in the companion *.expected.json files and in the comments below.

import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, test } from "vitest";
import { ProbeError, compileModel, diffModels, exposure, findings, parseModel, reach, trace } from "#server/engine/index.ts";
import type { CompiledModel, ProbeInput } from "#server/engine/index.ts";

const DIR = join(import.meta.dirname, "../fixtures/models");

function load(name: string): CompiledModel {
  const parsed = parseModel(JSON.parse(readFileSync(join(DIR, name), "utf8")));
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
  return compileModel(parsed.model);
}

interface ExpectedTrace {
  probe: ProbeInput;
  why: string;
  outcome: string;
  ruleId: string | null;
  eligibleAccounts: string[];
  layers: string[];
}

const harbourline = JSON.parse(readFileSync(join(DIR, "harbourline-edge.expected.json"), "utf8")) as {
  traces: ExpectedTrace[];
  inputErrors: { probe: ProbeInput; why: string }[];
};

describe("Harbourline edge firewall: traces explained layer by layer", () => {
  const device = load("harbourline-edge.json");
  test.each(harbourline.traces.map((t) => [t.why, t] as const))("%s", (_, expected) => {
    const t = trace(device, expected.probe);
    expect({
      outcome: t.outcome,
      ruleId: t.ruleId,
      eligibleAccounts: t.eligibleAccounts,
      layers: t.layers.map((l) => `${l.layer}:${l.result}`),
    }).toEqual({ outcome: expected.outcome, ruleId: expected.ruleId, eligibleAccounts: expected.eligibleAccounts, layers: expected.layers });
  });

  test.each(harbourline.inputErrors.map((e) => [e.why, e.probe] as const))("input error: %s", (_, probe) => {
    expect(() => trace(device, probe)).toThrow(ProbeError);
  });

  test("exposure of outside https on Tuesday 10:00 Berlin: NOC minus the blocked host, vendor range, everyone else silent", () => {
    const map = exposure(device, "2025-03-04T10:00");
    const e = map.entries.find((x) => x.interface === "outside" && x.to === "203.0.113.10" && x.service === "https");
    expect(e).toBeDefined();
    if (e === undefined) return;
    // noc 198.51.100.0/26 = 64 addresses (RFC 4632 §3.1) minus 198.51.100.7 (r-block) → 63 get a login with TOTP.
    expect(e.counts["login-mfa"]).toBe("63");
    expect(e.ranges["login-mfa"]).toEqual(["198.51.100.0/30", "198.51.100.4/31", "198.51.100.6/32", "198.51.100.8/29", "198.51.100.16/28", "198.51.100.32/27"]);
    // vendor-support 192.0.2.64–79 is the CIDR 192.0.2.64/28: 16 addresses, password only.
    expect(e.counts["login-password"]).toBe("16");
    expect(e.ranges["login-password"]).toEqual(["192.0.2.64/28"]);
    // Everyone else: 2^32 − 79 silent.
    expect(e.counts.silent).toBe((2n ** 32n - 79n).toString());
    expect(map.slice).toEqual({ start: "tue 08:00", end: "tue 17:00" });
  });

  test("every exposure entry's counts sum to the family size", () => {
    const map = exposure(device, "2025-03-09T00:30:00Z");
    expect(map.entries.length).toBe((2 + 2 + 1) * 7); // 5 interface addresses × 7 catalogue services
    for (const e of map.entries) {
      const total = Object.values(e.counts).reduce((a, b) => a + BigInt(b), 0n);
      expect(total).toBe(e.to.includes(":") ? 2n ** 128n : 2n ** 32n);
    }
  });

  test("the week splits into slices at the schedules' edges", () => {
    const week = exposure(device);
    expect(week.slices.map((s) => `${s.start}–${s.end}`)).toContain("sat 22:00–sun 02:00");
    expect(week.slices.length).toBe(12);
  });

  test("reach from a NOC host lists every interface × service", () => {
    const r = reach(device, "198.51.100.20", "2025-03-04T10:00");
    expect(r.results.length).toBe(3 * 7);
    const outcomes = Object.fromEntries(r.results.filter((x) => x.interface === "outside").map((x) => [x.service, x.outcome]));
    expect(outcomes).toEqual({ https: "login-mfa", http: "silent", ssh: "login-mfa", telnet: "silent", ping: "answered", snmp: "silent", webconsole: "refused" });
  });

  test("findings: the vendor's password-only login from the internet is critical", () => {
    const list = findings(device);
    const codes = list.map((f) => `${f.severity} ${f.code} ${f.elements.join(" ")}`);
    expect(codes).toEqual([
      "critical internet-login-exposed interface:outside service:https",
      "high no-second-factor account:vendor-kit",
      // ssh: outside the NOC only the vendor reaches it (Saturday night) and gets login-denied.
      "medium internet-login-exposed interface:outside service:ssh",
      "low internet-ping interface:outside service:ping",
    ]);
  });
});

describe("Kestrel Dental office router: a weak posture and two proposals", () => {
  const current = load("kestrel-dental.json");
  const hardened = load("kestrel-dental-hardened.json");
  const lockedOut = load("kestrel-dental-lockout.json");

  test("with no rules and default allow, telnet from the internet reaches a password-only admin", () => {
    const t = trace(current, { from: "203.0.113.99", interface: "wan", service: "telnet" });
    // arrival pass → no rule, default allow → telnet listens → login → admin (anywhere) → no second factor.
    expect([t.outcome, t.ruleId, t.eligibleAccounts]).toEqual(["login-password", null, ["admin"]]);
  });

  test("findings of the current revision", () => {
    const codes = new Set(findings(current).map((f) => `${f.code}:${f.elements[0]}`));
    for (const expected of [
      "default-account-name:account:admin", // PCI DSS v4.0 2.2.2
      "unrestricted-account:account:admin",
      "no-second-factor:account:admin", // PCI DSS v4.0 8.4.1
      "cleartext-listener:interface:wan", // CIS Controls v8 4.6
      "internet-login-exposed:interface:wan",
      "internet-ping:interface:wan",
      "no-final-drop:interface:wan", // NIST SP 800-41 rev 1 (default deny)
      "unused-object:address:old-vpn",
    ]) {
      expect(codes).toContain(expected);
    }
    expect(codes).not.toContain("lockout:operator-network:it-contractor");
  });

  test("the hardened proposal keeps the contractor's path and reports no lockout", () => {
    const d = diffModels(current, hardened);
    expect(d.lockout).toEqual([]);
    const https = d.changes.filter((c) => c.interface === "wan" && c.to === "198.51.100.2" && c.service === "https");
    const moves = https.flatMap((c) => c.transitions.map((t) => `${t.before}→${t.after} ${t.count}`));
    // 2^32 − 8 sources lose the login; the contractor's /29 (8 addresses) keeps it, now with TOTP only (admin removed).
    expect(moves.sort()).toEqual([`login-password→login-mfa 8`, `login-password→silent ${2n ** 32n - 8n}`]);
    expect(d.findingsResolved.map((f) => f.code)).toContain("default-account-name");
    expect(findings(hardened).map((f) => `${f.severity} ${f.code}`)).toEqual(["low internet-login-exposed"]);
  });

  test("the proposal with the wrong source locks the contractor out", () => {
    const d = diffModels(current, lockedOut);
    expect(d.lockout.map((l) => l.operatorNetwork)).toEqual(["it-contractor"]);
    expect(d.lockout[0].lostRanges).toEqual(["203.0.113.40/29"]);
    expect(d.findingsAdded.map((f) => f.code)).toContain("lockout");
  });

  test("a revision compared with itself has no difference", () => {
    const d = diffModels(current, load("kestrel-dental.json"));
    expect(d).toEqual({ changes: [], lockout: [], findingsAdded: [], findingsResolved: [] });
  });
});

describe("Lindqvist branch gateway: rule hygiene", () => {
  const device = load("lindqvist-branch.json");

  test("findings name shadowed, redundant and never-active rules, broad login sources and a disabled default name", () => {
    expect(findings(device).map((f) => `${f.severity} ${f.code} ${f.elements.join(" ")}`)).toEqual([
      // any4 is 2^32 addresses ≥ 2^24 (RFC 4632 §3.1 arithmetic).
      "medium broad-login-sources account:monitor-bot",
      // jump-web's single host lies inside hq-noc, which noc-web already allows for https: never first.
      "medium shadowed-rule rule:jump-web",
      // An exact duplicate after its twin (first match wins; common practice, no source).
      "medium shadowed-rule rule:noc-ssh-again",
      "low default-account-name account:root",
      // Only the operator network hq-noc reaches the logins on the uplink.
      "low internet-login-exposed interface:uplink service:https",
      "low internet-login-exposed interface:uplink service:ssh",
      // Without block-scanners, drop-all denies the same sources: same outcome.
      "low redundant-rule rule:block-scanners",
      // Without noc-ssh, its twin allows the same probes: removing either alone changes nothing.
      "low redundant-rule rule:noc-ssh",
      "low rule-never-active rule:old-vendor schedule:retired-window",
    ]);
  });

  test("traces confirm the shadowing: the jump host is decided by noc-web", () => {
    const t = trace(device, { from: "198.51.100.70", interface: "uplink", service: "https" });
    expect([t.outcome, t.ruleId, t.eligibleAccounts]).toEqual(["login-mfa", "noc-web", ["netops-ana"]]);
    // An IPv6 office host: office-all allows; snmp answers (kind other).
    const s = trace(device, { from: "FD12:3456:789A::0042", interface: "office", service: "snmp" });
    expect([s.outcome, s.ruleId, s.from, s.to]).toEqual(["answered", "office-all", "fd12:3456:789a::42", "fd12:3456:789a::1"]);
  });
});

describe("diff by effect over the week", () => {
  const raw = JSON.parse(readFileSync(join(DIR, "harbourline-edge.json"), "utf8"));

  function compiled(doc: unknown): CompiledModel {
    const parsed = parseModel(doc);
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
    return compileModel(parsed.model);
  }

  test("opening the support window an hour earlier changes only Monday–Friday 07:00–08:00, for the vendor range", () => {
    const after = structuredClone(raw);
    after.schedules[0].windows[0].start = "07:00";
    const d = diffModels(compiled(raw), compiled(after));
    expect(d.lockout).toEqual([]);
    const stretches = d.changes.map((c) => `${c.interface} ${c.to} ${c.service} ${c.start}–${c.end}`);
    expect(stretches).toEqual(["mon", "tue", "wed", "thu", "fri"].map((day) => `outside 203.0.113.10 https ${day} 07:00–${day} 08:00`));
    expect(d.changes[0].transitions).toEqual([{ before: "silent", after: "login-password", count: "16", ranges: ["192.0.2.64/28"] }]);
  });

  test("a new custom login service on a new listener shows up as its own cell", () => {
    const after = structuredClone(raw);
    after.services.push({ name: "api-console", protocol: "tcp", port: 9443, kind: "login" });
    after.interfaces[2].listeners.push("api-console");
    const d = diffModels(compiled(raw), compiled(after));
    // mgmt: r-mgmt allows mgmt-lan for any service; before, nothing listened on tcp/9443 and the
    // device resets unlistened ports (refused); everyone else is dropped by r-drop either way.
    const cells = d.changes.map((c) => `${c.interface} ${c.to} ${c.service}`);
    expect(cells).toEqual(["mgmt 192.168.99.1 api-console"]);
    const moves = d.changes[0].transitions.map((t) => `${t.before}→${t.after} ${t.ranges.join(" ")}`);
    // After: a login; ops-lena (operators ⊇ mgmt-lan) is eligible across the /24, and every eligible account has TOTP.
    expect(moves).toEqual(["refused→login-mfa 192.168.99.0/24"]);
    expect(d.findingsAdded.map((f) => f.code)).toEqual([]);
  });
});
