// The effect of a change, for a reviewer: who gains and who loses (from the diff, grouped by
// before → after across every interface × destination × service × stretch of the week, with
// distinct address counts, paged CIDR lists and a headline in words), what happened to the
// rules (added, removed, moved, fields changed; newly or no longer shadowed or redundant), the
// findings (new, resolved, unchanged), the lockout guard (operator networks that lose every
// login path; the addresses the author works from that lose a login), the expectations before
// and after, and what of all that blocks the change. Exact: built on diffModels and the
// outcome partitions, never on samples. The result is plain JSON.

import type { Family } from "./addresses.ts";
import { parseCidr, parseEntry } from "./addresses.ts";
import { collapse, countOf, intersect, rangesOf, rangesToCidrs, setFromRanges, subtract } from "./address-sets.ts";
import type { AddressSet, Ranges } from "./address-sets.ts";
import { arrivals } from "./analysis.ts";
import { ProbeError } from "./compile.ts";
import type { CompiledModel } from "./compile.ts";
import { diffModels } from "./diff.ts";
import type { DiffChange, LockoutEntry } from "./diff.ts";
import type { RegionTuning } from "./diff-regions.ts";
import { lastAtMost } from "./domain.ts";
import type { Runs } from "./domain.ts";
import { checkExpectations } from "./expectations.ts";
import type { Expectation, ExpectationResult } from "./expectations.ts";
import { findingKey } from "./finding-keys.ts";
import { findingsOf } from "./findings/index.ts";
import type { Finding } from "./findings/index.ts";
import { formatCount, pluralWord } from "./format.ts";
import { ruleChanges } from "./rule-changes.ts";
import type { RuleChanges } from "./rule-changes.ts";
import { LOGIN_MFA, OUTCOME_LABELS, outcomeRank } from "./vocabulary.ts";
import type { Outcome, Severity } from "./vocabulary.ts";

export interface EffectOptions {
  /** Addresses, CIDRs or ranges the author works from: losing a login there blocks the change. */
  readonly workFrom?: readonly string[];
  /** The device's expectations, checked on both revisions. */
  readonly expectations?: readonly Expectation[];
  /** Both revisions' findings, when the caller has them already (the device repository keeps them per revision). */
  readonly findings?: { readonly before: readonly Finding[]; readonly after: readonly Finding[] };
  /** CIDRs in the first page of each group's sources (default 20). */
  readonly pageSize?: number;
  /** Passed to the diff; tests use it to force its evaluation paths. */
  readonly tuning?: RegionTuning;
}

/** One page of a long list. */
export interface Page<T> {
  readonly items: readonly T[];
  readonly offset: number;
  readonly limit: number;
  readonly total: number;
}

export const DEFAULT_PAGE_SIZE = 20;

/** Items offset … offset + limit − 1 of a list, with where they sit in it. Offsets and limits out of range are brought inside. */
export function pageAt<T>(list: readonly T[], offset = 0, limit = DEFAULT_PAGE_SIZE): Page<T> {
  const size = Math.max(1, Math.min(1000, Math.floor(limit)));
  const start = Math.max(0, Math.min(Math.floor(offset), Math.max(0, list.length - 1)));
  return { items: list.slice(start, start + size), offset: start, limit: size, total: list.length };
}

export type EffectDirection = "gains" | "loses";

/** Where a group's move happens: one interface and service, at some of the device's addresses. */
export interface EffectPlace {
  readonly interface: string;
  readonly service: string;
  /** The device addresses (destinations) it happens at. */
  readonly to: readonly string[];
  /** False when it happens only in some stretches of the week. */
  readonly allWeek: boolean;
}

/** Every source that moves from one outcome to another somewhere. */
export interface EffectGroup {
  /** "before>after", e.g. "login-mfa>silent": names the group for paging its sources. */
  readonly key: string;
  readonly before: Outcome;
  readonly after: Outcome;
  /** By outcome order (OUTCOMES, least to most exposed): "gains" when the after outcome is more exposed. */
  readonly direction: EffectDirection;
  /** Distinct source addresses (IPv4 and IPv6 together), decimal. */
  readonly count: string;
  readonly words: string;
  readonly places: readonly EffectPlace[];
  /** The first page of the sources' minimal CIDR list (IPv4 first); effectSourcesPage gives the others. */
  readonly sources: Page<string>;
}

