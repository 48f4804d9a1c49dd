// The effect of a change as a reviewer's page and its JSON show it: the engine's ChangeEffect
// (server/engine/effect.ts) without its full per-cell CIDR lists, each group of sources with a
// probe inside it that `trace` replays (the 'before' outcome on the old model, the 'after'
// outcome on the new), and the picture — per interface × service, the most exposed outcome any
// source gets at any of the interface's addresses and any time of the week, before and after,
// with the pairs where some source's outcome changes marked. Pure and serialisable; tests relate
// every claim to `trace` (tests/unit/effect-view.test.ts).

import { parseCidr, formatAddress, type Family } from "../engine/addresses.ts";
import { collapse, countOf } from "../engine/address-sets.ts";
import { outcomeSets } from "../engine/exposure.ts";
import { effectSourcesPage, findingKey, instantOfWeekTime, OUTCOMES, outcomeRank } from "../engine/index.ts";
import type { ChangeEffect, CompiledModel, DiffChange, EffectGroup, Finding, Outcome, Page } from "../engine/index.ts";
import type { ChangeWitness } from "./exposure-change.ts";

/** One interface × service of the picture. `before`/`after` are null where the interface (or service) is not in that model. */
export type PictureCell = {
  interface: string;
  service: string;
  before: Outcome | null;
  after: Outcome | null;
  /** Some source's outcome changes here (at some address or time), even when the most exposed outcome stays. */
  changed: boolean;
  /** Distinct sources that get a more, and a less, exposed outcome here somewhere (decimal). */
  gains: string;
  loses: string;
  /** For a changed pair: a probe whose outcome changes (`trace` gives `witnessBefore`, then `witnessAfter`). */
  witness: (EffectWitness & { before: Outcome; after: Outcome }) | null;
};

export type EffectPicture = {
  interfaces: string[];
  services: string[];
  cells: PictureCell[];
};

export type EffectFindingLine = { key: string; code: string; severity: Finding["severity"]; title: string; elements: readonly string[] };

export type EffectGroupView = Omit<EffectGroup, "sources"> & { sources: Page<string>; witness: EffectWitness };

/** What the page and the JSON route show. */
export type EffectView = Omit<ChangeEffect, "cells" | "groups" | "findings"> & {
  groups: EffectGroupView[];
  findings: { new: EffectFindingLine[]; resolved: EffectFindingLine[]; unchanged: number };
  picture: EffectPicture;
  /** The time zone the witnesses' week times were read in (the device's, after the change). */
  timezone: string;
};

type Pairs = Record<Family, Array<[bigint, bigint]>>;
const emptyPairs = (): Pairs => ({ 4: [], 6: [] });

function addRanges(into: Pairs, cidrs: readonly string[]): void {
  for (const text of cidrs) {
    const { range } = parseCidr(text);
    into[range.family].push([range.first, range.last]);
  }
}

const distinct = (pairs: Pairs): string => (countOf(collapse(pairs[4])) + countOf(collapse(pairs[6]))).toString();

/** A probe `trace` replays, and when in the device's week it holds: "all week", or the stretch ("mon 08:00 – fri 17:00"). */
export type EffectWitness = ChangeWitness & { when: string };

/** A probe inside one transition of a cell: its first source, at the start of the cell's stretch of the week. */
function witnessOf(cell: DiffChange, ranges: readonly string[], timezone: string): EffectWitness {
  const first = parseCidr(ranges[0]).range;
  const when = cell.start === "mon 00:00" && cell.end === "sun 24:00" ? "all week" : `${cell.start} – ${cell.end}`;
  return { from: formatAddress(first.family, first.first), interface: cell.interface, service: cell.service, to: cell.to, at: instantOfWeekTime(cell.start, timezone), when };
}

