// What an edit does to one device's exposure, in the words the pages show: the engine's diff
// (diffModels) as rows of "these sources move from this outcome to that one", each with a
// probe inside it that `trace` replays, plus who gains and who loses each outcome, the lockout
// guard and the findings that appear or go. Pure and serialisable: the shared-object preview
// sends it to the browser as it is.

import { formatAddress, parseCidr, type Family } from "../engine/addresses.ts";
import { collapse, countOf } from "../engine/address-sets.ts";
import { instantOfWeekTime, outcomeRank, OUTCOMES, type ElementRef, type Finding, type ModelDiff, type Outcome, type Severity } from "../engine/index.ts";

/** A probe in the words `trace` takes (the trace page's query). */
export type ChangeWitness = { from: string; interface: string; service: string; to: string; at: string };

/**
 * Sources that move from one outcome to another on one interface for one stretch of the week;
 * the services and device addresses where exactly the same sources move the same way share a row.
 */
export type ExposureChangeRow = {
  interface: string;
  to: string[];
  services: string[];
  /** Local week time where the stretch starts ("mon 08:00"), inclusive, and where it ends, exclusive. */
  start: string;
  end: string;
  before: Outcome;
  after: Outcome;
  /** Decimal count of the sources that move. */
  count: string;
  /** The first few CIDRs of those sources; `moreRanges` says how many are left out. */
  ranges: string[];
  moreRanges: number;
  /** The row's first source, address and service at the start of its stretch: `trace` gives `before` on the old model, `after` on the new. */
  witness: ChangeWitness;
};

/** Distinct source addresses that now get an outcome somewhere they did not, and that no longer get it somewhere. */
export type OutcomeShift = { outcome: Outcome; gained: string; lost: string };

export type FindingLine = { code: string; severity: Severity; title: string; elements: readonly ElementRef[] };

export type ExposureChange = {
  /** The rows, more exposed first; at most `limits.rows` of them. */
  rows: ExposureChangeRow[];
  totalRows: number;
  /** The engine's transitions (interface × address × service × stretch) behind the rows. */
  transitions: number;
  /** Distinct sources (IPv4 and IPv6 together) that get a more exposed outcome on at least one interface, address, service or time. */
  moreExposed: string;
  /** The same for a less exposed outcome. */
  lessExposed: string;
  byOutcome: OutcomeShift[];
  lockout: Array<{ operatorNetwork: string; detail: string }>;
  findingsAdded: FindingLine[];
  findingsResolved: FindingLine[];
};

export type ExposureChangeLimits = { rows: number; rangesPerRow: number };
const DEFAULT_LIMITS: ExposureChangeLimits = { rows: 60, rangesPerRow: 4 };

type Pairs = Record<Family, Array<[bigint, bigint]>>;

function emptyPairs(): Pairs {
  return { 4: [], 6: [] };
}

function addRanges(into: Pairs, cidrs: readonly string[]): void {
  for (const text of cidrs) {
    const { range } = parseCidr(text);
    into[range.family].push([range.first, range.last]);
  }
}

function distinct(pairs: Pairs): string {
  return (countOf(collapse(pairs[4])) + countOf(collapse(pairs[6]))).toString();
}

function lineOf(finding: Finding): FindingLine {
  return { code: finding.code, severity: finding.severity, title: finding.title, elements: finding.elements };
}

/** The engine's diff of one device as the preview shows it. */
export function exposureChangeOf(diff: ModelDiff, timezone: string, limits: ExposureChangeLimits = DEFAULT_LIMITS): ExposureChange {
  const all = diff.changes.flatMap((change) => change.transitions.map((transition) => ({ change, transition })));
  const more = emptyPairs();
  const less = emptyPairs();
  const gained = new Map<Outcome, Pairs>();
  const lost = new Map<Outcome, Pairs>();
  const pairsOf = (map: Map<Outcome, Pairs>, outcome: Outcome) => map.get(outcome) ?? map.set(outcome, emptyPairs()).get(outcome)!;
  for (const { transition } of all) {
    addRanges(outcomeRank(transition.after) > outcomeRank(transition.before) ? more : less, transition.ranges);
    addRanges(pairsOf(gained, transition.after), transition.ranges);
    addRanges(pairsOf(lost, transition.before), transition.ranges);
  }
  // One row per interface, stretch, move and sources; services and addresses gathered, in the engine's order.
  const grouped = new Map<string, { change: (typeof all)[number]["change"]; transition: (typeof all)[number]["transition"]; to: string[]; services: string[] }>();
  for (const { change, transition } of all) {
    const key = [change.interface, change.start, change.end, transition.before, transition.after, transition.ranges.join(" ")].join("|");
    const row = grouped.get(key) ?? grouped.set(key, { change, transition, to: [], services: [] }).get(key)!;
    if (!row.to.includes(change.to)) row.to.push(change.to);
    if (!row.services.includes(change.service)) row.services.push(change.service);
  }
  const climb = ({ transition }: { transition: (typeof all)[number]["transition"] }) => outcomeRank(transition.after) - outcomeRank(transition.before);
  // Stable: the engine's order (interface, address, service, time) within each step size.
  const ordered = [...grouped.values()].sort((a, b) => climb(b) - climb(a));
  const rows = ordered.slice(0, limits.rows).map(({ change, transition, to, services }): ExposureChangeRow => {
    const first = parseCidr(transition.ranges[0]).range;
    return {
      interface: change.interface,
      to,
      services,
      start: change.start,
      end: change.end,
      before: transition.before,
      after: transition.after,
      count: transition.count,
      ranges: transition.ranges.slice(0, limits.rangesPerRow),
      moreRanges: Math.max(0, transition.ranges.length - limits.rangesPerRow),
      witness: { from: formatAddress(first.family, first.first), interface: change.interface, service: services[0], to: to[0], at: instantOfWeekTime(change.start, timezone) },
    };
  });
  const zero = { 4: [], 6: [] };
  return {
    rows,
    totalRows: grouped.size,
    transitions: all.length,
    moreExposed: distinct(more),
    lessExposed: distinct(less),
    byOutcome: OUTCOMES.filter((outcome) => gained.has(outcome) || lost.has(outcome)).map((outcome) => ({
      outcome,
      gained: distinct(gained.get(outcome) ?? zero),
      lost: distinct(lost.get(outcome) ?? zero),
    })),
    lockout: diff.lockout.map((entry) => ({ operatorNetwork: entry.operatorNetwork, detail: entry.detail })),
    findingsAdded: diff.findingsAdded.map(lineOf),
    findingsResolved: diff.findingsResolved.map(lineOf),
  };
}