export interface EffectRules extends RuleChanges {
  /** Rule ids that are never the first match after the change and were before (or are new); and the reverse, for rules still there. */
  readonly shadowed: { readonly becomes: readonly string[]; readonly stops: readonly string[] };
  /** The same for rules whose removal would change no outcome. */
  readonly redundant: { readonly becomes: readonly string[]; readonly stops: readonly string[] };
}

/** A finding as the effect lists it: its key (finding-keys.ts) and how it reads. */
export interface FindingLine {
  readonly key: string;
  readonly code: string;
  readonly severity: Severity;
  readonly title: string;
}

export interface EffectLockout {
  readonly operatorNetwork: string;
  readonly detail: string;
  /** The network's addresses that had a login path and have none (minimal CIDRs). */
  readonly sources: readonly string[];
  /** Where they had a login the change took away. */
  readonly services: readonly { readonly interface: string; readonly service: string }[];
  readonly words: string;
}

/**
 * Work-from addresses that had a login on an interface and service (at some destination and
 * time) and have none there after, gathered per set of addresses that lose the same logins.
 */
export interface WorkFromLoss {
  /** The addresses that lose these logins (minimal CIDRs). */
  readonly sources: readonly string[];
  readonly services: readonly { readonly interface: string; readonly service: string }[];
  readonly words: string;
}

export interface ExpectationChange {
  readonly id: string;
  readonly kind: Expectation["kind"];
  readonly expectation: string;
  readonly before: ExpectationResult;
  readonly after: ExpectationResult;
  /** Held before and does not after: blocks the change. */
  readonly broken: boolean;
  /** Did not hold before and does after. */
  readonly fixed: boolean;
}

export interface Blocking {
  readonly kind: "lockout" | "work-from" | "expectation";
  /** The operator network, the work-from address, or the expectation id. */
  readonly subject: string;
  readonly words: string;
}

export interface ChangeEffect {
  readonly headline: string;
  /** Whether any source's outcome changes anywhere. */
  readonly changed: boolean;
  /** Distinct sources that gain, and that lose, on at least one interface, destination, service or time. */
  readonly totals: { readonly gains: string; readonly loses: string };
  /** Most exposed moves first. */
  readonly groups: readonly EffectGroup[];
  /** Per interface × destination × service × stretch of the week, the diff's transitions with full CIDR lists. */
  readonly cells: readonly DiffChange[];
  readonly rules: EffectRules;
  readonly findings: { readonly new: readonly Finding[]; readonly resolved: readonly Finding[]; readonly unchanged: readonly FindingLine[] };
  readonly lockout: readonly EffectLockout[];
  readonly workFrom: readonly WorkFromLoss[];
  readonly expectations: readonly ExpectationChange[];
  readonly blocking: readonly Blocking[];
  readonly blocked: boolean;
}

// ---------------------------------------------------------------------------------------------
// Address helpers

type Pairs = Record<Family, [bigint, bigint][]>;

const emptyPairs = (): Pairs => ({ 4: [], 6: [] });

function addCidrs(into: Pairs, cidrs: readonly string[]): void {
  for (const text of cidrs) {
    const { range } = parseCidr(text);
    into[range.family].push([range.first, range.last]);
  }
}

function setOf(pairs: Pairs): AddressSet {
  return { v4: collapse(pairs[4]), v6: collapse(pairs[6]) };
}

const cidrsOf = (set: AddressSet): string[] => rangesToCidrs(set.v6, 6, rangesToCidrs(set.v4, 4));
const sizeOf = (set: AddressSet): bigint => countOf(set.v4) + countOf(set.v6);
const overlaps = (a: AddressSet, b: AddressSet): boolean => intersect(a.v4, b.v4).length > 0 || intersect(a.v6, b.v6).length > 0;

const WHOLE_WEEK = { start: "mon 00:00", end: "sun 24:00" };

// ---------------------------------------------------------------------------------------------
// Words

