// The effect of a change (server/engine/effect.ts) against brute force: every answer it gives
// is compared with `trace` on both documents — at random sources, cells and times, and at every
// range edge of the CIDRs it reports (RFC 4632: a CIDR block is [first, last]; the addresses
// just outside it are where an off-by-one shows). First match and the layer order are PRODUCT.md §3's.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { changeEffect, compileModel, effectSourcesPage, findings, instantOfWeekMinute, ProbeError, trace } from "#server/engine/index.ts";
import type { ChangeEffect, CompiledModel, DeviceModelInput, Expectation, Outcome } from "#server/engine/index.ts";
import { FAMILY, formatAddress, parseCidr, parseEntry } from "#server/engine/addresses.ts";
import type { Family } from "#server/engine/addresses.ts";
import { serviceKey } from "#server/engine/model.ts";
import { WEEK_MINUTES } from "#server/engine/schedules.ts";
import { parseWeekTime } from "#server/engine/week-times.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { MEDIUM, RULE_EDITS, validated, withRules } from "./random-edits.ts";
import type { Edit, Rule } from "./random-edits.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";

/** Edits of the kinds the editor makes, and ones prone to locking the operators out. */
const EDITS: Record<string, Edit> = {
  move: RULE_EDITS.move,
  switch: RULE_EDITS.switch,
  action: RULE_EDITS.action,
  remove: RULE_EDITS.remove,
  sources: RULE_EDITS.sources,
  listener: (m, pick) => ({ ...m, interfaces: m.interfaces.map((f, i) => (i === pick() % m.interfaces.length ? { ...f, listeners: f.listeners.slice(1) } : f)) }),
  account: (m, pick) => ({ ...m, accounts: m.accounts.map((a, i) => (i === pick() % m.accounts.length ? { ...a, enabled: !a.enabled } : a)) }),
  denyOperators: (m, pick) => {
    const rules = [...m.inboundRules];
    const rule: Rule = { id: "lock-test", interface: "any", sources: [...m.operatorNetworks], destinations: ["any"], services: ["any"], schedule: "all-week", action: "deny", enabled: true, note: "" };
    rules.splice(pick() % 3, 0, rule);
    return withRules(m, rules);
  },
};

/** One interface × one of its own addresses × one catalogue service: where the diff reports changes. */
interface Cell {
  readonly iface: string;
  readonly to: string;
  readonly family: Family;
  readonly service: string;
  /** protocol/port, so a probe names the same class in both revisions. */
  readonly key: string;
}

function cellsOf(...devices: CompiledModel[]): Cell[] {
  const out = new Map<string, Cell>();
  for (const device of devices) {
    device.interfaceAddresses.forEach((addresses, iface) => {
      for (const a of addresses) {
        const target = device.addresses[a];
        for (const s of device.catalogue) {
          const cell = { iface: device.model.interfaces[iface].name, to: target.text, family: target.family, service: s.name, key: serviceKey(s.protocol, s.port) };
          out.set(`${cell.iface}|${cell.to}|${cell.key}`, cell);
        }
      }
    });
  }
  return [...out.values()];
}

/** Brute force: the trace of one probe, silent where the revision has no such interface or address (as the diff counts it). */
function outcomeIn(device: CompiledModel, cell: Cell, from: string, minute: number): Outcome {
  if (!device.model.interfaces.some((f) => f.name === cell.iface)) return "silent";
  try {
    return trace(device, { from, interface: cell.iface, service: cell.key, to: cell.to, at: instantOfWeekMinute(device, minute) }).outcome;
  } catch (error) {
    if (error instanceof ProbeError) return "silent";
    throw error;
  }
}

/** Whether a week minute lies in [start, end) of a stretch written as week times (end may wrap past Sunday 24:00). */
function inStretch(minute: number, start: string, end: string): boolean {
  const from = parseWeekTime(start) ?? 0;
  const to = end === "sun 24:00" ? WEEK_MINUTES : (parseWeekTime(end) ?? 0);
  return from < to ? minute >= from && minute < to : minute >= from || minute < to;
}

