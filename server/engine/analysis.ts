// Whole-model analyses shared by findings and diff: every probe class the model can see,
// which rules are ever the first match, and which sources have a login path.

import type { Family } from "./addresses.ts";
import { intersect } from "./address-sets.ts";
import type { AddressSet, Ranges } from "./address-sets.ts";
import type { CompiledModel, EntryPartition, RulePartition } from "./compile.ts";
import type { Runs } from "./domain.ts";
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
  const deciding = new Uint8Array(engine.slotCount);
  for (const p of distinctRulePartitions(engine)) {
    const values = p.owner.values;
    for (let k = 0; k < values.length; k++) if (values[k] >= 0) deciding[values[k]] = 1;
  }
  const used = new Set<number>();
  for (let slot = 0; slot < deciding.length; slot++) if (deciding[slot] === 1) used.add(engine.positionOfSlot(slot));
  return used;
}

/**
 * Whether every element in [start, end) has its first match among active[from…] (or the
 * default) with the given action: a sweep of the later rules' bitsets over the run's words
 * only, stopping at the first rule of the other action that takes an element.
 */
function actsAlikeAfter(engine: CompiledModel, family: Family, active: Int32Array, from: number, start: number, end: number, allow: boolean, remaining: Int32Array): boolean {
  const firstWord = start >>> 5;
  const lastWord = (end - 1) >>> 5;
  let left = 0;
  for (let w = firstWord; w <= lastWord; w++) {
    const lo = w === firstWord ? start & 31 : 0;
    const hi = w === lastWord ? (end - 1) & 31 : 31;
    remaining[w - firstWord] = hi - lo === 31 ? -1 : ((1 << (hi - lo + 1)) - 1) << lo;
    left++;
  }
  for (let i = from; i < active.length; i++) {
    const position = engine.positionOfSlot(active[i]);
    const bits = engine.ruleSourceBits(position, family);
    const words = bits.words;
    let lo = 0;
    let hi = words.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (words[mid] < firstWord) lo = mid + 1;
      else hi = mid;
    }
    const same = engine.rules[position].allow === allow;
    for (let j = lo; j < words.length && words[j] <= lastWord; j++) {
      const w = words[j] - firstWord;
      const fresh = remaining[w] & bits.masks[j];
      if (fresh === 0) continue;
      if (!same) return false;
      remaining[w] ^= fresh;
      if (remaining[w] === 0 && --left === 0) return true;
    }
  }
  return engine.defaultAllow === allow;
}

const redundantCache = new WeakMap<CompiledModel, Set<number>>();

/**
 * Rules that are the first match somewhere and whose removal alone changes no outcome:
 * wherever such a rule is the first match, the next match (or the default) acts alike. One
 * walk over the distinct partitions; a rule is dropped at the first element where its next
 * match differs, so rules that matter (nearly all) cost a single check.
 */
export function redundantRules(engine: CompiledModel): Set<number> {
  const cached = redundantCache.get(engine);
  if (cached !== undefined) return cached;
  // Per slot: 0 never the first match, 1 the first match somewhere, 2 and removing it matters.
  const state = new Uint8Array(engine.slotCount);
  // Per partition, where each active rule sits in its list (reset after each partition).
  const place = new Int32Array(engine.slotCount).fill(-1);
  const remaining = new Int32Array(Math.max(engine.domains[4].words, engine.domains[6].words) + 1);
  for (const p of distinctRulePartitions(engine)) {
    const { starts, values } = p.owner;
    const size = engine.domains[p.family].size;
    const active = p.active;
    let placed = false;
    for (let k = 0; k < values.length; k++) {
      const slot = values[k];
      if (slot < 0 || state[slot] === 2) continue;
      state[slot] = 1;
      if (!placed) {
        for (let i = 0; i < active.length; i++) place[active[i]] = i;
        placed = true;
      }
      const end = k + 1 < starts.length ? starts[k + 1] : size;
      if (!actsAlikeAfter(engine, p.family, active, place[slot] + 1, starts[k], end, engine.rules[engine.positionOfSlot(slot)].allow, remaining)) state[slot] = 2;
    }
    if (placed) for (let i = 0; i < active.length; i++) place[active[i]] = -1;
  }
  const redundant = new Set<number>();
  for (let slot = 0; slot < state.length; slot++) if (state[slot] === 1) redundant.add(engine.positionOfSlot(slot));
  redundantCache.set(engine, redundant);
  return redundant;
}

/** Sources (both families) that reach a login with an eligible account somewhere, at some time. */
export function loginReachable(engine: CompiledModel): AddressSet {
  const byFamily: Record<Family, Runs[]> = { 4: [], 6: [] };
  const seen = new Set<Runs>();
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
        byFamily[e.family].push(e.outcome);
      }
    }
  }
  const login = (1 << LOGIN_MFA) | (1 << LOGIN_PASSWORD);
  const rangesOfFamily = (family: Family): Ranges => (byFamily[family].length === 0 ? [] : engine.domains[family].rangesWhereAny(byFamily[family], login));
  return { v4: rangesOfFamily(4), v6: rangesOfFamily(6) };
}

export function intersectsSet(a: AddressSet, b: AddressSet): boolean {
  return intersect(a.v4, b.v4).length > 0 || intersect(a.v6, b.v6).length > 0;
}
