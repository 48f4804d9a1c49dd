// Trace and reach from a block of sources (server/engine/source-groups.ts) and across a fleet
// (fleet-reach.ts), related to `trace` of the block's members: the groups cover the block exactly
// once, every member of a group traces to the group's answer, and no two groups give the same one.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, fleetReach, parseModel, parseSource, reach, reachGroups, trace, traceGroups } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModel, DeviceModelInput, SourceGroup, TraceResult } from "#server/engine/index.ts";
import { FAMILY, formatAddress, parseAddress, parseCidr } from "#server/engine/addresses.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs.ts";

const BUDGETS = {
  traceBlocks: { numRuns: 40, timeoutMs: 30_000 },
  reachSingle: { numRuns: 20, timeoutMs: 30_000 },
  fleet: { numRuns: 10, timeoutMs: 30_000 },
} as const satisfies Record<string, PropertyBudget>;

const START = Date.UTC(2025, 2, 24);
const PROBE_SERVICES = ["https", "http", "ssh", "telnet", "ping", "snmp", "webconsole", "tcp/8443", "udp/9999"];

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`generated model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

/** What a group claims for each member: everything in a trace but the source and the words that quote it. */
function answer(t: TraceResult) {
  return { outcome: t.outcome, ruleId: t.ruleId, eligibleAccounts: t.eligibleAccounts, to: t.to, layers: t.layers.map((l) => ({ layer: l.layer, result: l.result, ruleId: l.ruleId })) };
}

/** A random block around one of the model's sample sources: any prefix of its family, biased to the sizes people ask about. */
function randomBlock(sources: readonly string[], rnd: () => number): string {
  const address = parseAddress(sources[Math.floor(rnd() * sources.length)]);
  const bits = FAMILY[address.family].bits;
  const r = rnd();
  const prefix = r < 0.1 ? 0 : r < 0.2 ? bits : address.family === 4 ? 8 + Math.floor(rnd() * 25) : 16 + Math.floor(rnd() * 113);
  const host = BigInt(bits - prefix);
  return `${formatAddress(address.family, (address.value >> host) << host)}/${prefix}`;
}

function rangesOf(group: SourceGroup): { first: bigint; last: bigint }[] {
  return group.sources.map((cidr) => parseCidr(cidr).range);
}

/** Up to `count` members of the group: the first and last address of each of its CIDRs, then random ones. */
function members(group: SourceGroup, rnd: () => number, count: number): string[] {
  const ranges = rangesOf(group);
  const family = parseCidr(group.sources[0]).range.family;
  const out = ranges.slice(0, 4).flatMap((r) => [r.first, r.last]);
  while (out.length < count) {
    const r = ranges[Math.floor(rnd() * ranges.length)];
    const span = r.last - r.first + 1n;
    out.push(r.first + ((BigInt(Math.floor(rnd() * 2 ** 32)) << 32n) + BigInt(Math.floor(rnd() * 2 ** 32))) % span);
  }
  return out.map((value) => formatAddress(family, value));
}

describe("A trace from a block of sources, one group per answer", () => {
  test("the groups cover the block exactly once, every member traces to its group's answer, and no two groups answer alike", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, probeSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const device = compileModel(validated(generated.model));
        const rnd = prng(probeSeed);
        for (let n = 0; n < 8; n++) {
          const block = randomBlock(generated.sampleSources, rnd);
          const probe = {
            from: block,
            interface: device.model.interfaces[Math.floor(rnd() * device.model.interfaces.length)].name,
            service: PROBE_SERVICES[Math.floor(rnd() * PROBE_SERVICES.length)],
            at: START + Math.floor(rnd() * 7 * 24 * 60) * 60_000,
            ...(rnd() < 0.2 && device.model.accounts.length > 0 ? { account: device.model.accounts[Math.floor(rnd() * device.model.accounts.length)].name } : {}),
          };
          const result = traceGroups(device, probe);
          const asked = parseSource(block);
          // RFC 4632 §3.1: a /n of a family of b bits holds 2^(b−n) addresses; the groups' counts add up to it.
          expect(result.count).toBe((1n << BigInt(FAMILY[asked.family].bits - asked.prefix)).toString());
          const spans = result.groups.flatMap(rangesOf).sort((a, b) => (a.first < b.first ? -1 : 1));
          let next = asked.first;
          for (const span of spans) {
            expect(span.first, `${block}: gap or overlap`).toBe(next);
            next = span.last + 1n;
          }
          expect(next - 1n).toBe(asked.last);
          expect(result.groups.reduce((total, g) => total + BigInt(g.count), 0n).toString()).toBe(result.count);

          const seen = new Set<string>();
          for (const group of result.groups) {
            const claimed = answer(group.trace);
            expect(group.trace).toEqual(trace(device, { ...probe, from: group.example }));
            expect([group.outcome, group.ruleId, group.eligibleAccounts, group.layer]).toEqual([claimed.outcome, claimed.ruleId, claimed.eligibleAccounts, claimed.layers[claimed.layers.length - 1].layer]);
            for (const member of members(group, rnd, 12)) expect(answer(trace(device, { ...probe, from: member })), `${member} in ${group.sources.join(" ")}`).toEqual(claimed);
            const key = JSON.stringify(claimed);
            expect(seen.has(key), `two groups answer ${key}`).toBe(false);
            seen.add(key);
          }
        }
      }),
      propertyParameters(BUDGETS.traceBlocks),
    );
  }, BUDGETS.traceBlocks.timeoutMs);

  test("one address is one group whose trace is exactly `trace`, and reach from it is exactly `reach`", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, probeSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const device = compileModel(validated(generated.model));
        const rnd = prng(probeSeed);
        const from = generated.sampleSources[Math.floor(rnd() * generated.sampleSources.length)];
        const at = START + Math.floor(rnd() * 7 * 24 * 60) * 60_000;
        const grouped = reachGroups(device, from, at);
        const plain = reach(device, from, at);
        expect(grouped.count).toBe("1");
        expect(grouped.at).toBe(plain.at);
        expect(grouped.results.map((cell) => cell.groups.map((g) => g.trace))).toEqual(plain.results.map((t) => [t]));
        expect(grouped.results.map((cell) => [cell.interface, cell.service, cell.to])).toEqual(plain.results.map((t) => [t.interface, t.service, t.to]));
      }),
      propertyParameters(BUDGETS.reachSingle),
    );
  }, BUDGETS.reachSingle.timeoutMs);
});

describe("Fleet reach", () => {
  test("is every device's reach over the same block, most exposed first, with the role and service filters applied", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, querySeed) => {
        const rnd = prng(querySeed);
        const devices: { id: string; name: string; compiled: CompiledModel; sources: readonly string[] }[] = [];
        for (let k = 0; k < 4; k++) {
          const generated = generateModel(seed + k, SMALL_SIZE);
          devices.push({ id: `id-${k}`, name: `device-${3 - k}`, compiled: compileModel(validated(generated.model)), sources: generated.sampleSources });
        }
        const block = randomBlock(devices[0].sources, rnd);
        const at = new Date(START + Math.floor(rnd() * 7 * 24 * 60) * 60_000).toISOString();
        const roles = rnd() < 0.5 ? (["wan", "dmz"] as const) : [];
        const services = rnd() < 0.5 ? ["https", "tcp/22", "icmp/echo"] : [];
        const fleet = fleetReach(devices, block, { at, roles: [...roles], services });
        const expected = devices.flatMap((d) =>
          reachGroups(d.compiled, block, at, { roles: [...roles], services }).results.flatMap((cell) =>
            cell.groups.map((g) => JSON.stringify([d.id, cell.interface, cell.service, g.sources, g.outcome, g.layer, g.ruleId, g.eligibleAccounts])),
          ),
        );
        expect(fleet.rows.map((r) => JSON.stringify([r.deviceId, r.interface, r.service, r.sources, r.outcome, r.layer, r.ruleId, r.eligibleAccounts])).sort()).toEqual(expected.sort());
        for (const row of fleet.rows) {
          if (roles.length > 0) expect(roles as readonly string[]).toContain(row.role);
          if (services.length > 0) expect(["https", "ssh", "ping"]).toContain(row.service);
        }
        const ranks = fleet.rows.map((r) => ["silent", "refused", "answered", "login-denied", "login-mfa", "login-password"].indexOf(r.outcome));
        expect(ranks).toEqual([...ranks].sort((a, b) => b - a));
      }),
      propertyParameters(BUDGETS.fleet),
    );
  }, BUDGETS.fleet.timeoutMs);
});

describe("Sources people type", () => {
  test.each([
    ["203.0.113.0/33", /wider than IPv4 allows: a prefix length is \/0 to \/32/], // RFC 4632 §3.1: IPv4 prefixes are /0–/32
    ["2001:db8::/129", /wider than IPv6 allows: a prefix length is \/0 to \/128/], // RFC 4291 §2.3: IPv6 prefixes are /0–/128
    ["203.0.113.7/24", /host bits set; the block is 203\.0\.113\.0\/24/], // RFC 4632 §3.1: the network is the address with the host bits cleared
    ["10.0.0/8", /not an IPv4 address/],
    ["203.0.113.0/-1", /invalid prefix length/],
  ])("%s is refused in words", (text, message) => {
    expect(() => parseSource(text)).toThrow(message);
  });

  test("IPv6 blocks are read case-insensitively and written in RFC 5952 form", () => {
    // RFC 5952 §4.2–4.3: lower case, "::" for the longest run of zero groups.
    expect(parseSource("2001:DB8:0:0::/64").text).toBe("2001:db8::/64");
    expect(parseSource("203.0.113.7")).toMatchObject({ single: true, text: "203.0.113.7", prefix: 32 });
  });
});