function inCidrs(cidrs: readonly string[], address: string): boolean {
  const a = parseEntry(address).range;
  return cidrs.some((text) => {
    const r = parseCidr(text).range;
    return r.family === a.family && a.first >= r.first && a.first <= r.last;
  });
}

/** What the effect says one source gets at one cell and minute: the transition holding it, or none. */
function effectSays(effect: ChangeEffect, cell: Cell, from: string, minute: number): { before: Outcome; after: Outcome } | null {
  for (const c of effect.cells) {
    if (c.interface !== cell.iface || c.to !== cell.to || c.service !== cell.service || !inStretch(minute, c.start, c.end)) continue;
    for (const t of c.transitions) if (inCidrs(t.ranges, from)) return { before: t.before, after: t.after };
  }
  return null;
}

/** The edges of a CIDR: its first and last address and the neighbours just outside it. */
function edgesOf(cidr: string): string[] {
  const { family, first, last } = parseCidr(cidr).range;
  const out = [first, last];
  if (first > 0n) out.push(first - 1n);
  if (last < FAMILY[family].max) out.push(last + 1n);
  return out.map((value) => formatAddress(family, value));
}

function randomAddress(family: Family, random: () => number): string {
  if (family === 4) return formatAddress(4, BigInt(Math.floor(random() * 2 ** 32)));
  let value = 0n;
  for (let i = 0; i < 4; i++) value = (value << 32n) | BigInt(Math.floor(random() * 2 ** 32));
  return formatAddress(6, value);
}

const cutsOf = (before: CompiledModel, after: CompiledModel): number[] =>
  [...new Set([...before.week.slices, ...after.week.slices].map((s) => s.start % WEEK_MINUTES))].sort((a, b) => a - b);

