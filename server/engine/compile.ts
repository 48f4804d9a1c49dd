// Compiling a validated model: names resolved to address sets and service keys, the week
// split into slices, each family's source space cut into elements, and first-match
// partitions computed per (interface, destination, service, slice) on demand and shared.

import { formatAddress, parseAddress, parseEntry } from "./addresses.ts";
import type { Address, Family } from "./addresses.ts";
import { ANY_SET, EMPTY_SET, contains, rangesOf, setFromRanges, unionSets } from "./address-sets.ts";
import type { AddressSet } from "./address-sets.ts";
import { Domain, lastAtMost, runValueAt, runsFromArray, zipRuns } from "./domain.ts";
import type { Runs, SparseBits } from "./domain.ts";
import { looksLikeAddressEntry, serviceKey } from "./model.ts";
import type { DeviceModel } from "./model.ts";
import {
  ALL_WEEK_SCHEDULE,
  ANSWERED,
  ANY_INTERFACE,
  ANY_SERVICE,
  BUILTIN_SERVICES,
  LOGIN_DENIED,
  LOGIN_MFA,
  LOGIN_PASSWORD,
  REFUSED,
  SILENT,
} from "./vocabulary.ts";
import type { CatalogueService, ServiceKind } from "./vocabulary.ts";
import { LocalClock, parseInstant, planWeek } from "./schedules.ts";
import type { WeekPlan } from "./schedules.ts";

/** An input error in a probe (not an outcome): unknown names, malformed addresses, mixed families. */
export class ProbeError extends Error {
  override name = "ProbeError";
}

export interface CompiledRule {
  /** Position in inboundRules (rule order). */
  readonly position: number;
  readonly id: string;
  readonly allow: boolean;
  readonly enabled: boolean;
  /** Interface index, or -1 for any. */
  readonly iface: number;
  readonly sources: AddressSet;
  readonly destinations: AddressSet;
  readonly anyService: boolean;
  readonly serviceKeys: ReadonlySet<string>;
  /** Schedule index, or -1 for always. */
  readonly schedule: number;
}

export interface DeviceAddress {
  readonly index: number;
  readonly family: Family;
  readonly value: bigint;
  /** RFC 5952 text for IPv6. */
  readonly text: string;
  readonly iface: number;
}

export interface CompiledAccount {
  readonly index: number;
  readonly name: string;
  readonly enabled: boolean;
  readonly secondFactor: boolean;
  /** Catalogue service names it may use; null = all. */
  readonly services: ReadonlySet<string> | null;
  readonly loginSources: AddressSet;
}

/** A service class: one catalogue service, or every port with no catalogue service ("other"). */
export interface ServiceClass {
  readonly index: number;
  readonly key: string;
  readonly service: CatalogueService | null;
  readonly kind: ServiceKind;
  readonly protocol: "tcp" | "udp" | "icmp";
}

/** Enabled rules that can match one (interface, destination, service class) at some time. */
export interface Candidates {
  /** Shared by every combination with the same list. */
  readonly id: number;
  readonly rules: Int32Array;
  readonly scheduled: boolean;
  /** The list's rules limited to a schedule, in list order (so a slice need not walk the whole list). */
  readonly scheduledRules: Int32Array;
}

/** The first-match partition of one family's sources for one list of active rules. */
export interface RulePartition {
  readonly id: number;
  readonly family: Family;
  /** Positions of the active rules it was computed from, in order. */
  readonly active: Int32Array;
  /** Run values: position of the first matching rule, or -1 where none matched. */
  readonly owner: Runs;
}

/** The outcome partition of one (interface, destination, service class, slice) combination. */
export interface OutcomePartition {
  readonly family: Family;
  /** Run values: outcome index. */
  readonly outcome: Runs;
}

/** Everything known about one combination, including which rule decides where. */
export interface EntryPartition extends OutcomePartition {
  readonly rules: RulePartition;
}

