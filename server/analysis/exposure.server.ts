// The exposure map for the page and its CSV: one instant's entries filtered by the URL, the
// focused entry's CIDR lists (paged), its address-space view (zoomed to the URL's block) and
// its week × hour view.

import { exposure, isOutcome, outcomeRank, OUTCOMES, ProbeError } from "../engine/index.ts";
import type { CompiledModel, ExposureAt, ExposureEntry, Outcome } from "../engine/index.ts";
import { namesByKind } from "./catalogue.ts";
import { parseViewBlock, rootBlock, segmentsOf, topRank, zoomView, type Segment, type ZoomView } from "./address-grids.ts";
import { pageOf } from "./paging.ts";
import { weekChanges, weekHourGrid, type WeekView } from "./week-hours.ts";

export interface ExposureQuery {
  readonly at: string;
  readonly interface: string;
  readonly service: string;
  readonly family: "" | "4" | "6";
  readonly outcome: "" | Outcome;
  readonly focus: string;
  readonly page: string;
  readonly entryPage: string;
  /** The block the address-space view shows ("" = the whole space). */
  readonly block: string;
}

export function exposureQueryOf(url: URL): ExposureQuery {
  const get = (name: string, max = 100) => (url.searchParams.get(name) ?? "").trim().slice(0, max);
  const family = get("family");
  const outcome = get("outcome");
  return {
    at: get("at", 60),
    interface: get("interface"),
    service: get("service"),
    family: family === "4" || family === "6" ? family : "",
    outcome: isOutcome(outcome) ? outcome : "",
    focus: get("focus", 200),
    page: get("page", 10),
    entryPage: get("epage", 10),
    block: get("block", 60),
  };
}

export const familyOf = (to: string): 4 | 6 => (to.includes(":") ? 6 : 4);
/** The URL key of an entry: "interface,to,service" (names never hold a comma). */
export const entryKey = (entry: { interface: string; to: string; service: string }): string => `${entry.interface},${entry.to},${entry.service}`;

/** The entries the filters keep, in engine order. */
export function filterEntries(entries: readonly ExposureEntry[], query: ExposureQuery): ExposureEntry[] {
  return entries.filter(
    (entry) =>
      (!query.interface || entry.interface === query.interface) &&
      (!query.service || entry.service === query.service) &&
      (!query.family || String(familyOf(entry.to)) === query.family) &&
      (!query.outcome || entry.counts[query.outcome] !== "0"),
  );
}

export type ExposureAnswer =
  | { readonly ok: false; readonly errors: { at: string } }
  | {
      readonly ok: true;
      readonly at: string;
      readonly localTime: string;
      readonly slice: { readonly start: string; readonly end: string };
      readonly sliceCount: number;
      readonly interfaces: string[];
      readonly services: string[];
      readonly total: number;
      readonly entries: { key: string; interface: string; to: string; service: string; family: 4 | 6; counts: string[]; top: number }[];
      readonly entryPage: { page: number; pages: number };
      readonly focus: null | {
        key: string;
        interface: string;
        to: string;
        service: string;
        family: 4 | 6;
        counts: string[];
        cidrs: { outcome: Outcome; cidr: string }[];
        cidrTotal: number;
        cidrPage: { page: number; pages: number; start: number };
        view: ZoomView;
        /** Set when the URL's block could not be shown (the whole space is shown instead). */
        blockProblem: string | null;
        /** Null when the device's week has one slice. */
        week: WeekView | null;
      };
    };

/** Parses `at` for this device; null when empty (now). */
function instantOrError(device: CompiledModel, at: string): { ms: number } | { error: string } {
  try {
    return { ms: device.instantOf(at || undefined, Date.now()) };
  } catch (error) {
    if (!(error instanceof ProbeError)) throw error;
    return { error: `${error.message}. Use e.g. 2025-03-04T10:00 (device clock) or 2025-03-04T16:00Z.` };
  }
}

/** The raw entries at an instant (and the map they come from), for the CSV and the API. */
export function exposureEntriesAt(device: CompiledModel, at: string): { ok: true; entries: readonly ExposureEntry[]; map: ExposureAt } | { ok: false; error: string } {
  const instant = instantOrError(device, at);
  if ("error" in instant) return { ok: false, error: instant.error };
  const map = exposure(device, instant.ms);
  return { ok: true, entries: map.entries, map };
}

