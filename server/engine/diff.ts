// Diff of two revisions by effect: per interface × address × service × stretch of the week,
// who moves from which outcome to which; the lockout guard; findings added and resolved.
// Only what the edit can change is evaluated (diff-regions.ts): cells whose inputs are equal
// in both revisions are skipped, and a cell whose inputs differ by a few rules or accounts is
// evaluated only for the sources of those rules or accounts.

import { formatAddress } from "./addresses.ts";
import type { Family } from "./addresses.ts";
import { collapse, countOf, intersect, rangesOf, rangesToCidrs, subtract } from "./address-sets.ts";
import type { AddressSet, Ranges } from "./address-sets.ts";
import { intersectsSet } from "./analysis.ts";
import type { CompiledModel } from "./compile.ts";
import { RevisionPair, loginPieces } from "./diff-regions.ts";
import type { CellRef, CellSide, RegionTuning } from "./diff-regions.ts";
import type { Runs } from "./domain.ts";
import { outcomeSets } from "./exposure.ts";
import type { OutcomeSets } from "./exposure.ts";
import { findingsOf } from "./findings/index.ts";
import type { Finding } from "./findings/index.ts";
import { serviceKey } from "./model.ts";
import { LOGIN_MFA, LOGIN_PASSWORD, OUTCOMES, isBuiltinAddressName } from "./vocabulary.ts";
import type { Outcome } from "./vocabulary.ts";
import { WEEK_MINUTES, formatWeekMinute } from "./schedules.ts";

export interface DiffTransition {
  readonly before: Outcome;
  readonly after: Outcome;
  /** Decimal address count. */
  readonly count: string;
  /** Minimal CIDR list, ascending. */
  readonly ranges: readonly string[];
}

export interface DiffChange {
  readonly interface: string;
  readonly to: string;
  readonly service: string;
  /** Local week time where this stretch starts ("mon 08:00"), inclusive. */
  readonly start: string;
  /** Exclusive; earlier than start when the stretch wraps past the end of Sunday. */
  readonly end: string;
  readonly transitions: readonly DiffTransition[];
}

export interface LockoutEntry {
  readonly operatorNetwork: string;
  readonly detail: string;
  /** Addresses of the network that had a login path before and have none after. */
  readonly lostRanges: readonly string[];
}

export interface ModelDiff {
  readonly changes: readonly DiffChange[];
  readonly lockout: readonly LockoutEntry[];
  /** Computed when first read (JSON serialisation reads it), unless the caller passed both revisions' findings. */
  readonly findingsAdded: readonly Finding[];
  readonly findingsResolved: readonly Finding[];
}

export interface DiffOptions {
  /** Both revisions' findings, when the caller already has them (the device repository keeps them per revision). */
  readonly findings?: { readonly before: readonly Finding[]; readonly after: readonly Finding[] };
  /** How large a region may grow before a cell is evaluated whole; tests use it to force either path. */
  readonly tuning?: RegionTuning;
}

interface Cell extends CellRef {
  readonly serviceName: string;
}

function allSilent(family: Family): OutcomeSets {
  const max = family === 4 ? (1n << 32n) - 1n : (1n << 128n) - 1n;
  return { family, counts: [], ranges: OUTCOMES.map((_, i) => (i === 0 ? [0n, max] : [])) };
}

function transitions(before: OutcomeSets, after: OutcomeSets): DiffTransition[] {
  const out: DiffTransition[] = [];
  before.ranges.forEach((b, i) => {
    if (b.length === 0) return;
    after.ranges.forEach((a, j) => {
      if (i === j || a.length === 0) return;
      const moved = intersect(b, a);
      if (moved.length === 0) return;
      out.push({ before: OUTCOMES[i], after: OUTCOMES[j], count: countOf(moved).toString(), ranges: rangesToCidrs(moved, before.family) });
    });
  });
  return out;
}