export interface ResolvedProbe {
  readonly from: Address;
  readonly iface: number;
  readonly serviceClass: ServiceClass;
  /** The service as the probe named it, or the catalogue name. */
  readonly serviceLabel: string;
  /** Device address index, or -1 when the interface has no address of the family (arrival fails). */
  readonly to: number;
  readonly atMs: number;
  readonly account: number;
}

export interface ProbeInput {
  readonly from: string;
  readonly interface: string;
  readonly service: string;
  readonly to?: string;
  /** ISO date-time text, epoch milliseconds or a Date; default now. */
  readonly at?: string | number | Date;
  readonly account?: string;
}

const PORT_SERVICE = /^(tcp|udp)\/([0-9]{1,5})$/;

export class CompiledModel {
  readonly clock: LocalClock;
  readonly week: WeekPlan;
  readonly catalogue: readonly CatalogueService[];
  readonly classes: readonly ServiceClass[];
  readonly rules: readonly CompiledRule[];
  readonly accounts: readonly CompiledAccount[];
  readonly addresses: readonly DeviceAddress[];
  /** Per interface: its device address indices in document order. */
  readonly interfaceAddresses: readonly (readonly number[])[];
  readonly listening: readonly ReadonlySet<string>[];
  readonly domains: Readonly<Record<Family, Domain>>;
  readonly defaultAllow: boolean;
  readonly unlistenedReset: boolean;

  private readonly interfaceIndex = new Map<string, number>();
  private readonly accountIndex = new Map<string, number>();
  private readonly classByKey = new Map<string, ServiceClass>();
  private readonly addressIndex = new Map<string, number>();
  private readonly addressSets = new Map<string, AddressSet>();
  private objectsByName: Map<string, DeviceModel["addresses"][number]> | null = null;
  private groupsByName: Map<string, DeviceModel["addressGroups"][number]> | null = null;
  private readonly ruleBits: readonly (readonly [SparseBits, SparseBits])[];
  /** Per family, per account: dense bitset of the elements inside its login sources. */
  private readonly accountBits: Readonly<Record<Family, readonly Int32Array[]>>;
  /** Indexed by (interface, destination, class). */
  private readonly candidates: (Candidates | undefined)[] = [];
  // Candidate lists by content hash; equal lists share one id (compared in full within a bucket).
  private readonly candidateLists = new Map<number, Array<{ id: number; rules: Int32Array }>>();
  private candidateListCount = 0;
  private readonly byInterface = new Map<number, number[]>();
  /** Per device address: whether each rule's destinations hold it (one byte per rule position). */
  private readonly destinationColumns = new Map<number, Uint8Array>();
  /** Per service class: whether each rule's services match it. */
  private readonly serviceColumns = new Map<number, Uint8Array>();
  private readonly partitions = new Map<string, RulePartition>();
  /** Indexed by (interface, destination, class, slice). */
  private readonly entries: (EntryPartition | undefined)[] = [];
  /** Rule partitions per (candidate list, family), by slice, so a slice need not rebuild the list's key. */
  private readonly slicePartitions = new Map<number, (RulePartition | undefined)[]>();
  private readonly loginRuns = new Map<string, Runs>();
  /** Outcome runs per (rule partition, class, listening). */
  private readonly outcomeCache = new Map<number, Runs>();
  private readonly scratch: Record<Family, { remaining: Int32Array; owner: Int32Array }>;

