// Trace and reach for a whole block of sources (a CIDR): the sources split into groups whose
// trace is the same apart from the source itself — the same outcome, deciding layer, rule and
// eligible accounts. The groups come from the compiled partitions, not from samples: within one
// source element the first-match owner and every account's login sources are constant, so one
// trace per group (of its first address) is exactly the trace of each member.

import { FAMILY, formatAddress, parseAddress, parseCidr } from "./addresses.ts";
import type { Family } from "./addresses.ts";
import { rangesToCidrs } from "./address-sets.ts";
import { ProbeError } from "./compile.ts";
import type { CompiledModel, ProbeInput, ResolvedProbe } from "./compile.ts";
import { lastAtMost } from "./domain.ts";
import { compiledOracle, traceResolved } from "./trace.ts";
import type { TraceResult } from "./trace.ts";
import { outcomeRank } from "./vocabulary.ts";
import type { CatalogueService, InterfaceRole, Layer, Outcome } from "./vocabulary.ts";

/** A source as asked: one address or a CIDR block, as a closed range of one family. */
export interface SourceRange {
  readonly family: Family;
  readonly first: bigint;
  readonly last: bigint;
  readonly prefix: number;
  /** RFC 5952 text: the address alone, or "network/prefix". */
  readonly text: string;
  /** True when the text was one address (no prefix length). */
  readonly single: boolean;
}

/** Whether the text asks about a block of sources (it has a prefix length) rather than one address. */
export function isSourceBlock(text: string): boolean {
  return text.includes("/");
}

/**
 * Parses a source: an address, or a CIDR whose prefix fits the family (/0–/32 for IPv4, /0–/128
 * for IPv6, RFC 4632 §3.1 and RFC 4291 §2.3) with no host bits set. Throws ProbeError quoting
 * the input: a prefix wider than the family, or host bits set (with the block meant).
 */
export function parseSource(text: string, field = "from"): SourceRange {
  const trimmed = text.trim();
  const slash = trimmed.indexOf("/");
  try {
    if (slash < 0) {
      const { range } = parseCidr(trimmed);
      return { family: range.family, first: range.first, last: range.last, prefix: FAMILY[range.family].bits, text: formatAddress(range.family, range.first), single: true };
    }
    const prefixText = trimmed.slice(slash + 1);
    const { family } = parseAddress(trimmed.slice(0, slash));
    const bits = FAMILY[family].bits;
    if (/^[0-9]+$/.test(prefixText) && Number(prefixText) > bits) {
      throw new ProbeError(`${field}: "${trimmed}" is wider than ${family === 4 ? "IPv4" : "IPv6"} allows: a prefix length is /0 to /${bits}`);
    }
    const parsed = parseCidr(trimmed);
    const { range } = parsed;
    const prefix = Number(prefixText);
    if (parsed.normalised !== undefined) throw new ProbeError(`${field}: "${trimmed}" has host bits set; the block is ${parsed.normalised}`);
    return { family: range.family, first: range.first, last: range.last, prefix, text: `${formatAddress(range.family, range.first)}/${prefix}`, single: false };
  } catch (error) {
    if (error instanceof ProbeError) throw error;
    throw new ProbeError(`${field}: ${error instanceof Error ? error.message : String(error)}`);
  }
}

/** Sources whose trace is the same apart from the source itself. */
export interface SourceGroup {
  /** The group's sources inside the asked block: a minimal CIDR list, ascending (RFC 4632). */
  readonly sources: readonly string[];
  /** How many addresses, in decimal (IPv6 counts exceed 2^53). */
  readonly count: string;
  /** The group's first address: `trace` is this source's trace. */
  readonly example: string;
  readonly outcome: Outcome;
  /** The layer that decided the outcome (the trace's last). */
  readonly layer: Layer;
  readonly ruleId: string | null;
  readonly eligibleAccounts: readonly string[];
  readonly trace: TraceResult;
}

/** A probe from a block of sources: one group per distinct answer, most exposed first. */
export interface TraceGroups {
  /** The block as normalised text. */
  readonly from: string;
  /** Addresses in the block, decimal. */
  readonly count: string;
  readonly interface: string;
  readonly service: string;
  readonly to: string | null;
  readonly at: string;
  readonly localTime: string;
  readonly groups: readonly SourceGroup[];
}