describe("the effect of a change against brute force", () => {
  test("every reported CIDR edge and every random probe gets from `trace` on both documents what the effect says", { timeout: 120_000 }, () => {
    const seen = { changed: 0, edges: 0 };
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.constantFrom(...Object.keys(EDITS)), fc.integer({ min: 0, max: 2 ** 30 }), fc.boolean(), (seed, kind, editSeed, medium) => {
        const generated = generateModel(seed, medium ? MEDIUM : SMALL_SIZE);
        const model = validated(generated.model);
        const random = prng(editSeed);
        const pick = () => Math.floor(random() * 1e9);
        const before = compileModel(model);
        const after = compileModel(validated(EDITS[kind](model, pick)), { basis: before });
        const effect = changeEffect(before, after, { findings: { before: findings(before), after: findings(after) } });
        if (effect.changed) seen.changed++;
        const cells = cellsOf(before, after);
        const cuts = cutsOf(before, after);
        const check = (cell: Cell, from: string, minute: number) => {
          const b = outcomeIn(before, cell, from, minute);
          const a = outcomeIn(after, cell, from, minute);
          const said = effectSays(effect, cell, from, minute);
          const where = `${kind}: ${from} → ${cell.iface} (${cell.to}) ${cell.service} at minute ${minute}`;
          expect(said, where).toEqual(b === a ? null : { before: b, after: a });
        };
        // Every range edge of the reported CIDRs (the first few of each transition), at the start and the last minute of its stretch.
        for (const c of effect.cells) {
          const cell = cells.find((x) => x.iface === c.interface && x.to === c.to && x.service === c.service);
          expect(cell, `${c.interface} ${c.to} ${c.service} is a cell of either revision`).toBeDefined();
          if (cell === undefined) continue;
          const start = parseWeekTime(c.start) ?? 0;
          const end = c.end === "sun 24:00" ? WEEK_MINUTES : (parseWeekTime(c.end) ?? 0);
          const lastMinute = (end - 1 + WEEK_MINUTES) % WEEK_MINUTES;
          for (const t of c.transitions) {
            for (const cidr of t.ranges.slice(0, 3)) {
              for (const edge of edgesOf(cidr)) {
                check(cell, edge, start);
                check(cell, edge, lastMinute);
                seen.edges++;
              }
            }
          }
        }
        // Random probes: sources near the model's entries and anywhere, random cells and stretches.
        for (let i = 0; i < 25; i++) {
          const cell = cells[pick() % cells.length];
          const near = generated.sampleSources.filter((s) => parseEntry(s).range.family === cell.family);
          const from = i % 3 === 2 || near.length === 0 ? randomAddress(cell.family, random) : near[pick() % near.length];
          check(cell, from, cuts[pick() % cuts.length]);
        }
      }),
      propertyParameters({ numRuns: 80, timeoutMs: 120_000 }),
    );
    // Not vacuous: edits changed outcomes and their edges were traced.
    expect(seen.changed).toBeGreaterThan(15);
    expect(seen.edges).toBeGreaterThan(200);
  });

  test("a source is in a before → after group exactly when `trace` shows it making that move somewhere", { timeout: 120_000 }, () => {
    let checked = 0;
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.constantFrom(...Object.keys(EDITS)), fc.integer({ min: 0, max: 2 ** 30 }), (seed, kind, editSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const model = validated(generated.model);
        const random = prng(editSeed);
        const pick = () => Math.floor(random() * 1e9);
        const before = compileModel(model);
        const after = compileModel(validated(EDITS[kind](model, pick)));
        const effect = changeEffect(before, after);
        const cells = cellsOf(before, after);
        const cuts = cutsOf(before, after);
        // Sources: an edge of a group's first CIDR (inside and just outside), and one sample source.
        const candidates = effect.groups.flatMap((g) => (g.sources.items.length === 0 ? [] : edgesOf(g.sources.items[pick() % g.sources.items.length])));
        const sources = [...candidates.slice(0, 2), generated.sampleSources[pick() % generated.sampleSources.length]];
        const full = new Map(effect.groups.map((g) => [g.key, effectSourcesPage(effect, g.key, 0, 1000).items]));
        for (const from of sources) {
          const family = parseEntry(from).range.family;
          const moves = new Set<string>();
          for (const cell of cells) {
            if (cell.family !== family) continue;
            for (const minute of cuts) {
              const b = outcomeIn(before, cell, from, minute);
              const a = outcomeIn(after, cell, from, minute);
              if (b !== a) moves.add(`${b}>${a}`);
            }
          }
          for (const g of effect.groups) expect(inCidrs(full.get(g.key) ?? [], from), `${from} in ${g.key}`).toBe(moves.has(g.key));
          if (moves.size > 0) checked++;
          // Every move traced has its group.
          for (const move of moves) expect(full.has(move), move).toBe(true);
        }
        // Counts are the size of the union of each group's CIDRs (RFC 4632: a /n holds 2^(bits−n) addresses).
        for (const g of effect.groups) {
          const size = (full.get(g.key) ?? []).reduce((n, cidr) => {
            const r = parseCidr(cidr).range;
            return n + (r.last - r.first + 1n);
          }, 0n);
          expect(g.count).toBe(size.toString());
        }
      }),
      propertyParameters({ numRuns: 40, timeoutMs: 120_000 }),
    );
    // Not vacuous: many of the sources traced did move somewhere.
    expect(checked).toBeGreaterThan(20);
  });

  test("work-from addresses that lose every login on an interface and service are named, exactly as `trace` sees it", { timeout: 120_000 }, () => {
    let losses = 0;
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.constantFrom("denyOperators", "account", "listener", "switch", "action"), fc.integer({ min: 0, max: 2 ** 30 }), (seed, kind, editSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const model = validated(generated.model);
        const random = prng(editSeed);
        const pick = () => Math.floor(random() * 1e9);
        const before = compileModel(model);
        const after = compileModel(validated(EDITS[kind](model, pick)));
        // Where one works from: an address of the operator network, and a sample source.
        const operators = before.addressSetOf(model.operatorNetworks[0]);
        const first = operators.v4.length > 0 ? formatAddress(4, operators.v4[0]) : operators.v6.length > 0 ? formatAddress(6, operators.v6[0]) : generated.sampleSources[0];
        const workFrom = [first, generated.sampleSources[pick() % generated.sampleSources.length]];
        const effect = changeEffect(before, after, { workFrom });
        const reported = (place: string, from: string) =>
          effect.workFrom.some((loss) => loss.services.some((s) => `${s.interface}|${s.service}` === place) && inCidrs(loss.sources, from));
        // Brute force: per source, interface and login service, a login (second factor or password) at any destination and time.
        const loginsOf = (device: CompiledModel, from: string): Set<string> => {
          const out = new Set<string>();
          const family = parseEntry(from).range.family;
          for (const face of device.model.interfaces) {
            for (const s of device.catalogue) {
              if (s.kind !== "login") continue;
              for (const target of device.addresses) {
                if (target.family !== family) continue;
                for (const slice of device.week.slices.keys()) {
                  const at = instantOfWeekMinute(device, device.week.slices[slice].start);
                  const outcome = trace(device, { from, interface: face.name, service: s.name, to: target.text, at }).outcome;
                  if (outcome === "login-mfa" || outcome === "login-password") out.add(`${face.name}|${s.name}`);
                }
              }
            }
          }
          return out;
        };
        for (const from of workFrom) {
          const had = loginsOf(before, from);
          const has = loginsOf(after, from);
          for (const place of had) {
            const lost = !has.has(place);
            expect(reported(place, from), `${from} on ${place}`).toBe(lost);
            if (lost) losses++;
          }
        }
        expect(effect.blocking.some((b) => b.kind === "work-from")).toBe(effect.workFrom.length > 0);
        expect(effect.blocked).toBe(effect.blocking.length > 0);
      }),
      propertyParameters({ numRuns: 40, timeoutMs: 120_000 }),
    );
    expect(losses).toBeGreaterThan(3);
  });
});