  constructor(readonly model: DeviceModel) {
    this.clock = new LocalClock(model.device.timezone);
    this.week = planWeek(model.schedules.map((s) => s.windows));
    this.defaultAllow = model.device.defaultInbound === "allow";
    this.unlistenedReset = model.device.unlistenedPort === "reset";

    this.catalogue = [
      ...BUILTIN_SERVICES,
      ...model.services.map((s): CatalogueService => ({ name: s.name, protocol: s.protocol, port: s.port, kind: s.kind, builtin: false })),
    ];
    const classes: ServiceClass[] = this.catalogue.map((service, index) => ({
      index,
      key: serviceKey(service.protocol, service.port),
      service,
      kind: service.kind,
      protocol: service.protocol,
    }));
    classes.push({ index: classes.length, key: "other", service: null, kind: "other", protocol: "tcp" });
    this.classes = classes;
    for (const c of classes) this.classByKey.set(c.key, c);

    model.interfaces.forEach((f, i) => this.interfaceIndex.set(f.name, i));
    model.accounts.forEach((a, i) => this.accountIndex.set(a.name, i));

    const addresses: DeviceAddress[] = [];
    this.interfaceAddresses = model.interfaces.map((f, i) =>
      f.addresses.map((text) => {
        const slash = text.indexOf("/");
        const a = parseAddress(slash < 0 ? text : text.slice(0, slash));
        const index = addresses.length;
        addresses.push({ index, family: a.family, value: a.value, text: formatAddress(a.family, a.value), iface: i });
        this.addressIndex.set(`${a.family}:${a.value}`, index);
        return index;
      }),
    );
    this.addresses = addresses;
    this.listening = model.interfaces.map((f) => new Set(f.listeners));

    const scheduleIndex = new Map(model.schedules.map((s, i) => [s.name, i]));
    this.rules = model.inboundRules.map((r, position): CompiledRule => {
      const keys = this.serviceKeysOf(r.services);
      return {
        position,
        id: r.id,
        allow: r.action === "allow",
        enabled: r.enabled,
        iface: r.interface === ANY_INTERFACE ? -1 : (this.interfaceIndex.get(r.interface) ?? -2),
        sources: this.setOfNames(r.sources),
        destinations: this.setOfNames(r.destinations),
        anyService: keys === null,
        serviceKeys: keys ?? new Set(),
        schedule: r.schedule === ALL_WEEK_SCHEDULE ? -1 : (scheduleIndex.get(r.schedule) ?? -1),
      };
    });
    this.accounts = model.accounts.map((a, index): CompiledAccount => ({
      index,
      name: a.name,
      enabled: a.enabled,
      secondFactor: a.secondFactor !== "none",
      services: a.services.length === 0 ? null : new Set(a.services),
      loginSources: a.loginSources.length === 0 ? ANY_SET : this.loginSetOf(a.loginSources),
    }));

    const domainFor = (family: Family): Domain =>
      new Domain(family, [
        ...this.rules.filter((r) => r.enabled).map((r) => rangesOf(r.sources, family)),
        ...this.accounts.map((a) => rangesOf(a.loginSources, family)),
      ]);
    this.domains = { 4: domainFor(4), 6: domainFor(6) };
    this.ruleBits = this.rules.map((r) => [
      this.domains[4].toBits(this.domains[4].toIndexRanges(r.sources.v4)),
      this.domains[6].toBits(this.domains[6].toIndexRanges(r.sources.v6)),
    ]);
    const denseBits = (family: Family, set: AddressSet): Int32Array => {
      const d = this.domains[family];
      const dense = new Int32Array(d.words);
      const sparse = d.toBits(d.toIndexRanges(rangesOf(set, family)));
      for (let k = 0; k < sparse.words.length; k++) dense[sparse.words[k]] |= sparse.masks[k];
      return dense;
    };
    this.accountBits = {
      4: this.accounts.map((a) => denseBits(4, a.loginSources)),
      6: this.accounts.map((a) => denseBits(6, a.loginSources)),
    };
    const scratchFor = (family: Family) => ({
      remaining: new Int32Array(this.domains[family].words),
      owner: new Int32Array(this.domains[family].size),
    });
    this.scratch = { 4: scratchFor(4), 6: scratchFor(6) };
  }

  // ---- name resolution ----