const addressesText = (count: bigint): string => `${formatCount(count).text} ${pluralWord(count, { one: "address", other: "addresses" })}`;

/** The move in words, for one address and for several. */
function moveWords(before: Outcome, after: Outcome): { one: string; other: string } {
  const b = outcomeRank(before);
  const a = outcomeRank(after);
  const loginBefore = b >= LOGIN_MFA;
  const loginAfter = a >= LOGIN_MFA;
  if (loginBefore && !loginAfter) return { one: "loses its login", other: "lose their login" };
  if (!loginBefore && loginAfter) {
    return after === "login-mfa" ? { one: "gains a login with second factor", other: "gain a login with second factor" } : { one: "gains a login with a password alone", other: "gain a login with a password alone" };
  }
  if (loginBefore && loginAfter) {
    return after === "login-mfa" ? { one: "now needs a second factor", other: "now need a second factor" } : { one: "can now log in with a password alone", other: "can now log in with a password alone" };
  }
  if (after === "silent") return { one: "no longer gets any answer", other: "no longer get any answer" };
  if (before === "silent") return { one: `now gets an answer (${OUTCOME_LABELS[after]})`, other: `now get an answer (${OUTCOME_LABELS[after]})` };
  return { one: `goes from ${OUTCOME_LABELS[before]} to ${OUTCOME_LABELS[after]}`, other: `go from ${OUTCOME_LABELS[before]} to ${OUTCOME_LABELS[after]}` };
}

/** "wan ssh", "wan ssh and https", "wan (https, http) and lan ssh", "wan ssh, lan https and 2 more interfaces". */
export function placesWords(places: readonly { readonly interface: string; readonly service: string }[]): string {
  const byInterface = new Map<string, string[]>();
  for (const p of places) {
    const services = byInterface.get(p.interface) ?? [];
    if (!services.includes(p.service)) services.push(p.service);
    byInterface.set(p.interface, services);
  }
  const servicesText = (services: readonly string[]): string => (services.length <= 4 ? services.join(", ") : `${services.slice(0, 3).join(", ")} +${services.length - 3} more`);
  if (byInterface.size === 1) {
    const [[iface, services]] = [...byInterface];
    return `${iface} ${services.length <= 4 ? listWords(services) : servicesText(services)}`;
  }
  const parts = [...byInterface].map(([iface, services]) => (services.length === 1 ? `${iface} ${services[0]}` : `${iface} (${servicesText(services)})`));
  return parts.length <= 3 ? listWords(parts) : `${parts.slice(0, 2).join(", ")} and ${parts.length - 2} more interfaces`;
}

function listWords(items: readonly string[]): string {
  if (items.length <= 1) return items.join("");
  return `${items.slice(0, -1).join(", ")} and ${items[items.length - 1]}`;
}

function groupWords(count: bigint, before: Outcome, after: Outcome, places: readonly EffectPlace[]): string {
  const verb = moveWords(before, after);
  const when = places.every((p) => p.allWeek) ? "" : " at some times of the week";
  return `${addressesText(count)} ${count === 1n ? verb.one : verb.other} on ${placesWords(places)}${when}`;
}

// ---------------------------------------------------------------------------------------------
// Parts