describe("the effect in words, and what blocks a change", () => {
  // Invented edge router: the NOC (198.51.100.0/22, RFC 5737 space standing in for the internet) logs in over ssh on wan.
  const EDGE: DeviceModelInput = {
    schemaVersion: 2,
    device: { name: "ferry-edge", timezone: "UTC", defaultInbound: "deny" },
    interfaces: [{ name: "wan", role: "wan", addresses: ["192.0.2.1/24"], listeners: ["ssh", "https"] }],
    addresses: [
      { name: "noc", entries: ["198.51.100.0/22"] },
      { name: "scanners", entries: ["198.51.100.0/22", "203.0.113.0/24"] },
    ],
    inboundRules: [
      { id: "noc-ssh", interface: "wan", sources: ["noc"], destinations: ["any"], services: ["ssh"], action: "allow" },
      { id: "block-scanners", interface: "wan", sources: ["scanners"], destinations: ["any"], services: ["ssh"], action: "deny" },
    ],
    accounts: [{ name: "ops-ines", secondFactor: "totp" }],
    operatorNetworks: ["noc"],
  };

  test("moving a deny above the NOC's allow: the headline counts the addresses in words, the moved rule is named, the lockout guard blocks", () => {
    const before = compileModel(validated(EDGE));
    const rules = [...(EDGE.inboundRules ?? [])].reverse();
    const after = compileModel(validated({ ...EDGE, inboundRules: rules }), { basis: before });
    const effect = changeEffect(before, after, { workFrom: ["198.51.100.7"] });
    // RFC 4632: a /22 holds 2^10 = 1,024 addresses.
    expect(effect.headline).toBe('Locks out operator network “noc”; 1,024 addresses lose their login on wan ssh; nothing else changes');
    expect(effect.groups).toHaveLength(1);
    expect(effect.groups[0]).toMatchObject({ key: "login-mfa>silent", direction: "loses", count: "1024", sources: { items: ["198.51.100.0/22"], total: 1 } });
    expect(effect.totals).toEqual({ gains: "0", loses: "1024" });
    expect(effect.rules.moved).toEqual([{ id: "block-scanners", from: 2, to: 1, below: null, swappedWith: "noc-ssh" }]);
    // noc-ssh is never the first match any more.
    expect(effect.rules.shadowed).toEqual({ becomes: ["noc-ssh"], stops: [] });
    expect(effect.lockout).toEqual([expect.objectContaining({ operatorNetwork: "noc", sources: ["198.51.100.0/22"], services: [{ interface: "wan", service: "ssh" }] })]);
    expect(effect.workFrom).toEqual([{ sources: ["198.51.100.7/32"], services: [{ interface: "wan", service: "ssh" }], words: "198.51.100.7 loses its login on wan ssh." }]);
    expect(effect.findings.new.map((f) => f.code)).toEqual(expect.arrayContaining(["lockout", "shadowed-rule"]));
    expect(effect.blocking.map((b) => [b.kind, b.subject])).toEqual([
      ["lockout", "noc"],
      ["work-from", "198.51.100.7/32"],
    ]);
    expect(effect.blocked).toBe(true);
    // Plain JSON: it survives a round trip unchanged.
    expect(JSON.parse(JSON.stringify(effect))).toEqual(effect);
  });

  test("an expectation that held and no longer does blocks; one that starts to hold is marked fixed; unchanged revisions say nothing changes", () => {
    const before = compileModel(validated(EDGE));
    const after = compileModel(validated({ ...EDGE, inboundRules: [...(EDGE.inboundRules ?? [])].reverse() }));
    const expectations: Expectation[] = [
      { id: "noc-ssh", note: "", kind: "probe", from: "198.51.100.7", interface: "wan", service: "ssh", when: "all-week", expect: "login-mfa" },
      { id: "noc-quiet", note: "", kind: "bound", sources: ["198.51.100.0/22"], interface: "wan", service: "ssh", atMost: "silent" },
    ];
    const effect = changeEffect(before, after, { expectations });
    expect(effect.expectations.map((e) => [e.id, e.before.status, e.after.status, e.broken, e.fixed])).toEqual([
      ["noc-ssh", "holds", "fails", true, false],
      ["noc-quiet", "fails", "holds", false, true],
    ]);
    expect(effect.blocking.filter((b) => b.kind === "expectation").map((b) => b.subject)).toEqual(["noc-ssh"]);
    const same = changeEffect(before, compileModel(validated(EDGE)), { expectations });
    expect(same.headline).toBe("No source's outcome changes");
    expect(same.changed).toBe(false);
    expect(same.blocked).toBe(false);
    expect(same.findings.new).toEqual([]);
    expect(same.findings.unchanged.length).toBe(findings(before).length);
  });

  test("a work-from entry that is not an address is an input error", () => {
    const device = compileModel(validated(EDGE));
    expect(() => changeEffect(device, device, { workFrom: ["198.51.100.7", "home"] })).toThrow(ProbeError);
    expect(() => changeEffect(device, device, { workFrom: ["home"] })).toThrow(/workFrom\[0\]/);
  });

  test("pages of a group's sources come from the effect alone; offsets out of range come back inside", () => {
    const before = compileModel(validated({ ...EDGE, addresses: [{ name: "noc", entries: ["198.51.100.0/22", "198.51.100.200", "203.0.113.3", "203.0.113.9"] }, { name: "scanners", entries: ["198.51.100.0/22", "203.0.113.0/24"] }] }));
    const after = compileModel(validated({ ...before.model, inboundRules: [...before.model.inboundRules].reverse() }));
    const effect = changeEffect(before, after, { pageSize: 2 });
    const key = effect.groups[0].key;
    expect(effect.groups[0].sources).toEqual({ items: ["198.51.100.0/22", "203.0.113.3/32"], offset: 0, limit: 2, total: 3 });
    expect(effectSourcesPage(effect, key, 2, 2)).toEqual({ items: ["203.0.113.9/32"], offset: 2, limit: 2, total: 3 });
    expect(effectSourcesPage(effect, key, 99, 2).offset).toBe(2);
    expect(effectSourcesPage(JSON.parse(JSON.stringify(effect)) as ChangeEffect, key, 0, 10).items).toHaveLength(3);
  });
});