  /** The address set named by an address object, group or built-in. */
  addressSetOf(name: string): AddressSet {
    const cached = this.addressSets.get(name);
    if (cached !== undefined) return cached;
    let set: AddressSet;
    if (name === "any") set = ANY_SET;
    else if (name === "any4") set = { v4: ANY_SET.v4, v6: [] };
    else if (name === "any6") set = { v4: [], v6: ANY_SET.v6 };
    else {
      this.objectsByName ??= new Map(this.model.addresses.map((a) => [a.name, a]));
      this.groupsByName ??= new Map(this.model.addressGroups.map((g) => [g.name, g]));
      const object = this.objectsByName.get(name);
      if (object !== undefined) set = setFromRanges(object.entries.map((e) => parseEntry(e).range));
      else {
        const group = this.groupsByName.get(name);
        // Validation rules out unknown names and cycles; mark in-progress to stay safe anyway.
        this.addressSets.set(name, EMPTY_SET);
        set = group === undefined ? EMPTY_SET : this.setOfNames(group.members);
      }
    }
    this.addressSets.set(name, set);
    return set;
  }

  setOfNames(names: readonly string[]): AddressSet {
    return names.reduce((acc, n) => unionSets(acc, this.addressSetOf(n)), EMPTY_SET);
  }

  /** Login sources: names or literal entries. */
  loginSetOf(items: readonly string[]): AddressSet {
    const literals = items.filter((t) => looksLikeAddressEntry(t)).map((t) => parseEntry(t).range);
    const named = items.filter((t) => !looksLikeAddressEntry(t));
    return unionSets(setFromRanges(literals), this.setOfNames(named));
  }

  /** Service keys named by services, service groups and "any" (null = every protocol and port). */
  serviceKeysOf(names: readonly string[], seen: Set<string> = new Set()): Set<string> | null {
    const keys = new Set<string>();
    for (const n of names) {
      if (n === ANY_SERVICE) return null;
      if (seen.has(n)) continue;
      seen.add(n);
      const service = this.catalogue.find((s) => s.name === n);
      if (service !== undefined) {
        keys.add(serviceKey(service.protocol, service.port));
        continue;
      }
      const group = this.model.serviceGroups.find((g) => g.name === n);
      if (group === undefined) continue;
      const inner = this.serviceKeysOf(group.members, seen);
      if (inner === null) return null;
      for (const k of inner) keys.add(k);
    }
    return keys;
  }

  // ---- probes ----

  interfaceOf(name: string): number {
    const i = this.interfaceIndex.get(name);
    if (i === undefined) throw new ProbeError(`unknown interface "${name}"`);
    return i;
  }

  accountOf(name: string): number {
    const i = this.accountIndex.get(name);
    if (i === undefined) throw new ProbeError(`unknown account "${name}"`);
    return i;
  }

  /** A catalogue name, or tcp/PORT, udp/PORT, icmp/echo. */
  serviceClassOf(text: string): ServiceClass {
    const named = this.catalogue.findIndex((s) => s.name === text);
    if (named >= 0) return this.classes[named];
    if (text === "icmp/echo") return this.classes[BUILTIN_SERVICES.findIndex((s) => s.protocol === "icmp")];
    const m = PORT_SERVICE.exec(text);
    if (m !== null) {
      const port = Number(m[2]);
      if (port < 1 || port > 65535 || m[2].startsWith("0")) throw new ProbeError(`"${text}" has an invalid port (1-65535)`);
      const found = this.classByKey.get(text);
      if (found !== undefined) return found;
      return { ...this.classes[this.classes.length - 1], protocol: m[1] as "tcp" | "udp" };
    }
    throw new ProbeError(`unknown service "${text}" (a catalogue name, tcp/PORT, udp/PORT or icmp/echo)`);
  }

  deviceAddressOf(address: Address): number {
    return this.addressIndex.get(`${address.family}:${address.value}`) ?? -1;
  }

