// Every finding about exposure or rules carries a witness that `trace` replays, and the
// converse: when a random probe shows an exposure, the matching finding exists. A finding
// needs a witness because a false one once slipped through when nothing compared findings
// with traces (PRODUCT.md §3 is the semantics both sides follow).

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, findings, parseModel, trace } from "#server/engine/index.ts";
import type { DeviceModel, DeviceModelInput, Finding } from "#server/engine/index.ts";
import { parseAddress } from "#server/engine/addresses.ts";
import { NON_GLOBAL } from "#server/engine/findings/index.ts";
import { rangesOf } from "#server/engine/address-sets.ts";
import { NaiveEvaluator } from "#server/engine/naive.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";

// Fixed seeds by default, printed on failure by fast-check; SALLYPORT_PROPERTY_SEED=<n> replays one.
const SEED = Number(process.env.SALLYPORT_PROPERTY_SEED ?? 20261202);
const MEDIUM = { ...SMALL_SIZE, interfaces: 4, rules: 40, addressObjects: 30, entries: 80, groups: 6, accounts: 6, schedules: 3 };

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

/** Non-private as PRODUCT.md §5 defines it: outside RFC 1918, RFC 4193, loopback, link-local, RFC 6598, multicast, reserved. */
function isNonPrivate(text: string): boolean {
  const address = parseAddress(text);
  const ranges = rangesOf(NON_GLOBAL, address.family);
  for (let i = 0; i < ranges.length; i += 2) if (address.value >= ranges[i] && address.value <= ranges[i + 1]) return false;
  return true;
}

function inSet(model: DeviceModel, names: readonly string[], text: string): boolean {
  const device = compileModel({ ...model, inboundRules: [], accounts: [{ name: "probe-check", loginSources: [...names], secondFactor: "none", services: [], accessLevel: "full", enabled: true }] });
  const set = device.loginSetOf(names);
  const address = parseAddress(text);
  const ranges = rangesOf(set, address.family);
  for (let i = 0; i < ranges.length; i += 2) if (address.value >= ranges[i] && address.value <= ranges[i + 1]) return true;
  return false;
}

const LOGIN = new Set(["login-denied", "login-mfa", "login-password"]);
const elementName = (finding: Finding, kind: string) => finding.elements.find((element) => element.startsWith(`${kind}:`))?.slice(kind.length + 1);