/** The same as transitions() for two views of one region (outside it both revisions agree). */
function regionTransitions(before: readonly bigint[], b: Uint8Array, after: readonly bigint[], a: Uint8Array, family: Family): DiffTransition[] {
  const moved = new Map<number, bigint[]>();
  let i = 0;
  let j = 0;
  while (i < b.length && j < a.length) {
    const lo = before[2 * i] > after[2 * j] ? before[2 * i] : after[2 * j];
    const endB = before[2 * i + 1];
    const endA = after[2 * j + 1];
    const hi = endB < endA ? endB : endA;
    if (lo <= hi && b[i] !== a[j]) {
      const key = b[i] * OUTCOMES.length + a[j];
      let list = moved.get(key);
      if (list === undefined) moved.set(key, (list = []));
      const n = list.length;
      if (n > 0 && list[n - 1] + 1n === lo) list[n - 1] = hi;
      else list.push(lo, hi);
    }
    if (endB <= endA) i++;
    if (endA <= endB) j++;
  }
  return [...moved.keys()]
    .sort((x, y) => x - y)
    .map((key) => {
      const ranges = moved.get(key) ?? [];
      return {
        before: OUTCOMES[Math.floor(key / OUTCOMES.length)],
        after: OUTCOMES[key % OUTCOMES.length],
        count: countOf(ranges).toString(),
        ranges: rangesToCidrs(ranges, family),
      };
    });
}

/** Compares two compiled revisions by effect. */
export function diffModels(before: CompiledModel, after: CompiledModel, options: DiffOptions = {}): ModelDiff {
  const pair = new RevisionPair(before, after, options.tuning);
  const changes = effectChanges(pair);
  const lockout = lockoutGuard(before, after, pair);
  let matched: { added: Finding[]; resolved: Finding[] } | null = null;
  const match = (): { added: Finding[]; resolved: Finding[] } => {
    if (matched !== null) return matched;
    const beforeFindings = options.findings?.before ?? findingsOf(before);
    const afterFindings = options.findings?.after ?? findingsOf(after);
    const identity = (f: Finding): string => `${f.code}|${f.elements.join(" ")}`;
    const beforeIds = new Set(beforeFindings.map(identity));
    const afterIds = new Set(afterFindings.map(identity));
    matched = {
      added: afterFindings.filter((f) => !beforeIds.has(identity(f))),
      resolved: beforeFindings.filter((f) => !afterIds.has(identity(f))),
    };
    return matched;
  };
  return {
    changes,
    lockout,
    get findingsAdded(): Finding[] {
      return match().added;
    },
    get findingsResolved(): Finding[] {
      return match().resolved;
    },
  };
}