  /** Validates the whole probe first (input errors throw ProbeError), then resolves it. */
  resolveProbe(probe: ProbeInput, nowMs: number = Date.now()): ResolvedProbe {
    const iface = this.interfaceOf(probe.interface);
    const serviceClass = this.serviceClassOf(probe.service);
    const from = parseProbeAddress(probe.from, "from");
    let to = -1;
    if (probe.to !== undefined && probe.to !== "") {
      const target = parseProbeAddress(probe.to, "to");
      if (target.family !== from.family) throw new ProbeError(`"from" and "to" are in different families`);
      to = this.deviceAddressOf(target);
      if (to < 0) throw new ProbeError(`"${probe.to}" is not an address of the device`);
    }
    const account = probe.account !== undefined && probe.account !== "" ? this.accountOf(probe.account) : -1;
    const atMs = this.instantOf(probe.at, nowMs);
    // Arrival needs an address of the family on this interface; `to` may belong to another interface.
    const first = this.interfaceAddresses[iface].find((a) => this.addresses[a].family === from.family);
    if (first === undefined) to = -1;
    else if (to < 0) to = first;
    return { from, iface, serviceClass, serviceLabel: probe.service, to, atMs, account };
  }

  instantOf(at: string | number | Date | undefined, nowMs: number): number {
    if (at === undefined || at === "") return nowMs;
    if (typeof at === "number") return at;
    if (at instanceof Date) return at.getTime();
    const ms = parseInstant(at, this.model.device.timezone);
    if (ms === null) throw new ProbeError(`"${at}" is not an ISO 8601 date-time`);
    return ms;
  }

  sliceAt(ms: number): number {
    return this.week.sliceAt[this.clock.weekMinute(ms)];
  }

  // ---- partitions ----

  /** Enabled rules that can match (interface, destination, service class) at some time, in order. */
  candidateRules(iface: number, to: number, cls: number): Candidates {
    const key = (iface * this.addresses.length + to) * this.classes.length + cls;
    const cached = this.candidates[key];
    if (cached !== undefined) return cached;
    const services = this.serviceColumn(cls);
    const destinations = this.destinationColumn(to);
    const list: number[] = [];
    const scheduledList: number[] = [];
    for (const position of this.rulesOnInterface(iface)) {
      if (services[position] === 0 || destinations[position] === 0) continue;
      list.push(position);
      if (this.rules[position].schedule >= 0) scheduledList.push(position);
    }
    const rules = Int32Array.from(list);
    const result: Candidates = { id: this.candidateListId(rules), rules, scheduled: scheduledList.length > 0, scheduledRules: Int32Array.from(scheduledList) };
    this.candidates[key] = result;
    return result;
  }

  /** Equal lists (e.g. two services named by the same rules) share one id, so their partitions are shared. */
  private candidateListId(rules: Int32Array): number {
    let hash = 0x811c9dc5 ^ rules.length;
    for (let i = 0; i < rules.length; i++) hash = Math.imul(hash ^ rules[i], 0x01000193);
    const bucket = this.candidateLists.get(hash);
    const same = bucket?.find((entry) => entry.rules.length === rules.length && entry.rules.every((value, i) => value === rules[i]));
    if (same !== undefined) return same.id;
    const id = this.candidateListCount++;
    if (bucket === undefined) this.candidateLists.set(hash, [{ id, rules }]);
    else bucket.push({ id, rules });
    return id;
  }

  private serviceColumn(cls: number): Uint8Array {
    let column = this.serviceColumns.get(cls);
    if (column === undefined) {
      const classKey = this.classes[cls].key;
      column = Uint8Array.from(this.rules, (r) => (r.anyService || r.serviceKeys.has(classKey) ? 1 : 0));
      this.serviceColumns.set(cls, column);
    }
    return column;
  }

  private destinationColumn(to: number): Uint8Array {
    let column = this.destinationColumns.get(to);
    if (column === undefined) {
      const target = this.addresses[to];
      column = Uint8Array.from(this.rules, (r) => (contains(rangesOf(r.destinations, target.family), target.value) ? 1 : 0));
      this.destinationColumns.set(to, column);
    }
    return column;
  }