/** One interface × catalogue service of a reach over a block. */
export interface ReachCell {
  readonly interface: string;
  readonly role: InterfaceRole;
  readonly to: string | null;
  readonly service: string;
  readonly groups: readonly SourceGroup[];
}

export interface ReachGroups {
  readonly from: string;
  readonly count: string;
  readonly at: string;
  readonly localTime: string;
  readonly results: readonly ReachCell[];
}

/** One group of one interface × service, flat: what a reach table row and its CSV line show. */
export interface ReachGroupRow {
  readonly interface: string;
  readonly role: InterfaceRole;
  readonly to: string | null;
  readonly service: string;
  /** The group's sources inside the asked block (minimal CIDRs, ascending) and how many addresses. */
  readonly sources: readonly string[];
  readonly count: string;
  readonly outcome: Outcome;
  readonly layer: Layer;
  /** The deciding layer's words for the group's first address. */
  readonly detail: string;
  readonly ruleId: string | null;
  readonly eligibleAccounts: readonly string[];
}

/** A reach's rows in its order — interfaces as in the model, the catalogue's order, then each cell's groups — with each row's cell and group index. */
export function reachGroupRows(reach: ReachGroups): { row: ReachGroupRow; cell: number; group: number }[] {
  return reach.results.flatMap((cell, cellIndex) =>
    cell.groups.map((group, groupIndex) => ({
      cell: cellIndex,
      group: groupIndex,
      row: {
        interface: cell.interface,
        role: cell.role,
        to: cell.to,
        service: cell.service,
        sources: group.sources,
        count: group.count,
        outcome: group.outcome,
        layer: group.layer,
        detail: group.trace.layers[group.trace.layers.length - 1].detail,
        ruleId: group.ruleId,
        eligibleAccounts: group.eligibleAccounts,
      },
    })),
  );
}

/** Which cells a reach covers: interfaces by name or role, services by name or PROTOCOL/PORT (all when a list is absent or empty). */
export interface ReachFilter {
  readonly interfaces?: readonly string[];
  readonly roles?: readonly InterfaceRole[];
  readonly services?: readonly string[];
}

/** Whether a catalogue service is meant by a filter word: its name, its "tcp/443"-style key, or "icmp/echo" for ping. */
export function serviceMatches(service: CatalogueService, word: string): boolean {
  if (word === service.name) return true;
  if (service.protocol === "icmp") return word === "icmp/echo";
  return word === `${service.protocol}/${service.port}`;
}

/** The groups of one probe whose source is a block (the probe's `from` is ignored). */
function groupsOf(engine: CompiledModel, base: ResolvedProbe, source: SourceRange): SourceGroup[] {
  const oracle = compiledOracle(engine);
  const family = source.family;
  const traceOf = (value: bigint): TraceResult => traceResolved(engine, { ...base, from: { family, value } }, oracle);
  // Arrival fails for the whole family: one group, silent at arrival.
  if (base.to < 0) return [groupOf(family, [source.first, source.last], traceOf(source.first))];

  const cls = base.serviceClass;
  const entry = engine.entry(base.iface, base.to, cls.index, engine.sliceAt(base.atMs));
  const { starts, values } = entry.rules.owner;
  const domain = engine.domains[family];
  const bounds = domain.bounds;
  const serviceName = cls.service?.name ?? base.serviceLabel;
  // Past the rules, the answer depends on the accounts only where a login is presented.
  const listening = cls.service !== null && engine.listening[base.iface].has(cls.service.name);
  const presentsLogin = (slot: number): boolean => listening && cls.kind === "login" && (slot < 0 ? engine.defaultAllow : engine.rules[engine.positionOfSlot(slot)].allow);

  const byKey = new Map<string, bigint[]>();
  const add = (key: string, first: bigint, last: bigint): void => {
    const lo = first < source.first ? source.first : first;
    const hi = last > source.last ? source.last : last;
    const ranges = byKey.get(key);
    if (ranges === undefined) byKey.set(key, [lo, hi]);
    else if (ranges[ranges.length - 1] + 1n === lo) ranges[ranges.length - 1] = hi;
    else ranges.push(lo, hi);
  };
  const lastElement = domain.indexOf(source.last);
  let element = domain.indexOf(source.first);
  let run = lastAtMost(starts, element, starts.length);
  while (element <= lastElement) {
    const runEnd = run + 1 < starts.length ? starts[run + 1] : domain.size;
    const stop = Math.min(runEnd - 1, lastElement);
    const slot = values[run];
    if (!presentsLogin(slot)) add(`${slot}`, bounds[element], bounds[stop + 1] - 1n);
    else {
      for (let e = element; e <= stop; e++) {
        const eligible = engine.eligibleAccounts(family, e, serviceName, base.account);
        add(`${slot}|${eligible.join(",")}`, bounds[e], bounds[e + 1] - 1n);
      }
    }
    element = stop + 1;
    run++;
  }
  // Most exposed first; equals by their first address.
  const found = [...byKey.values()].map((ranges) => ({ first: ranges[0], group: groupOf(family, ranges, traceOf(ranges[0])) }));
  found.sort((a, b) => outcomeRank(b.group.outcome) - outcomeRank(a.group.outcome) || (a.first < b.first ? -1 : a.first > b.first ? 1 : 0));
  return found.map(({ group }) => group);
}