/** Changes per interface × own address × catalogue service × stretch of the week. */
function effectChanges(pair: RevisionPair): DiffChange[] {
  const { before, after } = pair;
  // Cells: every interface × own address × catalogue service of either revision.
  const cells = new Map<string, Cell>();
  for (const engine of [before.engine, after.engine]) {
    engine.interfaceAddresses.forEach((addresses, iface) => {
      for (const a of addresses) {
        const target = engine.addresses[a];
        for (const s of engine.catalogue) {
          const key = serviceKey(s.protocol, s.port);
          const id = `${engine.model.interfaces[iface].name}|${target.family}:${target.value}|${key}`;
          if (!cells.has(id) || engine === after.engine) {
            cells.set(id, { ifaceName: engine.model.interfaces[iface].name, family: target.family, value: target.value, serviceName: s.name, key });
          }
        }
      }
    });
  }
  const cuts = pair.cuts;
  const silent: Record<Family, OutcomeSets> = { 4: allSilent(4), 6: allSilent(6) };
  const changes: DiffChange[] = [];
  const setsCache = new Map<OutcomeSets, Map<OutcomeSets, DiffTransition[]>>();
  const signatures = new Map<DiffTransition[], string>();
  for (const cell of cells.values()) {
    const b = before.side(cell);
    const a = after.side(cell);
    const comparison = pair.compare(cell, b, a);
    if (comparison.kind === "same") continue;
    let at: (stretch: number) => DiffTransition[];
    if (comparison.kind === "whole") {
      const setsOf = (engine: CompiledModel, side: CellSide | null, slice: number): OutcomeSets =>
        side === null ? silent[cell.family] : outcomeSets(engine, engine.outcomeOf(side.iface, side.to, side.cls, slice));
      at = (k) => {
        const sb = setsOf(before.engine, b, before.sliceOfStretch[k]);
        const sa = setsOf(after.engine, a, after.sliceOfStretch[k]);
        let byAfter = setsCache.get(sb);
        if (byAfter === undefined) setsCache.set(sb, (byAfter = new Map()));
        let list = byAfter.get(sa);
        if (list === undefined) byAfter.set(sa, (list = sb === sa ? [] : transitions(sb, sa)));
        return list;
      };
    } else {
      const vb = before.regionView(b, cell.family, comparison.region);
      const va = after.regionView(a, cell.family, comparison.region);
      const cache = new Map<Uint8Array, Map<Uint8Array, DiffTransition[]>>();
      at = (k) => {
        const ob = vb.bySlice[before.sliceOfStretch[k]];
        const oa = va.bySlice[after.sliceOfStretch[k]];
        let byAfter = cache.get(ob);
        if (byAfter === undefined) cache.set(ob, (byAfter = new Map()));
        let list = byAfter.get(oa);
        if (list === undefined) byAfter.set(oa, (list = regionTransitions(vb.pieces, ob, va.pieces, oa, cell.family)));
        return list;
      };
    }
    const pieces: { start: number; end: number; list: DiffTransition[]; signature: string }[] = [];
    cuts.forEach((start, i) => {
      const list = at(i);
      let signature = signatures.get(list);
      if (signature === undefined) signatures.set(list, (signature = JSON.stringify(list)));
      const end = i + 1 < cuts.length ? cuts[i + 1] : cuts[0] + WEEK_MINUTES;
      const last = pieces[pieces.length - 1];
      if (last !== undefined && last.signature === signature) last.end = end;
      else pieces.push({ start, end, list, signature });
    });
    // The last stretch continues into the first across Sunday 24:00 when they carry the same change.
    if (pieces.length > 1 && pieces[0].signature === pieces[pieces.length - 1].signature) {
      const first = pieces.shift();
      if (first !== undefined) pieces[pieces.length - 1].end = first.end + WEEK_MINUTES;
    }
    const whole = pieces.length === 1;
    for (const p of pieces) {
      if (p.list.length === 0) continue;
      changes.push({
        interface: cell.ifaceName,
        to: formatAddress(cell.family, cell.value),
        service: cell.serviceName,
        start: formatWeekMinute(whole ? 0 : p.start % WEEK_MINUTES),
        end: formatWeekMinute(whole ? WEEK_MINUTES : p.end % WEEK_MINUTES),
        transitions: p.list,
      });
    }
  }
  return changes;
}

const loginCache = new WeakMap<Runs, Ranges>();

/** Sources that get a login on the cell at some time, from its full partitions. */
function wholeLogin(engine: CompiledModel, side: CellSide | null): Ranges {
  if (side === null || side.mode !== "L") return [];
  let out: Ranges = [];
  for (const e of engine.weekOutcomes(side.iface, side.to, side.cls)) {
    let login = loginCache.get(e.outcome);
    if (login === undefined) {
      const d = engine.domains[e.family];
      login = collapse([...pairsOf(d.rangesWhere(e.outcome, LOGIN_MFA)), ...pairsOf(d.rangesWhere(e.outcome, LOGIN_PASSWORD))]);
      loginCache.set(e.outcome, login);
    }
    out = out.length === 0 ? login : collapse([...pairsOf(out), ...pairsOf(login)]);
  }
  return out;
}

function pairsOf(r: Ranges): [bigint, bigint][] {
  const out: [bigint, bigint][] = [];
  for (let i = 0; i < r.length; i += 2) out.push([r[i], r[i + 1]]);
  return out;
}

/**
 * Operator networks (of either revision) that had a login path before and have none after.
 * Login paths are compared cell by cell, and only for addresses of the operator networks:
 * where both revisions' inputs agree, so do their login sources, so the full reachability of
 * a revision is needed only when the edit removed every path of a network among the cells it
 * changed, and then only for that network's addresses.
 */