  /** Enabled rules for the interface or any, in order. */
  private rulesOnInterface(iface: number): number[] {
    let list = this.byInterface.get(iface);
    if (list === undefined) {
      list = this.rules.filter((r) => r.enabled && (r.iface === -1 || r.iface === iface)).map((r) => r.position);
      this.byInterface.set(iface, list);
    }
    return list;
  }

  /** First-match partition for (interface, destination, class, slice); shared between equal rule lists. */
  entry(iface: number, to: number, cls: number, slice: number): EntryPartition {
    const key = ((iface * this.addresses.length + to) * this.classes.length + cls) * this.week.slices.length + slice;
    const cached = this.entries[key];
    if (cached !== undefined) return cached;
    const family = this.addresses[to].family;
    const rules = this.rulePartitionAt(iface, to, cls, slice);
    const result: EntryPartition = { family, rules, outcome: this.outcomeRunsOf(rules, iface, cls) };
    this.entries[key] = result;
    return result;
  }

  /** The first-match partition of entry(iface, to, cls, slice).rules, without building or keeping the entry. */
  rulePartitionAt(iface: number, to: number, cls: number, slice: number): RulePartition {
    const family = this.addresses[to].family;
    return this.partitionsBySlice(family, this.candidateRules(iface, to, cls), [slice])[0];
  }

  /** The first-match partitions of (interface, destination, class) for every slice, in slice order. */
  weekRulePartitions(iface: number, to: number, cls: number): RulePartition[] {
    return this.partitionsBySlice(this.addresses[to].family, this.candidateRules(iface, to, cls), null);
  }

  /** Rule partitions of a candidate list for the given slices (null = all, in order). */
  private partitionsBySlice(family: Family, candidates: Candidates, slices: readonly number[] | null): RulePartition[] {
    const listKey = candidates.id * 2 + (family === 4 ? 0 : 1);
    let bySlice = this.slicePartitions.get(listKey);
    if (bySlice === undefined) {
      bySlice = new Array<RulePartition | undefined>(this.week.slices.length).fill(undefined);
      this.slicePartitions.set(listKey, bySlice);
    }
    const count = slices === null ? this.week.slices.length : slices.length;
    const out: RulePartition[] = new Array<RulePartition>(count);
    for (let k = 0; k < count; k++) {
      const slice = slices === null ? k : slices[k];
      let rules = bySlice[slice];
      if (rules === undefined) {
        rules = this.slicePartition(family, candidates, slice);
        bySlice[slice] = rules;
      }
      out[k] = rules;
    }
    return out;
  }

  /** Outcome runs of a rule partition on an interface for a class (shared per partition, class and listening). */
  private outcomeRunsOf(rules: RulePartition, iface: number, cls: number): Runs {
    const listening = this.classes[cls].service !== null && this.listening[iface].has(this.classes[cls].service?.name ?? "");
    const outcomeKey = (rules.id * this.classes.length + cls) * 2 + (listening ? 1 : 0);
    let outcome = this.outcomeCache.get(outcomeKey);
    if (outcome === undefined) {
      outcome = this.outcomeRuns(rules.family, rules, cls, listening);
      this.outcomeCache.set(outcomeKey, outcome);
    }
    return outcome;
  }

  /**
   * The distinct outcome partitions of (interface, destination, class) over the week, in
   * slice order: the same as outcomeOf for every slice with repeated outcomes left out
   * (equal outcomes are the same Runs object), without building an entry per slice.
   */
  weekOutcomes(iface: number, to: number, cls: number): OutcomePartition[] {
    const c = this.classes[cls];
    const listening = c.service !== null && this.listening[iface].has(c.service.name);
    const family = this.addresses[to].family;
    if (!listening && (c.kind === "echo" || !this.unlistenedReset)) return [family === 4 ? SILENT_V4 : SILENT_V6];
    const out: OutcomePartition[] = [];
    const seen = new Set<Runs>();
    for (const rules of this.weekRulePartitions(iface, to, cls)) {
      const outcome = this.outcomeRunsOf(rules, iface, cls);
      if (seen.has(outcome)) continue;
      seen.add(outcome);
      out.push({ family, outcome });
    }
    return out;
  }

