// Whole-model analyses shared by findings and diff: every probe class the model can see,
// which rules are ever the first match, and which sources have a login path.

import type { Family } from "./addresses.ts";
import { intersect, union } from "./address-sets.ts";
import type { AddressSet, Ranges } from "./address-sets.ts";
import type { CompiledModel, EntryPartition, RulePartition } from "./compile.ts";
import { LOGIN_MFA, LOGIN_PASSWORD } from "./vocabulary.ts";

export interface ProbeClass {
  readonly iface: number;
  readonly to: number;
  readonly cls: number;
  readonly slice: number;
}

/** Where a probe can arrive and be sent: an interface and a device address of a family it has. */
export interface Arrival {
  readonly iface: number;
  readonly to: number;
}

/**
 * The one enumeration of where probes go (PRODUCT.md §3): every interface × every device
 * address a probe arriving there may be sent to — any interface's address, but only of a
 * family the arrival interface has (layer 1: otherwise the probe never arrives). Every
 * analysis and finding walks this, so none can count a probe that `trace` would call silent
 * at arrival.
 */
export function arrivals(engine: CompiledModel): Arrival[] {
  const out: Arrival[] = [];
  for (let iface = 0; iface < engine.interfaceAddresses.length; iface++) {
    const families = new Set(engine.interfaceAddresses[iface].map((a) => engine.addresses[a].family));
    for (const target of engine.addresses) if (families.has(target.family)) out.push({ iface, to: target.index });
  }
  return out;
}

/**
 * Every (interface, destination, service class, slice) a probe can fall in once it has
 * arrived: the arrivals above × the catalogue plus "any other port" × the week's slices.
 */
export function* probeClasses(engine: CompiledModel, options: { loginOnly?: boolean } = {}): Generator<ProbeClass> {
  const slices = engine.week.slices.length;
  for (const { iface, to } of arrivals(engine)) {
    for (const c of engine.classes) {
      if (options.loginOnly === true && c.kind !== "login") continue;
      for (let slice = 0; slice < slices; slice++) yield { iface, to, cls: c.index, slice };
    }
  }
}

export function partitionsOf(engine: CompiledModel, options: { loginOnly?: boolean } = {}): EntryPartition[] {
  const out: EntryPartition[] = [];
  for (const p of probeClasses(engine, options)) out.push(engine.entry(p.iface, p.to, p.cls, p.slice));
  return out;
}

const firstOfListCache = new WeakMap<CompiledModel, { iface: number; to: number; cls: number }[]>();

/** The first (arrival, service class) of each distinct candidate list, in the order of probeClasses(). */
export function firstOfEachList(engine: CompiledModel): readonly { iface: number; to: number; cls: number }[] {
  const cached = firstOfListCache.get(engine);
  if (cached !== undefined) return cached;
  const seen = new Set<number>();
  const out: { iface: number; to: number; cls: number }[] = [];
  for (const { iface, to } of arrivals(engine)) {
    for (const c of engine.classes) {
      const list = engine.candidateRules(iface, to, c.index);
      const key = list.id * 2 + (engine.addresses[to].family === 4 ? 0 : 1);
      if (seen.has(key)) continue;
      seen.add(key);
      out.push({ iface, to, cls: c.index });
    }
  }
  firstOfListCache.set(engine, out);
  return out;
}

const distinctCache = new WeakMap<CompiledModel, RulePartition[]>();

/** The distinct first-match partitions over every probe class (computed once per compiled model). */
export function distinctRulePartitions(engine: CompiledModel): RulePartition[] {
  const cached = distinctCache.get(engine);
  if (cached !== undefined) return cached;
  // Walks the arrivals in the order of probeClasses(), each candidate list once (equal lists have equal partitions).
  const byId = new Map<number, RulePartition>();
  for (const { iface, to, cls } of firstOfEachList(engine)) {
    for (const rules of engine.weekRulePartitions(iface, to, cls)) byId.set(rules.id, rules);
  }
  const list = [...byId.values()];
  distinctCache.set(engine, list);
  return list;
}

/** Positions of rules that are the first match for at least one probe. */
export function firstMatchRules(engine: CompiledModel): Set<number> {
  const used = new Set<number>();
  for (const p of distinctRulePartitions(engine)) for (const v of p.owner.values) if (v >= 0) used.add(v);
  return used;
}

/**
 * Whether removing the rule changes no outcome: wherever it is the first match, the next match
 * (or the default) acts alike. Asked per rule, it stops at the first element that differs, so
 * rules that matter (nearly all) are settled at once.
 */
export function isRedundant(engine: CompiledModel, position: number): boolean {
  const allow = engine.rules[position].allow;
  for (const p of distinctRulePartitions(engine)) {
    const { starts, values } = p.owner;
    const at = p.active.indexOf(position);
    if (at < 0 || !values.includes(position)) continue;
    const later = p.active.subarray(at + 1);
    const size = engine.domains[p.family].size;
    for (let k = 0; k < values.length; k++) {
      if (values[k] !== position) continue;
      const end = k + 1 < starts.length ? starts[k + 1] : size;
      for (let element = starts[k]; element < end; element++) {
        const next = later.find((q) => engine.ruleCovers(q, p.family, element));
        const nextAllow = next === undefined ? engine.defaultAllow : engine.rules[next].allow;
        if (nextAllow !== allow) return false;
      }
    }
  }
  return true;
}

/** Sources (both families) that reach a login with an eligible account somewhere, at some time. */
export function loginReachable(engine: CompiledModel): AddressSet {
  const byFamily: Record<Family, Ranges> = { 4: [], 6: [] };
  const seen = new Set<unknown>();
  // Every login probe class (as partitionsOf with loginOnly), each distinct outcome once. A
  // login service nothing listens to has no login outcome, whether or not its rules are evaluated.
  const lists = new Set<number>();
  for (const { iface, to } of arrivals(engine)) {
    for (const c of engine.classes) {
      if (c.kind !== "login") continue;
      // The same candidate list, class and listening give the same outcomes.
      const listening = c.service !== null && engine.listening[iface].has(c.service.name) ? 1 : 0;
      const key = ((engine.candidateRules(iface, to, c.index).id * engine.classes.length + c.index) * 2 + listening) * 2 + (engine.addresses[to].family === 4 ? 0 : 1);
      if (lists.has(key)) continue;
      lists.add(key);
      for (const e of engine.weekOutcomes(iface, to, c.index)) {
        if (seen.has(e.outcome)) continue;
        seen.add(e.outcome);
        const d = engine.domains[e.family];
        byFamily[e.family] = union(byFamily[e.family], union(d.rangesWhere(e.outcome, LOGIN_MFA), d.rangesWhere(e.outcome, LOGIN_PASSWORD)));
      }
    }
  }
  return { v4: byFamily[4], v6: byFamily[6] };
}

export function intersectsSet(a: AddressSet, b: AddressSet): boolean {
  return intersect(a.v4, b.v4).length > 0 || intersect(a.v6, b.v6).length > 0;
}
