// Expectations (server/engine/expectations.ts): the file format, and checking against `trace`.
// Every failing expectation's witness is replayed with `trace`; every holding bound is probed
// at random sources, destinations and times. "Non-private" follows PRODUCT.md §5; the test
// states the special-purpose blocks again from their RFCs instead of importing the engine's list.

import { readFileSync } from "node:fs";
import { join } from "node:path";
import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { checkExpectations, compileModel, expectationsFile, OUTCOMES, outcomeRank, parseExpectationsFile, parseModel, trace } from "#server/engine/index.ts";
import type { BoundExpectation, CompiledModel, DeviceModel, DeviceModelInput, Expectation, Outcome, ProbeExpectation } from "#server/engine/index.ts";
import { formatAddress, parseCidr, parseEntry } from "#server/engine/addresses.ts";
import type { Family } from "#server/engine/addresses.ts";
import { arrivals } from "#server/engine/analysis.ts";
import { formatWeekMinute, WEEK_MINUTES } from "#server/engine/schedules.ts";
import { instantOfWeekMinute } from "#server/engine/week-times.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";

const MODELS = join(import.meta.dirname, "../fixtures/models");

function validated(input: DeviceModelInput | unknown): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

const fixture = (name: string): CompiledModel => compileModel(validated(JSON.parse(readFileSync(join(MODELS, name), "utf8"))));

/** Special-purpose space that is not "non-private", from the RFCs that define it (RFC 6890 registry). */
const NOT_NON_PRIVATE = [
  "0.0.0.0/8", // RFC 1122 §3.2.1.3
  "10.0.0.0/8", // RFC 1918
  "100.64.0.0/10", // RFC 6598
  "127.0.0.0/8", // RFC 1122 §3.2.1.3
  "169.254.0.0/16", // RFC 3927
  "172.16.0.0/12", // RFC 1918
  "192.168.0.0/16", // RFC 1918
  "224.0.0.0/4", // RFC 5771
  "240.0.0.0/4", // RFC 1112 §4
  "fc00::/7", // RFC 4193
  "fe80::/10", // RFC 4291 §2.5.6
  "ff00::/8", // RFC 4291 §2.7
  "::1/128", // RFC 4291 §2.5.3
  "::/128", // RFC 4291 §2.5.2
].map((text) => parseCidr(text).range);

function isNonPrivate(address: string): boolean {
  const a = parseEntry(address).range;
  // RFC 4291 §2.4: global unicast is 2000::/3; everything else in IPv6 is not "non-private" here.
  if (a.family === 6 && (a.first >> 125n) !== 1n) return false;
  return !NOT_NON_PRIVATE.some((r) => r.family === a.family && a.first >= r.first && a.first <= r.last);
}

describe("the expectations file", () => {
  const file = {
    format: "sallyport-expectations",
    version: 1,
    expectations: [
      { id: "contractor-https", note: "The contractor logs in with a second factor", kind: "probe", from: "203.0.113.41", interface: "wan", service: "https", expect: "login-mfa" },
      { id: "no-internet-ssh", kind: "bound", sources: "non-private", interface: "wan", service: "ssh", atMost: "silent" },
      { id: "lab-quiet", kind: "bound", sources: ["192.0.2.0/24", "2001:db8::/48"], interface: "wan", service: "tcp/8443", atMost: "refused" },
    ],
  };

  test("a file reads with its defaults filled in, and writes back to the same file", () => {
    const parsed = parseExpectationsFile(file);
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    expect(parsed.expectations[0]).toMatchObject({ when: "all-week", note: "The contractor logs in with a second factor" });
    expect(parsed.expectations[1]).toMatchObject({ note: "" });
    const again = parseExpectationsFile(JSON.parse(JSON.stringify(expectationsFile(parsed.expectations, "kd-router"))));
    expect(again).toEqual(parsed);
  });

  test("malformed files are refused with the path of every problem", () => {
    const bad = {
      ...file,
      expectations: [
        { ...file.expectations[0], from: "203.0.113.0/24" },
        { ...file.expectations[1], atMost: "loud" },
        { ...file.expectations[2], id: "contractor-https", sources: ["192.0.2.300/24"] },
        { ...file.expectations[0], id: "x", kind: "guess" },
        { ...file.expectations[0], id: "y", when: "someday", extra: 1 },
      ],
    };
    const parsed = parseExpectationsFile(bad);
    expect(parsed.ok).toBe(false);
    if (parsed.ok) return;
    const paths = parsed.errors.map((e) => e.path);
    expect(paths).toEqual(expect.arrayContaining(["expectations[0].from", "expectations[1].atMost", "expectations[2].sources[0]", "expectations[3].kind", "expectations[4].when", "expectations[4]"]));
    // Duplicate ids are refused once every entry is well formed.
    const dup = parseExpectationsFile({ ...file, expectations: [file.expectations[0], { ...file.expectations[1], id: "contractor-https" }] });
    expect(dup.ok ? [] : dup.errors).toEqual([{ path: "expectations[1].id", message: '"contractor-https" is used by an earlier expectation' }]);
    expect(parseExpectationsFile({ ...file, format: "other" }).ok).toBe(false);
    expect(parseExpectationsFile({ ...file, version: 2 }).ok).toBe(false);
    expect(parseExpectationsFile([]).ok).toBe(false);
  });
});