  /** The rule partition of a candidate list in one slice: only the list's scheduled rules that are on. */
  private slicePartition(family: Family, candidates: Candidates, slice: number): RulePartition {
    let activeKey = `${family}|${candidates.id}`;
    let off: number[] = [];
    const state = this.week.slices[slice].active;
    if (candidates.scheduled) {
      // The partition depends only on which of the list's scheduled rules are off in this slice.
      off = [];
      for (const p of candidates.scheduledRules) {
        if (!state[this.rules[p].schedule]) off.push(p);
      }
      if (off.length > 0) activeKey += `|${off.join(",")}`;
    }
    let rules = this.partitions.get(activeKey);
    if (rules === undefined) {
      let active = candidates.rules;
      if (off.length > 0) {
        active = new Int32Array(active.length - off.length);
        let n = 0;
        for (const p of candidates.rules) {
          const s = this.rules[p].schedule;
          if (s < 0 || state[s]) active[n++] = p;
        }
      }
      rules = this.rulePartition(family, active, activeKey);
    }
    return rules;
  }

  /**
   * The outcome partition alone. When nothing listens and the probe would get no answer
   * anyway (ICMP echo, or unlistenedPort drop), every source is silent whatever the rules
   * say, so the rules are not evaluated at all.
   */
  outcomeOf(iface: number, to: number, cls: number, slice: number): OutcomePartition {
    const c = this.classes[cls];
    const listening = c.service !== null && this.listening[iface].has(c.service.name);
    if (!listening && (c.kind === "echo" || !this.unlistenedReset)) return this.addresses[to].family === 4 ? SILENT_V4 : SILENT_V6;
    return this.entry(iface, to, cls, slice);
  }

  /** Which rule is the first match for each element, by a bitset sweep over the rules in order. */
  rulePartition(family: Family, active: Int32Array, key: string = `${family}|${active.join(",")}`): RulePartition {
    const cached = this.partitions.get(key);
    if (cached !== undefined) return cached;
    const domain = this.domains[family];
    const { remaining, owner } = this.scratch[family];
    remaining.fill(-1);
    if ((domain.size & 31) !== 0) remaining[domain.words - 1] = (1 << (domain.size & 31)) - 1;
    owner.fill(-1);
    let live = domain.words;
    const familySlot = family === 4 ? 0 : 1;
    outer: for (let k = 0; k < active.length; k++) {
      const position = active[k];
      const bits = this.ruleBits[position][familySlot];
      const words = bits.words;
      const masks = bits.masks;
      for (let j = 0; j < words.length; j++) {
        const w = words[j];
        let fresh = remaining[w] & masks[j];
        if (fresh === 0) continue;
        remaining[w] ^= fresh;
        const base = w << 5;
        if (fresh === -1) owner.fill(position, base, base + 32);
        else {
          while (fresh !== 0) {
            const low = fresh & -fresh;
            owner[base + 31 - Math.clz32(low)] = position;
            fresh ^= low;
          }
        }
        if (remaining[w] === 0 && --live === 0) break outer;
      }
    }
    const partition: RulePartition = { id: this.partitions.size, family, active, owner: runsFromArray(owner, domain.size) };
    this.partitions.set(key, partition);
    return partition;
  }

  /** Login outcome per element for one service class: denied, second factor, or password alone. */
  loginClassRuns(family: Family, cls: number): Runs {
    const key = `${family}|${cls}`;
    const cached = this.loginRuns.get(key);
    if (cached !== undefined) return cached;
    const domain = this.domains[family];
    const name = this.classes[cls].service?.name ?? "";
    const values = new Int32Array(domain.size).fill(LOGIN_DENIED);
    for (const a of this.accounts) {
      if (!a.enabled || (a.services !== null && !a.services.has(name))) continue;
      const value = a.secondFactor ? LOGIN_MFA : LOGIN_PASSWORD;
      const idx = domain.toIndexRanges(rangesOf(a.loginSources, family));
      for (let i = 0; i < idx.length; i += 2) {
        for (let e = idx[i]; e <= idx[i + 1]; e++) if (values[e] < value) values[e] = value;
      }
    }
    const runs = runsFromArray(values, domain.size);
    this.loginRuns.set(key, runs);
    return runs;
  }