/** Checks one finding's witness against `trace`, the naive evaluator and the finding's claim. */
function checkWitness(model: DeviceModel, finding: Finding): void {
  const witness = finding.witness;
  if (witness === undefined) return;
  const device = compileModel(model);
  const probe = witness.probe;
  const traced = trace(device, probe);
  const naive = new NaiveEvaluator(model).trace({ ...probe, atMs: Date.parse(probe.at) });
  const context = `${finding.code} ${finding.elements.join(" ")} ${JSON.stringify(probe)}`;
  expect(traced.outcome, context).toBe(witness.outcome);
  expect(traced.ruleId, context).toBe(witness.ruleId);
  expect(naive.outcome, context).toBe(traced.outcome);
  expect(naive.ruleId, context).toBe(traced.ruleId);
  const rule = elementName(finding, "rule");
  const only = (id: string, allWeek: boolean): DeviceModel => ({
    ...model,
    device: { ...model.device, defaultInbound: "deny" },
    inboundRules: model.inboundRules.filter((r) => r.id === id).map((r) => ({ ...r, action: "allow" as const, ...(allWeek ? { schedule: "all-week" } : {}) })),
  });
  switch (finding.code) {
    case "internet-login-exposed":
      expect(LOGIN.has(traced.outcome), context).toBe(true);
      expect(probe.interface).toBe(elementName(finding, "interface"));
      expect(probe.service).toBe(elementName(finding, "service"));
      expect(isNonPrivate(probe.from), context).toBe(true);
      if (finding.severity !== "low") expect(inSet(model, model.operatorNetworks, probe.from), context).toBe(false);
      break;
    case "internet-ping":
      expect(traced.outcome, context).toBe("answered");
      expect(probe.service).toBe("ping");
      expect(isNonPrivate(probe.from), context).toBe(true);
      break;
    case "no-final-drop":
      expect(traced.ruleId, context).toBeNull();
      expect(traced.layers[0].result, context).toBe("pass");
      expect(isNonPrivate(probe.from), context).toBe(true);
      break;
    case "shadowed-rule":
    case "rule-never-active": {
      // The rule's own conditions match the probe (alone, always active, it is the first match)…
      const alone = trace(compileModel(only(rule!, true)), probe);
      expect(alone.ruleId, context).toBe(rule);
      // …yet in the real model it is not the rule that matches first.
      expect(traced.ruleId, context).not.toBe(rule);
      // A shadowed rule's detail names the rules that match first; the witness's deciding rule is one of them (unless the list is cut).
      if (finding.code === "shadowed-rule" && traced.ruleId !== null && !finding.detail.includes("and others")) {
        expect(finding.detail, context).toContain(`"${traced.ruleId}"`);
      }
      break;
    }
    case "redundant-rule": {
      expect(traced.ruleId, context).toBe(rule);
      const without = { ...model, inboundRules: model.inboundRules.filter((r) => r.id !== rule) };
      expect(trace(compileModel(without), probe).outcome, context).toBe(traced.outcome);
      break;
    }
    case "lockout": {
      expect(["login-mfa", "login-password"]).not.toContain(traced.outcome);
      expect(inSet(model, [elementName(finding, "operator-network")!], probe.from), context).toBe(true);
      break;
    }
    default:
      break;
  }
}

const START = Date.UTC(2026, 2, 23); // a Monday; the weeks after cross the EU and US daylight-saving changes

function randomProbes(model: DeviceModel, sources: readonly string[], seed: number, count: number) {
  const rnd = prng(seed);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const device = model.interfaces.flatMap((f) => f.addresses.map((a) => a.split("/")[0]));
  const services = ["https", "http", "ssh", "telnet", "ping", "snmp", "webconsole"];
  return Array.from({ length: count }, () => {
    const from = pick(sources);
    const sameFamily = device.filter((a) => a.includes(":") === from.includes(":"));
    return {
      from,
      interface: pick(model.interfaces).name,
      service: pick(services),
      ...(sameFamily.length > 0 && rnd() < 0.6 ? { to: pick(sameFamily) } : {}),
      at: START + Math.floor(rnd() * 14 * 24 * 60) * 60_000,
    };
  });
}

describe("Witnesses", () => {
  test("every finding's witness replays in trace and in the naive evaluator, and shows what the finding claims", { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(fc.integer(), fc.boolean(), (seed, medium) => {
        const model = validated(generateModel(seed, medium ? MEDIUM : SMALL_SIZE).model);
        for (const finding of findings(compileModel(model))) checkWitness(model, finding);
      }),
      { numRuns: 40, seed: SEED },
    );
  });

  test("exposure and rule findings carry a witness wherever one exists", { timeout: 60_000 }, () => {
    const withWitness = new Set(["internet-login-exposed", "internet-ping", "redundant-rule", "lockout"]);
    fc.assert(
      fc.property(fc.integer(), (seed) => {
        const model = validated(generateModel(seed, SMALL_SIZE).model);
        for (const finding of findings(compileModel(model))) {
          // These always have one: the finding is about a probe that exists.
          if (withWitness.has(finding.code)) expect(finding.witness, `${finding.code} ${finding.elements.join(" ")}`).toBeDefined();
        }
      }),
      { numRuns: 30, seed: SEED + 1 },
    );
  });

  test("the converse: when a random probe shows an exposure, the matching finding exists", { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, probeSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const model = validated(generated.model);
        const device = compileModel(model);
        const list = findings(device);
        const has = (code: string, ...elements: string[]) => list.some((f) => f.code === code && elements.every((e) => f.elements.includes(e as never)));
        for (const probe of randomProbes(model, generated.sampleSources, probeSeed, 80)) {
          const t = trace(device, probe);
          const iface = model.interfaces.find((f) => f.name === probe.interface)!;
          const context = JSON.stringify(probe);
          if (LOGIN.has(t.outcome) && (iface.role === "wan" || iface.role === "dmz") && isNonPrivate(probe.from)) {
            expect(has("internet-login-exposed", `interface:${iface.name}`, `service:${probe.service}`), context).toBe(true);
          }
          if (t.outcome === "answered" && probe.service === "ping" && isNonPrivate(probe.from)) expect(has("internet-ping", `interface:${iface.name}`), context).toBe(true);
          if (t.ruleId !== null) {
            expect(has("shadowed-rule", `rule:${t.ruleId}`), context).toBe(false);
            expect(has("rule-never-active", `rule:${t.ruleId}`), context).toBe(false);
          }
          if (t.outcome === "login-mfa" || t.outcome === "login-password") {
            for (const name of model.operatorNetworks) if (inSet(model, [name], probe.from)) expect(has("lockout", `operator-network:${name}`), context).toBe(false);
          }
        }
      }),
      { numRuns: 40, seed: SEED + 2 },
    );
  });
});