describe("checking expectations", () => {
  test("on a small office router: what holds, what fails with a witness `trace` replays, and what cannot be checked", () => {
    const device = fixture("kestrel-dental.json");
    const parsed = parseExpectationsFile({
      format: "sallyport-expectations",
      version: 1,
      expectations: [
        // kdit (TOTP) may log in from it-contractor, but "admin" (no second factor, no login sources) may too: a password alone.
        { id: "contractor-mfa", kind: "probe", from: "203.0.113.41", interface: "wan", service: "https", expect: "login-mfa" },
        { id: "contractor-login", kind: "probe", from: "203.0.113.41", interface: "wan", service: "https", when: "tue 10:00", expect: "login-password" },
        { id: "no-internet-ssh", kind: "bound", sources: "non-private", interface: "wan", service: "ssh", atMost: "silent" },
        { id: "no-internet-login", kind: "bound", sources: "non-private", interface: "wan", service: "https", atMost: "login-denied" },
        { id: "gone", kind: "probe", from: "203.0.113.41", interface: "dmz", service: "https", expect: "silent" },
      ],
    });
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
    const results = checkExpectations(device, parsed.expectations);
    expect(results.map((r) => r.status)).toEqual(["fails", "holds", "holds", "fails", "unknown"]);
    for (const r of results.filter((x) => x.status === "fails")) {
      const w = r.witness;
      expect(w, r.id).toBeDefined();
      if (w === undefined) continue;
      expect(trace(device, w).outcome).toBe(w.outcome);
    }
    expect(results[0].words).toContain("Login with password only");
    expect(results[3].witness?.from).toBe("203.0.113.50"); // a documentation address (RFC 5737) is preferred as the witness
    expect(results[3].words).toMatch(/non-private sources get more than Login shown, refused on wan https, up to Login with password only/);
    expect(results[4].words).toContain('unknown interface "dmz"');
  });

  test("probe expectations: the traced outcome holds, any other fails, and the witness is a probe that gets what it says", { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.integer({ min: 0, max: 2 ** 30 }), fc.boolean(), (seed, pickSeed, allWeek) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const device = compileModel(validated(generated.model));
        const random = prng(pickSeed);
        const pick = <T,>(xs: readonly T[]): T => xs[Math.floor(random() * xs.length)];
        const from = pick(generated.sampleSources);
        const face = pick(device.model.interfaces).name;
        const service = pick(["ssh", "https", "ping", "snmp", "webconsole", "tcp/8080"]);
        const minute = Math.floor(random() * WEEK_MINUTES);
        const when = allWeek ? "all-week" : formatWeekMinute(minute);
        const at = (m: number) => instantOfWeekMinute(device, m);
        const outcomes = allWeek ? device.week.slices.map((s) => trace(device, { from, interface: face, service, at: at(s.start) }).outcome) : [trace(device, { from, interface: face, service, at: at(minute) }).outcome];
        const make = (expectOutcome: Outcome): ProbeExpectation => ({ id: "p", note: "", kind: "probe", from, interface: face, service, when, expect: expectOutcome });
        for (const outcome of OUTCOMES) {
          const [result] = checkExpectations(device, [make(outcome)]);
          expect(result.holds).toBe(outcomes.every((o) => o === outcome));
          if (!result.holds) {
            const w = result.witness;
            if (w === undefined) throw new Error("a failing expectation has a witness");
            const traced = trace(device, w);
            expect(traced.outcome).toBe(w.outcome);
            expect(w.outcome).not.toBe(outcome);
            expect(w.from).toBe(from);
          }
        }
      }),
      propertyParameters({ numRuns: 60, timeoutMs: 60_000 }),
    );
  });

  test("bounds are exact: a failing bound's witness gets more than the bound from `trace`; a holding one holds at random probes everywhere", { timeout: 90_000 }, () => {
    const seen = { holds: 0, fails: 0, probes: 0 };
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.integer({ min: 0, max: 2 ** 30 }), fc.boolean(), (seed, pickSeed, nonPrivate) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const device = compileModel(validated(generated.model));
        const random = prng(pickSeed);
        const pick = <T,>(xs: readonly T[]): T => xs[Math.floor(random() * xs.length)];
        const iface = Math.floor(random() * device.model.interfaces.length);
        const face = device.model.interfaces[iface].name;
        const service = pick(["ssh", "https", "ping", "snmp", "webconsole", "tcp/8080"]);
        // A few CIDRs around the model's entries (RFC 4632 blocks), or every non-private source.
        const cidrs = Array.from({ length: 1 + Math.floor(random() * 3) }, () => {
          const a = parseEntry(pick(generated.sampleSources)).range;
          const prefix = a.family === 4 ? 24 + Math.floor(random() * 9) : 116 + Math.floor(random() * 13);
          return `${formatAddress(a.family, a.first)}/${prefix}`;
        }).map((text) => {
          const r = parseCidr(text).range;
          return `${formatAddress(r.family, r.first)}/${text.split("/")[1]}`;
        });
        const atMost = pick(OUTCOMES);
        const bound: BoundExpectation = { id: "b", note: "", kind: "bound", sources: nonPrivate ? "non-private" : cidrs, interface: face, service, atMost };
        const inSources = (address: string): boolean => {
          if (nonPrivate) return isNonPrivate(address);
          const a = parseEntry(address).range;
          return cidrs.some((c) => {
            const r = parseCidr(c).range;
            return r.family === a.family && a.first >= r.first && a.first <= r.last;
          });
        };
        const [result] = checkExpectations(device, [bound]);
        if (!result.holds) {
          seen.fails++;
          const w = result.witness;
          if (w === undefined) throw new Error("a failing bound has a witness");
          const traced = trace(device, w);
          expect(traced.outcome).toBe(w.outcome);
          expect(outcomeRank(traced.outcome)).toBeGreaterThan(outcomeRank(atMost));
          expect(inSources(w.from), w.from).toBe(true);
          // The witness shows the worst outcome: the bound at that outcome holds.
          expect(checkExpectations(device, [{ ...bound, atMost: w.outcome }])[0].holds).toBe(true);
          return;
        }
        seen.holds++;
        // Random probes from the sources, to every destination the interface can send to, at random times.
        const destinations = arrivals(device).filter((a) => a.iface === iface).map((a) => device.addresses[a.to]);
        const near = generated.sampleSources.filter(inSources);
        /** A source of the family inside the bound's sources: a sample source, or a random address in one of its CIDRs (or anywhere, for non-private). */
        const sourceOf = (family: Family): string | undefined => {
          const sample = near.filter((x) => parseEntry(x).range.family === family);
          if (sample.length > 0 && random() < 0.5) return pick(sample);
          for (let attempt = 0; attempt < 20; attempt++) {
            let value = 0n;
            for (let k = 0; k < (family === 4 ? 1 : 4); k++) value = (value << 32n) | BigInt(Math.floor(random() * 2 ** 32));
            const blocks = nonPrivate ? [] : cidrs.map((c) => parseCidr(c).range).filter((r) => r.family === family);
            if (!nonPrivate && blocks.length === 0) return undefined;
            const block = blocks.length > 0 ? pick(blocks) : undefined;
            const address = formatAddress(family, block === undefined ? value : block.first + (value % (block.last - block.first + 1n)));
            if (inSources(address)) return address;
          }
          return undefined;
        };
        for (let i = 0; i < 30 && destinations.length > 0; i++) {
          const target = pick(destinations);
          const from = sourceOf(target.family);
          if (from === undefined) continue;
          const outcome = trace(device, { from, interface: face, service, to: target.text, at: instantOfWeekMinute(device, Math.floor(random() * WEEK_MINUTES)) }).outcome;
          expect(outcomeRank(outcome), `${from} → ${face} (${target.text}) ${service}`).toBeLessThanOrEqual(outcomeRank(atMost));
          seen.probes++;
        }
      }),
      propertyParameters({ numRuns: 80, timeoutMs: 90_000 }),
    );
    expect(seen.holds).toBeGreaterThan(10);
    expect(seen.fails).toBeGreaterThan(10);
    expect(seen.probes).toBeGreaterThan(200);
  });

  test("an expectation list checks in order and each id keeps its result", () => {
    const device = fixture("kestrel-dental.json");
    const list: Expectation[] = [
      { id: "a", note: "", kind: "bound", sources: ["192.168.10.0/24"], interface: "lan", service: "ssh", atMost: "login-password" },
      { id: "b", note: "", kind: "bound", sources: ["192.168.10.0/24"], interface: "lan", service: "ssh", atMost: "silent" },
    ];
    expect(checkExpectations(device, list).map((r) => [r.id, r.holds])).toEqual([
      ["a", true],
      ["b", false],
    ]);
  });
});