function groupOf(family: Family, ranges: readonly bigint[], trace: TraceResult): SourceGroup {
  let count = 0n;
  for (let i = 0; i < ranges.length; i += 2) count += ranges[i + 1] - ranges[i] + 1n;
  const deciding = trace.layers[trace.layers.length - 1];
  return {
    sources: rangesToCidrs(ranges, family),
    count: count.toString(),
    example: trace.from,
    outcome: trace.outcome,
    layer: deciding.layer,
    ruleId: trace.ruleId,
    eligibleAccounts: trace.eligibleAccounts,
    trace,
  };
}

function countOf(source: SourceRange): string {
  return (source.last - source.first + 1n).toString();
}

/**
 * Traces a probe whose `from` is an address or a block: one group per distinct answer, most
 * exposed first. The whole probe is validated first, as `trace` does (ProbeError).
 */
export function traceGroups(engine: CompiledModel, probe: ProbeInput, nowMs: number = Date.now()): TraceGroups {
  const source = parseSource(probe.from);
  const base = engine.resolveProbe({ ...probe, from: formatAddress(source.family, source.first) }, nowMs);
  const groups = groupsOf(engine, base, source);
  const first = groups[0].trace;
  return { from: source.text, count: countOf(source), interface: first.interface, service: first.service, to: first.to, at: first.at, localTime: first.localTime, groups };
}

/**
 * Reach from an address or a block: every interface × catalogue service (those the filter
 * keeps), each with its groups. A filter naming an interface the device lacks is an input error.
 */
export function reachGroups(engine: CompiledModel, from: string, at?: string | number | Date, filter: ReachFilter = {}, nowMs: number = Date.now()): ReachGroups {
  const source = parseSource(from);
  const atMs = engine.instantOf(at, nowMs);
  const example = formatAddress(source.family, source.first);
  const wantedInterfaces = filter.interfaces !== undefined && filter.interfaces.length > 0 ? new Set(filter.interfaces) : null;
  if (wantedInterfaces !== null) for (const name of wantedInterfaces) engine.interfaceOf(name);
  const roles = filter.roles !== undefined && filter.roles.length > 0 ? new Set(filter.roles) : null;
  const services = filter.services !== undefined && filter.services.length > 0 ? filter.services : null;
  const results: ReachCell[] = [];
  for (const f of engine.model.interfaces) {
    if (wantedInterfaces !== null && !wantedInterfaces.has(f.name)) continue;
    if (roles !== null && !roles.has(f.role)) continue;
    for (const service of engine.catalogue) {
      if (services !== null && !services.some((word) => serviceMatches(service, word))) continue;
      const base = engine.resolveProbe({ from: example, interface: f.name, service: service.name, at: atMs }, nowMs);
      const groups = groupsOf(engine, base, source);
      results.push({ interface: f.name, role: f.role, to: groups[0].trace.to, service: service.name, groups });
    }
  }
  return { from: source.text, count: countOf(source), at: new Date(atMs).toISOString(), localTime: engine.clock.localText(atMs), results };
}