export function answerExposure(device: CompiledModel, query: ExposureQuery): ExposureAnswer {
  const model = device.model;
  const instant = instantOrError(device, query.at);
  if ("error" in instant) return { ok: false, errors: { at: instant.error } };
  const map = exposure(device, instant.ms);
  const filtered = filterEntries(map.entries, query);
  const counts = (entry: ExposureEntry) => OUTCOMES.map((outcome) => entry.counts[outcome]);
  const entryPage = pageOf(query.entryPage, filtered.length);
  const entries = filtered.slice(entryPage.start, entryPage.end).map((entry) => ({
    key: entryKey(entry),
    interface: entry.interface,
    to: entry.to,
    service: entry.service,
    family: familyOf(entry.to),
    counts: counts(entry),
    top: topRank(counts(entry)),
  }));
  // The focused entry: the one in the URL if the filters keep it, else the most exposed.
  let focused = filtered.find((entry) => entryKey(entry) === query.focus);
  if (!focused && filtered.length) focused = filtered.reduce((best, entry) => (topRank(counts(entry)) > topRank(counts(best)) ? entry : best));
  return {
    ok: true,
    at: map.at,
    localTime: map.localTime,
    slice: map.slice,
    sliceCount: device.week.slices.length,
    interfaces: model.interfaces.map((entry) => entry.name),
    services: namesByKind(device.catalogue),
    total: filtered.length,
    entries,
    entryPage: { page: entryPage.page, pages: entryPage.pages },
    focus: focused ? focusOf(device, focused, query) : null,
  };
}

/**
 * An entry's partition as segments, parsed once per partition: entries of one partition share
 * their counts object (the engine computes a shared partition once and keeps it while the
 * compiled model lives), so that object keys the cache — across the slices of the week view
 * and across requests as a reader zooms.
 */
const segmentsCache = new WeakMap<object, Segment[]>();
function segmentsOfEntry(entry: ExposureEntry): Segment[] {
  let segments = segmentsCache.get(entry.counts);
  if (!segments) {
    segments = segmentsOf(familyOf(entry.to), OUTCOMES.map((outcome) => entry.ranges[outcome]));
    segmentsCache.set(entry.counts, segments);
  }
  return segments;
}

function focusOf(device: CompiledModel, entry: ExposureEntry, query: ExposureQuery) {
  const family = familyOf(entry.to);
  const ranges = entry.ranges;
  // Each list is rendered when read, so it is read once.
  const byRank = OUTCOMES.map((outcome) => ranges[outcome]);
  // Most exposed first: that is what the reader is looking for.
  const cidrs = [...OUTCOMES]
    .reverse()
    .filter((outcome) => !query.outcome || outcome === query.outcome)
    .flatMap((outcome) => byRank[outcomeRank(outcome)].map((cidr) => ({ outcome, cidr })));
  const cidrPage = pageOf(query.page, cidrs.length);
  const segments = segmentsOfEntry(entry);
  const requested = query.block ? parseViewBlock(family, query.block) : null;
  const view = zoomView(family, segments, requested?.ok ? requested.block : rootBlock(family));
  let week: WeekView | null = null;
  if (device.week.slices.length > 1) {
    const key = entryKey(entry);
    const slices = exposure(device).slices.map((slice) => {
      const same = slice.entries.find((candidate) => entryKey(candidate) === key);
      return { start: slice.start, end: slice.end, startMinute: slice.startMinute, endMinute: slice.endMinute, segments: same ? segmentsOfEntry(same) : [] };
    });
    const changes = weekChanges(family, slices);
    // Each slice's rank is the worst outcome of the changing sources in it (-1: nothing changes).
    const ranked = slices.map((slice, index) => ({ ...slice, rank: topRank(changes.perSlice[index].map(String)) }));
    week = {
      hours: weekHourGrid(ranked),
      steady: changes.steady.map(String),
      changing: changes.changing,
      changingBlocks: changes.changingBlocks,
      changingCount: changes.changingCount.toString(),
      slices: ranked.map((slice, index) => ({ start: slice.start, end: slice.end, outcome: slice.rank >= 0 ? OUTCOMES[slice.rank] : null, counts: changes.perSlice[index].map(String) })),
    };
  }
  return {
    key: entryKey(entry),
    interface: entry.interface,
    to: entry.to,
    service: entry.service,
    family,
    counts: OUTCOMES.map((outcome) => entry.counts[outcome]),
    cidrs: cidrs.slice(cidrPage.start, cidrPage.end),
    cidrTotal: cidrs.length,
    cidrPage: { page: cidrPage.page, pages: cidrPage.pages, start: cidrPage.start },
    view,
    blockProblem: requested && !requested.ok ? `${requested.problem}; showing the whole IPv${family} space.` : null,
    week,
  };
}