/** The diff's cells grouped by before → after, with distinct sources and where. */
function groupsOf(cells: readonly DiffChange[], pageSize: number): { groups: EffectGroup[]; gains: AddressSet; loses: AddressSet } {
  const byKey = new Map<string, { before: Outcome; after: Outcome; pairs: Pairs; places: Map<string, { interface: string; service: string; to: Set<string>; allWeek: boolean }> }>();
  const gains = emptyPairs();
  const loses = emptyPairs();
  for (const cell of cells) {
    const allWeek = cell.start === WHOLE_WEEK.start && cell.end === WHOLE_WEEK.end;
    for (const t of cell.transitions) {
      const key = `${t.before}>${t.after}`;
      let group = byKey.get(key);
      if (group === undefined) byKey.set(key, (group = { before: t.before, after: t.after, pairs: emptyPairs(), places: new Map() }));
      addCidrs(group.pairs, t.ranges);
      addCidrs(outcomeRank(t.after) > outcomeRank(t.before) ? gains : loses, t.ranges);
      const placeKey = `${cell.interface}|${cell.service}`;
      let place = group.places.get(placeKey);
      if (place === undefined) group.places.set(placeKey, (place = { interface: cell.interface, service: cell.service, to: new Set(), allWeek: true }));
      place.to.add(cell.to);
      if (!allWeek) place.allWeek = false;
    }
  }
  const sizes = new Map<string, bigint>();
  const groups = [...byKey].map(([key, g]): EffectGroup => {
    const set = setOf(g.pairs);
    const size = sizeOf(set);
    sizes.set(key, size);
    const places = [...g.places.values()].map((p) => ({ interface: p.interface, service: p.service, to: [...p.to], allWeek: p.allWeek }));
    return {
      key,
      before: g.before,
      after: g.after,
      direction: outcomeRank(g.after) > outcomeRank(g.before) ? "gains" : "loses",
      count: size.toString(),
      words: groupWords(size, g.before, g.after, places),
      places,
      sources: pageAt(cidrsOf(set), 0, pageSize),
    };
  });
  // The most exposed moves first (the higher of the two outcomes), losses before gains at the same level, then the most sources.
  groups.sort((x, y) => {
    const level = (g: EffectGroup) => Math.max(outcomeRank(g.before), outcomeRank(g.after));
    const size = (g: EffectGroup) => sizes.get(g.key) ?? 0n;
    return level(y) - level(x) || (x.direction === y.direction ? 0 : x.direction === "loses" ? -1 : 1) || (size(y) > size(x) ? 1 : size(y) < size(x) ? -1 : 0) || x.key.localeCompare(y.key);
  });
  return { groups, gains: setOf(gains), loses: setOf(loses) };
}

/** Any page of a group's sources, from the effect alone (its cells hold every CIDR). */
export function effectSourcesPage(effect: Pick<ChangeEffect, "cells">, key: string, offset = 0, limit = DEFAULT_PAGE_SIZE): Page<string> {
  const pairs = emptyPairs();
  for (const cell of effect.cells) for (const t of cell.transitions) if (`${t.before}>${t.after}` === key) addCidrs(pairs, t.ranges);
  return pageAt(cidrsOf(setOf(pairs)), offset, limit);
}

function ruleIdsOf(findings: readonly Finding[], code: Finding["code"]): Set<string> {
  const out = new Set<string>();
  for (const f of findings) {
    if (f.code !== code) continue;
    for (const element of f.elements) if (element.startsWith("rule:")) out.add(element.slice("rule:".length));
  }
  return out;
}

function becomesAndStops(before: ReadonlySet<string>, after: ReadonlySet<string>, stillThere: ReadonlySet<string>): { becomes: string[]; stops: string[] } {
  return { becomes: [...after].filter((id) => !before.has(id)), stops: [...before].filter((id) => !after.has(id) && stillThere.has(id)) };
}

const lineOf = (finding: Finding): FindingLine => ({ key: findingKey(finding), code: finding.code, severity: finding.severity, title: finding.title });

function findingsChange(before: readonly Finding[], after: readonly Finding[]): ChangeEffect["findings"] {
  const beforeKeys = new Set(before.map((f) => findingKey(f)));
  const afterKeys = new Set(after.map((f) => findingKey(f)));
  return {
    new: after.filter((f) => !beforeKeys.has(findingKey(f))),
    resolved: before.filter((f) => !afterKeys.has(findingKey(f))),
    unchanged: after.filter((f) => beforeKeys.has(findingKey(f))).map(lineOf),
  };
}