describe("Findings follow arrival (PRODUCT.md §3, layer 1)", () => {
  // An outside interface with IPv4 only; IPv6 lives on the inside. Documentation addresses:
  // RFC 5737 (203.0.113.0/24) and RFC 3849 (2001:db8::/32); inside RFC 1918 / RFC 4193.
  const model = validated({
    schemaVersion: 2,
    device: { name: "quayside-edge", timezone: "UTC" },
    interfaces: [
      { name: "outside", role: "wan", addresses: ["203.0.113.2/24"], listeners: ["https"] },
      { name: "inside", role: "lan", addresses: ["10.30.0.1/24", "fd00:30::1/64"], listeners: ["https", "ssh"] },
    ],
    addresses: [{ name: "ops-desk", entries: ["10.30.8.0/24"] }],
    inboundRules: [],
    accounts: [
      { name: "ops-ines", loginSources: [], secondFactor: "totp" },
      // Only IPv6 sources could log in with a password alone — and none arrive on "outside".
      { name: "legacy-v6", loginSources: ["2001:db8:77::/48"], secondFactor: "none" },
    ],
    operatorNetworks: ["ops-desk"],
  });
  const device = compileModel(model);

  test("an IPv6 source never arrives on the IPv4-only outside interface: trace says silent", () => {
    const traced = trace(device, { from: "2001:db8:77::5", interface: "outside", service: "https", to: "fd00:30::1", at: "2026-12-02T10:00:00Z" });
    expect(traced.outcome).toBe("silent");
    expect(traced.layers[0]).toMatchObject({ layer: "arrival", result: "stop" });
  });

  test("so internet-login-exposed on outside is graded by the IPv4 sources that arrive (second factor: high), not critical", () => {
    const exposed = findings(device).filter((f) => f.code === "internet-login-exposed" && f.elements.includes("interface:outside"));
    expect(exposed).toHaveLength(1);
    expect(exposed[0].severity).toBe("high");
    expect(exposed[0].detail).toContain("login-mfa");
    expect(exposed[0].detail).not.toContain("2001:db8");
    expect(exposed[0].witness?.probe.from).not.toContain(":");
    checkWitness(model, exposed[0]);
  });

  test("without an IPv4 login path on outside, there is no internet-login-exposed for it at all", () => {
    const dropV4 = validated({ ...model, inboundRules: [{ id: "drop-v4", interface: "outside", sources: ["any4"], destinations: ["any"], services: ["any"], action: "deny" }] });
    expect(findings(compileModel(dropV4)).filter((f) => f.code === "internet-login-exposed" && f.elements.includes("interface:outside"))).toEqual([]);
  });
});