  private outcomeRuns(family: Family, rules: RulePartition, cls: number, listening: boolean): Runs {
    const allowed = (owner: number): boolean => (owner < 0 ? this.defaultAllow : this.rules[owner].allow);
    const kind = this.classes[cls].kind;
    if (!listening || kind !== "login") {
      const passed = !listening ? (kind === "echo" || !this.unlistenedReset ? SILENT : REFUSED) : ANSWERED;
      return zipRuns(rules.owner, CONSTANT_RUNS, (o) => (allowed(o) ? passed : SILENT));
    }
    return zipRuns(rules.owner, this.loginClassRuns(family, cls), (o, login) => (allowed(o) ? login : SILENT));
  }

  /** The service class for a service key in this model ("other" when no catalogue service has it). */
  classOfKey(key: string): number {
    return (this.classByKey.get(key) ?? this.classes[this.classes.length - 1]).index;
  }

  /**
   * The rule's sources as a sparse bitset over the family's elements (read-only; shared with
   * the partitions). The diff sweeps it over only the elements an edit can change.
   */
  ruleSourceBits(position: number, family: Family): SparseBits {
    return this.ruleBits[position][family === 4 ? 0 : 1];
  }

  /** Whether the rule's sources hold the element. */
  ruleCovers(position: number, family: Family, element: number): boolean {
    const bits = this.ruleBits[position][family === 4 ? 0 : 1];
    const k = lastAtMost(bits.words, element >>> 5, bits.words.length);
    return bits.words.length > 0 && bits.words[k] === element >>> 5 && ((bits.masks[k] >>> (element & 31)) & 1) === 1;
  }

  /** Element index of an address in its family's domain. */
  elementOf(address: Address): number {
    const d = this.domains[address.family];
    return address.family === 4 ? d.indexOfNumber(Number(address.value)) : d.indexOf(address.value);
  }

  /** Accounts eligible for a login from the element (enabled, allowed on the service, inside login sources). */
  eligibleAccounts(family: Family, element: number, serviceName: string, only: number): number[] {
    const out: number[] = [];
    const bits = this.accountBits[family];
    for (const a of this.accounts) {
      if (only >= 0 && a.index !== only) continue;
      if (!a.enabled || (a.services !== null && !a.services.has(serviceName))) continue;
      if (((bits[a.index][element >>> 5] >>> (element & 31)) & 1) === 0) continue;
      out.push(a.index);
    }
    return out;
  }

  /** Outcome index for an IPv4 source given as a number, for batch lookups. */
  lookupIPv4(entry: OutcomePartition, value: number): number {
    return runValueAt(entry.outcome, this.domains[4].indexOfNumber(value));
  }

  lookup(entry: OutcomePartition, value: bigint): number {
    return runValueAt(entry.outcome, this.domains[entry.family].indexOf(value));
  }

}

const CONSTANT_RUNS: Runs = { starts: Int32Array.of(0), values: Int32Array.of(0) };
const SILENT_V4: OutcomePartition = { family: 4, outcome: { starts: Int32Array.of(0), values: Int32Array.of(SILENT) } };
const SILENT_V6: OutcomePartition = { family: 6, outcome: { starts: Int32Array.of(0), values: Int32Array.of(SILENT) } };

export function parseProbeAddress(text: string, field: string): Address {
  try {
    return parseAddress(text);
  } catch (e) {
    throw new ProbeError(`${field}: ${e instanceof Error ? e.message : String(e)}`);
  }
}