export function lockoutGuard(before: CompiledModel, after: CompiledModel, pair: RevisionPair = new RevisionPair(before, after)): LockoutEntry[] {
  const names = [...new Set([...after.model.operatorNetworks, ...before.model.operatorNetworks])];
  if (names.length === 0) return [];
  const known = (e: CompiledModel, name: string): boolean =>
    e.model.addresses.some((a) => a.name === name) || e.model.addressGroups.some((g) => g.name === name) || isBuiltinAddressName(name);
  const networks = names.map((name) => ({ name, set: known(after, name) ? after.addressSetOf(name) : before.addressSetOf(name) }));
  const operators: AddressSet = {
    v4: collapse(networks.flatMap((n) => pairsOf(n.set.v4))),
    v6: collapse(networks.flatMap((n) => pairsOf(n.set.v6))),
  };
  // Every login cell of either revision: interface × device address of its families × login service.
  const cells = new Map<string, CellRef>();
  for (const engine of [before, after]) {
    engine.interfaceAddresses.forEach((own, iface) => {
      const families = new Set(own.map((a) => engine.addresses[a].family));
      for (const target of engine.addresses) {
        if (!families.has(target.family) || rangesOf(operators, target.family).length === 0) continue;
        for (const c of engine.classes) {
          if (c.kind !== "login") continue;
          const ifaceName = engine.model.interfaces[iface].name;
          const id = `${ifaceName}|${target.family}:${target.value}|${c.key}`;
          if (!cells.has(id)) cells.set(id, { ifaceName, family: target.family, value: target.value, key: c.key });
        }
      }
    });
  }
  // Per cell, the operator addresses whose login may differ (undefined: none), and the login
  // sources there before and after.
  const lostPairs: Record<Family, [bigint, bigint][]> = { 4: [], 6: [] };
  const gainedPairs: Record<Family, [bigint, bigint][]> = { 4: [], 6: [] };
  const sides = new Map<string, { a: CellSide | null; region: Ranges | undefined }>();
  const restricted = new Map<Ranges, Ranges>();
  const loginWithin = (engine: CompiledModel, side: CellSide | null, family: Family, region: Ranges): Ranges => {
    const view = engine === before ? pair.before : pair.after;
    const small = view.elementCount(family, region) <= pair.tuning.elementLimit;
    return small ? loginPieces(view.regionView(side, family, region)) : intersect(wholeLogin(engine, side), region);
  };
  for (const [id, cell] of cells) {
    const b = pair.before.side(cell);
    const a = pair.after.side(cell);
    const comparison = pair.compare(cell, b, a);
    let region: Ranges | undefined;
    if (comparison.kind !== "same") {
      const own = rangesOf(operators, cell.family);
      let r = own;
      if (comparison.kind === "region") {
        // Cells that differ in the same region share one restricted region (and so its evaluations).
        r = restricted.get(comparison.region) ?? intersect(comparison.region, own);
        restricted.set(comparison.region, r);
      }
      region = r.length === 0 ? undefined : r;
    }
    sides.set(id, { a, region });
    if (region === undefined) continue;
    lostPairs[cell.family].push(...pairsOf(loginWithin(before, b, cell.family, region)));
    gainedPairs[cell.family].push(...pairsOf(loginWithin(after, a, cell.family, region)));
  }
  const changedBefore: AddressSet = { v4: collapse(lostPairs[4]), v6: collapse(lostPairs[6]) };
  const changedAfter: AddressSet = { v4: collapse(gainedPairs[4]), v6: collapse(gainedPairs[6]) };

  /** Whether the part both revisions share gives any source of the set a login path. */
  const sharedReach = (set: AddressSet): boolean => {
    for (const [id, cell] of cells) {
      const entry = sides.get(id);
      if (entry === undefined || entry.a === null || entry.a.mode !== "L") continue;
      const within = entry.region === undefined ? rangesOf(set, cell.family) : subtract(rangesOf(set, cell.family), entry.region, cell.family);
      if (within.length > 0 && loginWithin(after, entry.a, cell.family, within).length > 0) return true;
    }
    return false;
  };

  const out: LockoutEntry[] = [];
  for (const { name, set } of networks) {
    // A lockout needs a path before and none after: none among the changed cells after, one
    // among them before (a path in the shared part would exist after too), none in the shared part.
    if (intersectsSet(set, changedAfter) || !intersectsSet(set, changedBefore) || sharedReach(set)) continue;
    out.push({
      operatorNetwork: name,
      detail: `"${name}" had a login path before and has none after: no address in it reaches a login with an eligible account on any interface, service or time`,
      lostRanges: [...rangesToCidrs(intersect(set.v4, changedBefore.v4), 4), ...rangesToCidrs(intersect(set.v6, changedBefore.v6), 6)],
    });
  }
  return out;
}
