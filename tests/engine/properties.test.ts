// Property tests: the compiled engine against the deliberately naive evaluator, exposure
// against traces, diff(m, m) empty, and shadowed/redundant rules removable without effect.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, diffModels, exposure, findings, parseModel, trace } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModel, DeviceModelInput } from "#server/engine/index.ts";
import { formatAddress, parseEntry } from "#server/engine/addresses.ts";
import { NaiveEvaluator } from "#server/engine/naive.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs.ts";

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`generated model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

/**
 * Each property's runs and Vitest timeout, sized so a run on a loaded 2-core machine ends well
 * inside the timeout (measured; see DEVELOPERS.md, Tests). The seed is fixed unless
 * SALLYPORT_PROPERTY_SEED says otherwise; a failure's report names it.
 */
const BUDGETS = {
  naive: { numRuns: 60, timeoutMs: 30_000 },
  naiveLarger: { numRuns: 10, timeoutMs: 30_000 },
  exposure: { numRuns: 25, timeoutMs: 30_000 },
  diffSelf: { numRuns: 15, timeoutMs: 30_000 },
  removable: { numRuns: 25, timeoutMs: 30_000 },
} as const satisfies Record<string, PropertyBudget>;

const START = Date.UTC(2025, 2, 24); // a Monday; the next two weeks cross the EU/US DST changes
const PROBE_SERVICES = ["https", "http", "ssh", "telnet", "ping", "snmp", "webconsole", "syslog-in", "tcp/8443", "tcp/8080", "udp/9999", "icmp/echo", "tcp/22"];

interface RandomProbe {
  from: string;
  interface: string;
  service: string;
  to?: string;
  atMs: number;
  account?: string;
}

function randomProbes(model: DeviceModel, sources: readonly string[], seed: number, count: number): RandomProbe[] {
  const rnd = prng(seed);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const device = model.interfaces.flatMap((f) => f.addresses.map((a) => a.split("/")[0]));
  return Array.from({ length: count }, () => {
    const from = pick(sources);
    const family = from.includes(":") ? ":" : ".";
    const sameFamily = device.filter((a) => a.includes(family));
    const probe: RandomProbe = {
      from,
      interface: pick(model.interfaces).name,
      service: pick(PROBE_SERVICES),
      atMs: START + Math.floor(rnd() * 21 * 24 * 60) * 60_000 + Math.floor(rnd() * 60_000),
    };
    if (rnd() < 0.3 && sameFamily.length > 0) probe.to = pick(sameFamily);
    if (rnd() < 0.2 && model.accounts.length > 0) probe.account = pick(model.accounts).name;
    return probe;
  });
}

function compiledTrace(device: CompiledModel, p: RandomProbe) {
  const t = trace(device, { ...p, at: p.atMs });
  return { outcome: t.outcome, ruleId: t.ruleId, eligibleAccounts: t.eligibleAccounts, layers: t.layers.map((l) => ({ layer: l.layer, result: l.result })) };
}

describe("compiled engine against the naive evaluator", () => {
  test("every probe gets the same outcome, deciding rule, eligible accounts and layers", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, probeSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const model = validated(generated.model);
        const device = compileModel(model);
        const naive = new NaiveEvaluator(model);
        for (const p of randomProbes(model, generated.sampleSources, probeSeed, 60)) {
          expect(compiledTrace(device, p), JSON.stringify(p)).toEqual(naive.trace(p));
        }
      }),
      propertyParameters(BUDGETS.naive),
    );
  }, BUDGETS.naive.timeoutMs);

  test("also on larger models, where sets span many bitset words", () => {
    const medium = { ...SMALL_SIZE, interfaces: 4, rules: 80, addressObjects: 60, entries: 160, groups: 10, accounts: 8, schedules: 4 };
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, probeSeed) => {
        const generated = generateModel(seed, medium);
        const model = validated(generated.model);
        const device = compileModel(model);
        expect(device.domains[4].words).toBeGreaterThan(2);
        const naive = new NaiveEvaluator(model);
        for (const p of randomProbes(model, generated.sampleSources, probeSeed, 150)) {
          expect(compiledTrace(device, p), JSON.stringify(p)).toEqual(naive.trace(p));
        }
      }),
      propertyParameters(BUDGETS.naiveLarger),
    );
  }, BUDGETS.naiveLarger.timeoutMs);
});

describe("exposure map against traces", () => {
  test("counts sum to the family size, and random points of each outcome's CIDRs trace to that outcome", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, pointSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const device = compileModel(validated(generated.model));
        const naive = new NaiveEvaluator(device.model);
        const rnd = prng(pointSeed);
        const atMs = START + Math.floor(rnd() * 7 * 24 * 60) * 60_000;
        const map = exposure(device, atMs);
        for (const e of map.entries) {
          const family6 = e.to.includes(":");
          const total = Object.values(e.counts).reduce((a, b) => a + BigInt(b), 0n);
          expect(total).toBe(family6 ? 2n ** 128n : 2n ** 32n); // RFC 4632 §3.1: the whole space, 2^32 (and 2^128 for IPv6)
          for (const [outcome, cidrs] of Object.entries(e.ranges)) {
            const counted = cidrs.reduce((n, c) => n + size(c), 0n);
            expect(counted.toString()).toBe(e.counts[outcome as keyof typeof e.counts]);
            if (cidrs.length === 0) continue;
            const point = randomPoint(cidrs[Math.floor(rnd() * cidrs.length)], rnd);
            const probe = { from: point, interface: e.interface, service: e.service, to: e.to, atMs };
            expect(trace(device, { ...probe, at: atMs }).outcome).toBe(outcome);
            expect(naive.trace(probe).outcome).toBe(outcome);
          }
        }
      }),
      propertyParameters(BUDGETS.exposure),
    );
  }, BUDGETS.exposure.timeoutMs);
});

function size(cidr: string): bigint {
  const r = parseEntry(cidr).range;
  return r.last - r.first + 1n;
}

function randomPoint(cidr: string, rnd: () => number): string {
  const r = parseEntry(cidr).range;
  const span = r.last - r.first + 1n;
  const offset = (BigInt(Math.floor(rnd() * 2 ** 32)) * BigInt(Math.floor(rnd() * 2 ** 32)) * 7919n) % span;
  return formatAddress(r.family, r.first + offset);
}

describe("diff and rule analyses", () => {
  test("diff(m, m) is empty", () => {
    fc.assert(
      fc.property(fc.integer(), (seed) => {
        const model = validated(generateModel(seed, SMALL_SIZE).model);
        expect(diffModels(compileModel(model), compileModel(model))).toEqual({ changes: [], lockout: [], findingsAdded: [], findingsResolved: [] });
      }),
      propertyParameters(BUDGETS.diffSelf),
    );
  }, BUDGETS.diffSelf.timeoutMs);

  test("removing a rule reported as shadowed or redundant changes no outcome", () => {
    let checked = 0;
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, probeSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const model = validated(generated.model);
        const device = compileModel(model);
        const removable = findings(device).filter((f) => f.code === "shadowed-rule" || f.code === "redundant-rule");
        for (const f of removable) {
          const id = f.elements[0].slice("rule:".length);
          const without: DeviceModel = { ...model, inboundRules: model.inboundRules.filter((r) => r.id !== id) };
          const after = compileModel(without);
          expect(diffModels(device, after).changes).toEqual([]);
          // Independently: the naive evaluator sees the same outcomes with and without the rule.
          const a = new NaiveEvaluator(model);
          const b = new NaiveEvaluator(without);
          for (const p of randomProbes(model, generated.sampleSources, probeSeed, 40)) expect(b.trace(p).outcome).toBe(a.trace(p).outcome);
          checked++;
        }
      }),
      propertyParameters(BUDGETS.removable),
    );
    expect(checked).toBeGreaterThan(0);
  }, BUDGETS.removable.timeoutMs);

  test("a rule that is never the first match is reported as shadowed", () => {
    // An exact duplicate placed right after its twin can never match first (common practice, no source: first match wins).
    const model = validated(generateModel(7, SMALL_SIZE).model);
    const first = model.inboundRules.find((r) => r.enabled && r.schedule === "all-week");
    if (first === undefined) throw new Error("generator gave no always-on rule");
    const index = model.inboundRules.indexOf(first);
    const twin = { ...first, id: `${first.id}-twin` };
    const doubled: DeviceModel = { ...model, inboundRules: [...model.inboundRules.slice(0, index + 1), twin, ...model.inboundRules.slice(index + 1)] };
    const list = findings(compileModel(doubled));
    expect(list.some((f) => f.code === "shadowed-rule" && f.elements.includes(`rule:${twin.id}`))).toBe(true);
  });
});