/** The lockout guard's entries, each with the services where the change took its login away. */
function lockoutOf(entries: readonly LockoutEntry[], cells: readonly DiffChange[]): EffectLockout[] {
  return entries.map((entry) => {
    const lost = emptyPairs();
    addCidrs(lost, entry.lostRanges);
    const lostSet = setOf(lost);
    const services = new Map<string, { interface: string; service: string }>();
    for (const cell of cells) {
      for (const t of cell.transitions) {
        if (outcomeRank(t.before) < LOGIN_MFA || outcomeRank(t.after) >= LOGIN_MFA) continue;
        const moved = emptyPairs();
        addCidrs(moved, t.ranges);
        if (overlaps(setOf(moved), lostSet)) services.set(`${cell.interface}|${cell.service}`, { interface: cell.interface, service: cell.service });
      }
    }
    const list = [...services.values()];
    const where = list.length === 0 ? "" : `; it logged in on ${placesWords(list)}`;
    return {
      operatorNetwork: entry.operatorNetwork,
      detail: entry.detail,
      sources: entry.lostRanges,
      services: list,
      words: `Operator network "${entry.operatorNetwork}" loses every login path${where}.`,
    };
  });
}

/** Parses the work-from entries; a malformed one is an input error. */
function workFromSet(entries: readonly string[]): AddressSet {
  return setFromRanges(
    entries.map((text, index) => {
      try {
        return parseEntry(text).range;
      } catch (error) {
        throw new ProbeError(`workFrom[${index}]: ${error instanceof Error ? error.message : String(error)}`);
      }
    }),
  );
}

/** The part of `within` (sorted ranges) where the runs hold a login (second factor or password alone). */
function loginIn(engine: CompiledModel, family: Family, runs: Runs, within: Ranges, into: [bigint, bigint][]): void {
  const domain = engine.domains[family];
  const n = runs.starts.length;
  for (let i = 0; i < within.length; i += 2) {
    const first = within[i];
    const last = within[i + 1];
    const lo = domain.indexOf(first);
    const hi = domain.indexOf(last);
    for (let k = lastAtMost(runs.starts, lo, n); k < n && runs.starts[k] <= hi; k++) {
      if (runs.values[k] < LOGIN_MFA) continue;
      const runFirst = domain.bounds[runs.starts[k]];
      const runLast = domain.bounds[k + 1 < n ? runs.starts[k + 1] : domain.size] - 1n;
      const a = runFirst > first ? runFirst : first;
      const b = runLast < last ? runLast : last;
      if (a <= b) into.push([a, b]);
    }
  }
}

/** Per "interface|service": the part of the set that gets a login there at some destination and time. */
function loginsOf(engine: CompiledModel, set: AddressSet): Map<string, AddressSet> {
  const pairs = new Map<string, Pairs>();
  for (const { iface, to } of arrivals(engine)) {
    const family = engine.addresses[to].family;
    const within = rangesOf(set, family);
    if (within.length === 0) continue;
    for (const c of engine.classes) {
      if (c.kind !== "login" || c.service === null) continue;
      const key = `${engine.model.interfaces[iface].name}|${c.service.name}`;
      let entry = pairs.get(key);
      if (entry === undefined) pairs.set(key, (entry = emptyPairs()));
      for (const partition of engine.weekOutcomes(iface, to, c.index)) loginIn(engine, family, partition.outcome, within, entry[family]);
    }
  }
  return new Map([...pairs].map(([key, p]) => [key, setOf(p)]));
}

function workFromLosses(before: CompiledModel, after: CompiledModel, entries: readonly string[]): WorkFromLoss[] {
  if (entries.length === 0) return [];
  const set = workFromSet(entries);
  const had = loginsOf(before, set);
  const has = loginsOf(after, set);
  const bySources = new Map<string, { sources: string[]; size: bigint; services: { interface: string; service: string }[] }>();
  for (const [key, was] of had) {
    const now = has.get(key) ?? { v4: [], v6: [] };
    const lost: AddressSet = { v4: subtract(was.v4, now.v4, 4), v6: subtract(was.v6, now.v6, 6) };
    const size = sizeOf(lost);
    if (size === 0n) continue;
    const [iface, service] = key.split("|");
    const sources = cidrsOf(lost);
    const entry = bySources.get(sources.join(" ")) ?? { sources, size, services: [] };
    entry.services.push({ interface: iface, service });
    bySources.set(sources.join(" "), entry);
  }
  return [...bySources.values()].map(({ sources, size, services }) => {
    const single = (cidr: string) => cidr.replace(/\/(32|128)$/, "");
    const who = sources.length <= 3 ? listWords(sources.map(single)) : `${addressesText(size)} you work from`;
    return { sources, services, words: `${who} ${size === 1n ? "loses its" : "lose their"} login on ${placesWords(services)}.` };
  });
}