/** Per "interface|service": the most exposed rank any source gets at any own address and time; absent where the interface has no address. */
function worstRanks(engine: CompiledModel): Map<string, number> {
  const worst = new Map<string, number>();
  engine.interfaceAddresses.forEach((addresses, iface) => {
    const name = engine.model.interfaces[iface].name;
    for (const to of addresses) {
      for (let cls = 0; cls < engine.catalogue.length; cls++) {
        const key = `${name}|${engine.catalogue[cls].name}`;
        let rank = worst.get(key) ?? 0;
        for (const partition of engine.weekOutcomes(iface, to, cls)) {
          const counts = outcomeSets(engine, partition).counts;
          for (let r = counts.length - 1; r > rank; r--) if (counts[r] !== 0n) rank = r;
        }
        worst.set(key, rank);
      }
    }
  });
  return worst;
}

/** The picture: every interface × service of either model, before and after, changed pairs marked. */
export function effectPicture(before: CompiledModel, after: CompiledModel, cells: readonly DiffChange[], timezone: string): EffectPicture {
  const was = worstRanks(before);
  const now = worstRanks(after);
  const interfaces = [...new Set([...after.model.interfaces.map((entry) => entry.name), ...before.model.interfaces.map((entry) => entry.name)])];
  const services = [...new Set([...after.catalogue.map((service) => service.name), ...before.catalogue.map((service) => service.name)])];
  const moves = new Map<string, { gains: Pairs; loses: Pairs; witness: PictureCell["witness"] }>();
  for (const cell of cells) {
    const key = `${cell.interface}|${cell.service}`;
    let entry = moves.get(key);
    if (!entry) moves.set(key, (entry = { gains: emptyPairs(), loses: emptyPairs(), witness: null }));
    for (const transition of cell.transitions) {
      addRanges(outcomeRank(transition.after) > outcomeRank(transition.before) ? entry.gains : entry.loses, transition.ranges);
      entry.witness ??= { ...witnessOf(cell, transition.ranges, timezone), before: transition.before, after: transition.after };
    }
  }
  const out: PictureCell[] = [];
  for (const name of interfaces) {
    for (const service of services) {
      const key = `${name}|${service}`;
      const b = was.get(key);
      const a = now.get(key);
      if (b === undefined && a === undefined) continue;
      const move = moves.get(key);
      out.push({
        interface: name,
        service,
        before: b === undefined ? null : OUTCOMES[b],
        after: a === undefined ? null : OUTCOMES[a],
        changed: move !== undefined,
        gains: move ? distinct(move.gains) : "0",
        loses: move ? distinct(move.loses) : "0",
        witness: move?.witness ?? null,
      });
    }
  }
  return { interfaces, services, cells: out };
}

const lineOf = (finding: Finding): EffectFindingLine => ({ key: findingKey(finding), code: finding.code, severity: finding.severity, title: finding.title, elements: finding.elements });

/**
 * The view of an effect: its groups each with a witness probe and, for `page.group`, the
 * sources page asked for (the others show their first page).
 */
export function effectView(effect: ChangeEffect, picture: EffectPicture, timezone: string, page: { group?: string; offset?: number; limit?: number } = {}): EffectView {
  const { cells, groups, findings, ...rest } = effect;
  return {
    ...rest,
    timezone,
    groups: groups.map((group): EffectGroupView => {
      const cell = cells.find((candidate) => candidate.transitions.some((t) => `${t.before}>${t.after}` === group.key));
      const transition = cell?.transitions.find((t) => `${t.before}>${t.after}` === group.key);
      // Every group comes from some cell's transition (effect.ts groupsOf), so both are found.
      if (!cell || !transition) throw new Error(`effectView: no cell for group ${group.key}`);
      const sources = page.group === group.key ? effectSourcesPage(effect, group.key, page.offset ?? 0, page.limit ?? group.sources.limit) : group.sources;
      return { ...group, sources, witness: witnessOf(cell, transition.ranges, timezone) };
    }),
    findings: {
      new: findings.new.map(lineOf),
      resolved: findings.resolved.map(lineOf),
      unchanged: findings.unchanged.length,
    },
    picture,
  };
}
