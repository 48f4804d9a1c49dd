// Where in the address space a change moves sources: for one interface × service and one
// address family, the source space cut into segments that share a *kind* — the most exposed
// outcome the source gets after the change (at any of the interface's addresses, any time of the
// week) and the set of moves (before → after) it makes somewhere, none when it is unchanged.
// The segments are the exposure map's drill-down input (server/analysis/address-grids.ts,
// docs/decisions/009): a kind's index is the rank `zoomView` counts per cell, so the same
// 16 × 16 views, change hulls and breadcrumbs serve the effect's picture, with the cells whose
// sources change marked. Exact: the moves come from the engine's effect (its diff cells, every
// CIDR), the outcomes after from the compiled draft's outcome partitions; nothing is sampled.
// Tests relate every cell to `trace` on both models (tests/unit/effect-space.test.ts).

import { FAMILY, parseCidr, type Family } from "../engine/addresses.ts";
import { subtract, union, type Ranges } from "../engine/address-sets.ts";
import type { Runs } from "../engine/domain.ts";
import { OUTCOMES, outcomeRank, type CompiledModel, type DiffChange, type Outcome } from "../engine/index.ts";
import { parseViewBlock, rootBlock, zoomView, type Segment, type ZoomView } from "./address-grids.ts";

export type SpaceMove = { before: Outcome; after: Outcome };

/** A kind of source: its most exposed outcome after the change (null: it reaches no address of the interface after it) and its moves (empty: unchanged). */
export type SpaceKind = { after: Outcome | null; moves: SpaceMove[] };

/** One interface × service × family of a change, ready to draw at any zoom. */
export type EffectSpace = {
  interface: string;
  service: string;
  family: Family;
  /** Unchanged kinds first, then changed ones; within each, by the outcome after. A kind's index is its rank in the segments. */
  kinds: SpaceKind[];
  segments: Segment[];
  /** Distinct sources of this family whose outcome changes here somewhere (decimal). */
  changed: string;
};

/** What the page's picker offers: the pairs and families where some source's outcome changes. */
export type EffectSpaceChoice = { interface: string; service: string; family: Family; changed: string };

/** One view of a space for the page. */
export type EffectSpaceView = EffectSpaceChoice & { kinds: SpaceKind[]; view: ZoomView; problem: string | null };

const moveKey = (move: SpaceMove): string => `${move.before}>${move.after}`;

/**
 * Per outcome rank, the sources of `family` whose most exposed outcome on interface × service is
 * that one, over every address of the interface in the family and every slice of the week;
 * null when the interface or service is not in the model or has no address of the family.
 */
function worstByRank(engine: CompiledModel, iface: string, service: string, family: Family): Ranges[] | null {
  const index = engine.model.interfaces.findIndex((entry) => entry.name === iface);
  const cls = engine.catalogue.findIndex((entry) => entry.name === service);
  if (index < 0 || cls < 0) return null;
  const lists: Runs[] = [];
  const seen = new Set<Runs>();
  for (const to of engine.interfaceAddresses[index]) {
    if (engine.addresses[to].family !== family) continue;
    for (const partition of engine.weekOutcomes(index, to, cls)) {
      if (seen.has(partition.outcome)) continue;
      seen.add(partition.outcome);
      lists.push(partition.outcome);
    }
  }
  if (lists.length === 0) return null;
  const ranks = OUTCOMES.map((_, rank) => rank);
  const somewhere = engine.domains[family].rangesWhereEach(lists, ranks);
  // Most exposed first: a source belongs to the highest rank it gets anywhere.
  const worst: Ranges[] = ranks.map(() => []);
  let higher: Ranges = [];
  for (let rank = ranks.length - 1; rank >= 0; rank--) {
    worst[rank] = subtract(somewhere[rank], higher, family);
    higher = union(higher, somewhere[rank]);
  }
  return worst;
}

type Interval = { first: bigint; last: bigint };

/**
 * The source space of the family as maximal segments of one kind. `layers[r]` holds the sources
 * whose outcome after is rank r (disjoint); `moves[m]` the sources that make move m somewhere
 * (they may overlap each other).
 */
