// The diff as it was before the region comparison (server/engine/diff.ts at ca64e79), kept
// as the reference the fast diff is checked against: every interface × address × service ×
// stretch of the week evaluated in full in both revisions, and the lockout guard from both
// revisions' complete login reachability. Slow on purpose; only tests use it.

import { formatAddress } from "#server/engine/addresses.ts";
import type { Family } from "#server/engine/addresses.ts";
import { countOf, intersect, rangesToCidrs, subtract } from "#server/engine/address-sets.ts";
import type { AddressSet, Ranges } from "#server/engine/address-sets.ts";
import { intersectsSet, loginReachable } from "#server/engine/analysis.ts";
import type { CompiledModel } from "#server/engine/compile.ts";
import { outcomeSets } from "#server/engine/exposure.ts";
import type { OutcomeSets } from "#server/engine/exposure.ts";
import { findingsOf } from "#server/engine/findings/index.ts";
import type { Finding } from "#server/engine/findings/index.ts";
import { serviceKey } from "#server/engine/model.ts";
import { OUTCOMES, isBuiltinAddressName } from "#server/engine/vocabulary.ts";
import { WEEK_MINUTES, formatWeekMinute } from "#server/engine/schedules.ts";
import type { DiffTransition, LockoutEntry, ModelDiff, DiffChange } from "#server/engine/diff.ts";

interface Cell {
  readonly ifaceName: string;
  readonly family: Family;
  readonly value: bigint;
  readonly serviceName: string;
  readonly key: string;
}

/** Outcome sets of a probe class in one revision; everything silent when the destination is not on that device. */
function setsIn(engine: CompiledModel, cell: Cell, minute: number): OutcomeSets | null {
  const iface = engine.model.interfaces.findIndex((f) => f.name === cell.ifaceName);
  if (iface < 0) return null;
  const to = engine.deviceAddressOf({ family: cell.family, value: cell.value });
  if (to < 0) return null;
  const hasFamily = engine.interfaceAddresses[iface].some((a) => engine.addresses[a].family === cell.family);
  if (!hasFamily) return null;
  return outcomeSets(engine, engine.outcomeOf(iface, to, engine.classOfKey(cell.key), engine.week.sliceAt[minute]));
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

/** Compares two compiled revisions by effect. */
export function referenceDiff(before: CompiledModel, after: CompiledModel): ModelDiff {
  // Cells: every interface × own address × catalogue service of either revision.
  const cells = new Map<string, Cell>();
  for (const engine of [before, after]) {
    engine.interfaceAddresses.forEach((addresses, iface) => {
      for (const a of addresses) {
        const target = engine.addresses[a];
        for (const s of engine.catalogue) {
          const key = serviceKey(s.protocol, s.port);
          const id = `${engine.model.interfaces[iface].name}|${target.family}:${target.value}|${key}`;
          if (!cells.has(id) || engine === after) {
            cells.set(id, { ifaceName: engine.model.interfaces[iface].name, family: target.family, value: target.value, serviceName: s.name, key });
          }
        }
      }
    });
  }
  // Stretches: the common refinement of both revisions' slices.
  const cuts = [...new Set([...before.week.slices, ...after.week.slices].map((s) => s.start % WEEK_MINUTES))].sort((a, b) => a - b);
  const changes: DiffChange[] = [];
  const pairCache = new Map<OutcomeSets, Map<OutcomeSets, DiffTransition[]>>();
  for (const cell of cells.values()) {
    const pieces: { start: number; end: number; list: DiffTransition[]; signature: string }[] = [];
    cuts.forEach((start, i) => {
      const b = setsIn(before, cell, start) ?? allSilent(cell.family);
      const a = setsIn(after, cell, start) ?? allSilent(cell.family);
      let byAfter = pairCache.get(b);
      if (byAfter === undefined) pairCache.set(b, (byAfter = new Map()));
      let list = byAfter.get(a);
      if (list === undefined) byAfter.set(a, (list = b === a ? [] : transitions(b, a)));
      const signature = JSON.stringify(list);
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

  const lockout = referenceLockoutGuard(before, after);
  const beforeFindings = findingsOf(before);
  const afterFindings = findingsOf(after);
  const identity = (f: Finding): string => `${f.code}|${f.elements.join(" ")}`;
  const beforeIds = new Set(beforeFindings.map(identity));
  const afterIds = new Set(afterFindings.map(identity));
  return {
    changes,
    lockout,
    findingsAdded: afterFindings.filter((f) => !beforeIds.has(identity(f))),
    findingsResolved: beforeFindings.filter((f) => !afterIds.has(identity(f))),
  };
}

/** Operator networks (of either revision) that had a login path before and have none after. */
export function referenceLockoutGuard(before: CompiledModel, after: CompiledModel): LockoutEntry[] {
  const names = [...new Set([...after.model.operatorNetworks, ...before.model.operatorNetworks])];
  if (names.length === 0) return [];
  const reachBefore = loginReachable(before);
  const reachAfter = loginReachable(after);
  const out: LockoutEntry[] = [];
  for (const name of names) {
    const known = (e: CompiledModel): boolean =>
      e.model.addresses.some((a) => a.name === name) || e.model.addressGroups.some((g) => g.name === name) || isBuiltinAddressName(name);
    const set: AddressSet = known(after) ? after.addressSetOf(name) : before.addressSetOf(name);
    if (!intersectsSet(set, reachBefore) || intersectsSet(set, reachAfter)) continue;
    const lost = (f: Family, s: Ranges, b: Ranges, a: Ranges): Ranges => subtract(intersect(s, b), a, f);
    const lostV4 = lost(4, set.v4, reachBefore.v4, reachAfter.v4);
    const lostV6 = lost(6, set.v6, reachBefore.v6, reachAfter.v6);
    out.push({
      operatorNetwork: name,
      detail: `"${name}" had a login path before and has none after: no address in it reaches a login with an eligible account on any interface, service or time`,
      lostRanges: [...rangesToCidrs(lostV4, 4), ...rangesToCidrs(lostV6, 6)],
    });
  }
  return out;
}