/** Each expectation checked on both revisions: broken (held before, not after) and fixed marked. */
export function compareExpectations(before: CompiledModel, after: CompiledModel, expectations: readonly Expectation[]): ExpectationChange[] {
  if (expectations.length === 0) return [];
  const was = checkExpectations(before, expectations);
  const now = checkExpectations(after, expectations);
  return expectations.map((expectation, i) => ({
    id: expectation.id,
    kind: expectation.kind,
    expectation: now[i].expectation,
    before: was[i],
    after: now[i],
    broken: was[i].holds && !now[i].holds,
    fixed: !was[i].holds && now[i].holds,
  }));
}

function headlineOf(groups: readonly EffectGroup[], lockout: readonly EffectLockout[]): string {
  const parts: string[] = [];
  if (lockout.length > 0) parts.push(`Locks out ${listWords(lockout.map((l) => `operator network “${l.operatorNetwork}”`))}`);
  if (groups.length === 0) {
    parts.push("no source's outcome changes");
    return capitalise(parts.join("; "));
  }
  const shown = groups.slice(0, 2);
  parts.push(...shown.map((g) => g.words));
  const rest = groups.length - shown.length;
  parts.push(rest === 0 ? "nothing else changes" : `and ${rest} more ${pluralWord(rest, { one: "change", other: "changes" })} in who gets what`);
  return capitalise(parts.join("; "));
}

const capitalise = (text: string): string => text.charAt(0).toUpperCase() + text.slice(1);

// ---------------------------------------------------------------------------------------------

/**
 * The effect of changing `before` into `after` (both compiled; `after` ideally on `before` as
 * its basis). Throws ProbeError when a work-from entry is not an address, CIDR or range.
 */
export function changeEffect(before: CompiledModel, after: CompiledModel, options: EffectOptions = {}): ChangeEffect {
  // Input errors first, before any work.
  const workFrom = options.workFrom ?? [];
  workFromSet(workFrom);
  const findings = options.findings ?? { before: findingsOf(before), after: findingsOf(after) };
  const diff = diffModels(before, after, { findings, ...(options.tuning === undefined ? {} : { tuning: options.tuning }) });
  const cells = diff.changes;
  const { groups, gains, loses } = groupsOf(cells, options.pageSize ?? DEFAULT_PAGE_SIZE);

  const stillThere = new Set(after.model.inboundRules.map((r) => r.id));
  const rules: EffectRules = {
    ...ruleChanges(before.model.inboundRules, after.model.inboundRules),
    shadowed: becomesAndStops(ruleIdsOf(findings.before, "shadowed-rule"), ruleIdsOf(findings.after, "shadowed-rule"), stillThere),
    redundant: becomesAndStops(ruleIdsOf(findings.before, "redundant-rule"), ruleIdsOf(findings.after, "redundant-rule"), stillThere),
  };

  const lockout = lockoutOf(diff.lockout, cells);
  const losses = workFromLosses(before, after, workFrom);
  const expectations = compareExpectations(before, after, options.expectations ?? []);
  const blocking: Blocking[] = [
    ...lockout.map((l): Blocking => ({ kind: "lockout", subject: l.operatorNetwork, words: l.words })),
    ...losses.map((l): Blocking => ({ kind: "work-from", subject: l.sources.join(" "), words: l.words })),
    ...expectations.filter((e) => e.broken).map((e): Blocking => ({ kind: "expectation", subject: e.id, words: `Expectation "${e.id}" held and no longer does: ${e.after.words}` })),
  ];
  return {
    headline: headlineOf(groups, lockout),
    changed: cells.length > 0,
    totals: { gains: sizeOf(gains).toString(), loses: sizeOf(loses).toString() },
    groups,
    cells,
    rules,
    findings: findingsChange(findings.before, findings.after),
    lockout,
    workFrom: losses,
    expectations,
    blocking,
    blocked: blocking.length > 0,
  };
}