function kindSegments(family: Family, worst: readonly Ranges[] | null, moves: readonly SpaceMove[], moveRanges: readonly Interval[][]): { kinds: SpaceKind[]; segments: Segment[] } {
  const max = FAMILY[family].max;
  // Events at each boundary: a layer or move starts at `first`, stops after `last`.
  const starts = new Map<bigint, Array<{ kind: "worst" | "move"; index: number }>>();
  const stops = new Map<bigint, Array<{ kind: "worst" | "move"; index: number }>>();
  const add = (map: typeof starts, at: bigint, entry: { kind: "worst" | "move"; index: number }) => {
    const list = map.get(at);
    if (list) list.push(entry);
    else map.set(at, [entry]);
  };
  const boundaries = new Set<bigint>([0n]);
  const mark = (first: bigint, last: bigint, entry: { kind: "worst" | "move"; index: number }) => {
    add(starts, first, entry);
    boundaries.add(first);
    if (last < max) {
      add(stops, last + 1n, entry);
      boundaries.add(last + 1n);
    }
  };
  worst?.forEach((ranges, rank) => {
    for (let i = 0; i < ranges.length; i += 2) mark(ranges[i], ranges[i + 1], { kind: "worst", index: rank });
  });
  moveRanges.forEach((intervals, index) => {
    for (const { first, last } of intervals) mark(first, last, { kind: "move", index });
  });
  const points = [...boundaries].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  const active = moves.map(() => 0);
  let rank = -1;
  const raw: Array<{ first: bigint; last: bigint; key: string }> = [];
  const kindOf = new Map<string, SpaceKind>();
  points.forEach((point, i) => {
    for (const entry of stops.get(point) ?? []) {
      if (entry.kind === "move") active[entry.index] -= 1;
      else if (rank === entry.index) rank = -1;
    }
    for (const entry of starts.get(point) ?? []) {
      if (entry.kind === "move") active[entry.index] += 1;
      else rank = entry.index;
    }
    const present = moves.filter((_, index) => active[index] > 0);
    const key = `${rank}|${present.map(moveKey).join(",")}`;
    if (!kindOf.has(key)) kindOf.set(key, { after: rank < 0 ? null : OUTCOMES[rank], moves: present });
    const last = i + 1 < points.length ? points[i + 1] - 1n : max;
    const previous = raw.at(-1);
    if (previous && previous.key === key) previous.last = last;
    else raw.push({ first: point, last, key });
  });
  // Unchanged kinds below changed ones, each by the outcome after: a mixed cell's top kind is its most telling one.
  const order = (kind: SpaceKind) => (kind.moves.length > 0 ? 100 : 0) + (kind.after === null ? -1 : outcomeRank(kind.after));
  const keys = [...kindOf.keys()].sort((a, b) => order(kindOf.get(a)!) - order(kindOf.get(b)!) || a.localeCompare(b));
  const index = new Map(keys.map((key, i) => [key, i]));
  return { kinds: keys.map((key) => kindOf.get(key)!), segments: raw.map(({ first, last, key }) => ({ first, last, rank: index.get(key)! })) };
}

/**
 * Every interface × service × family where some source's outcome changes, cut into kinds.
 * `cells` are the engine's effect cells (ChangeEffect.cells, the diff with full CIDR lists).
 */
export function effectSpaces(after: CompiledModel, cells: readonly DiffChange[]): EffectSpace[] {
  type Gathered = { interface: string; service: string; family: Family; moves: Map<string, { move: SpaceMove; intervals: Interval[] }> };
  const gathered = new Map<string, Gathered>();
  for (const cell of cells) {
    for (const transition of cell.transitions) {
      for (const text of transition.ranges) {
        const { range } = parseCidr(text);
        const key = `${cell.interface}|${cell.service}|${range.family}`;
        let entry = gathered.get(key);
        if (!entry) gathered.set(key, (entry = { interface: cell.interface, service: cell.service, family: range.family, moves: new Map() }));
        const move = { before: transition.before, after: transition.after };
        let list = entry.moves.get(moveKey(move));
        if (!list) entry.moves.set(moveKey(move), (list = { move, intervals: [] }));
        list.intervals.push({ first: range.first, last: range.last });
      }
    }
  }
  return [...gathered.values()].map((entry) => {
    const moves = [...entry.moves.values()].sort((a, b) => outcomeRank(b.move.after) - outcomeRank(a.move.after) || outcomeRank(b.move.before) - outcomeRank(a.move.before));
    const { kinds, segments } = kindSegments(
      entry.family,
      worstByRank(after, entry.interface, entry.service, entry.family),
      moves.map(({ move }) => move),
      moves.map(({ intervals }) => intervals),
    );
    let changed = 0n;
    for (const segment of segments) if (kinds[segment.rank].moves.length > 0) changed += segment.last - segment.first + 1n;
    return { interface: entry.interface, service: entry.service, family: entry.family, kinds, segments, changed: changed.toString() };
  });
}

export const choiceOf = (space: EffectSpace): EffectSpaceChoice => ({ interface: space.interface, service: space.service, family: space.family, changed: space.changed });

/**
 * The view the page asks for: the space of that interface, service and family (else the first
 * space), at `block` (else the whole family; a block of the wrong family or not a CIDR falls back
 * to the whole family with a note). Null when nothing changes anywhere.
 */
export function effectSpaceView(spaces: readonly EffectSpace[], asked: { interface?: string; service?: string; family?: string; block?: string }): EffectSpaceView | null {
  const space =
    spaces.find((candidate) => candidate.interface === asked.interface && candidate.service === asked.service && String(candidate.family) === asked.family) ??
    spaces.find((candidate) => candidate.interface === asked.interface && candidate.service === asked.service) ??
    spaces[0];
  if (!space) return null;
  const requested = asked.block ? parseViewBlock(space.family, asked.block) : null;
  const view = zoomView(space.family, space.segments, requested?.ok ? requested.block : rootBlock(space.family), space.kinds.length);
  return { ...choiceOf(space), kinds: space.kinds, view, problem: requested && !requested.ok ? `${requested.problem}; showing the whole IPv${space.family} space.` : null };
}
