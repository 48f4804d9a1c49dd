// The effect's address-space picture (server/analysis/effect-space.ts) against `trace` on the
// base and the draft. For a source address on one interface × service, its moves are the pairs
// (outcome on the base, outcome on the draft) that differ at some address of the interface and
// some time of the week, traced at every slice start of either model; its outcome after is the
// most exposed outcome it gets on the draft anywhere. Every uniform cell's first, middle and
// last address must have exactly the cell's moves and outcome after (unchanged cells: none);
// every kind counted in a mixed cell is witnessed by an address of the cell; every zoom link
// leads to a valid view that still holds a change of kind. Semantics: PRODUCT.md §3 (trace,
// slices); the drill-down: docs/decisions/009.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { cidrBlock, parseViewBlock, rootBlock, ZOOM_ALIGN, zoomView, type ZoomView } from "#server/analysis/address-grids";
import { effectSpaces, effectSpaceView, type EffectSpace, type SpaceKind } from "#server/analysis/effect-space";
import { formatAddress, parseCidr, type Family } from "#server/engine/addresses";
import { collapse, countOf } from "#server/engine/address-sets";
import { changeEffect, OUTCOMES, outcomeRank, trace, type CompiledModel, type DeviceModelInput, type DiffChange, type Outcome } from "#server/engine/index";
import { instantOfWeekMinute } from "#server/engine/week-times";
import { generateModel, prng, SMALL_SIZE } from "#server/engine/testing/generate-model";
import { RULE_EDITS } from "#tests/engine/random-edits";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs";
import { compiled, proposedTerminal, TERMINAL } from "#tests/support/terminal-gateway";

/** The proposal: a deny on mgmt above the NOC's rule, contractor web all week, ping only from the contractor, the v6 NOC's ssh dropped. */
const PROPOSED: DeviceModelInput = proposedTerminal([{ id: "ping-contractor", interface: "wan", sources: ["contractor"], destinations: ["any"], services: ["ping"], action: "allow" }]);

/** What trace says about one source on one interface × service: its moves and its most exposed outcome on the draft. */
type Traced = { moves: Set<string>; after: Outcome | null };

/** A tracer for a base and a draft: every address of the interface in the source's family, at every slice start of either model. */
function tracer(before: CompiledModel, after: CompiledModel) {
  const starts = [...new Set([...before.week.slices, ...after.week.slices].map((slice) => slice.start))];
  const instants = starts.map((minute) => instantOfWeekMinute(after, minute));
  const destinations = (device: CompiledModel, iface: string, family: Family) => {
    const index = device.model.interfaces.findIndex((entry) => entry.name === iface);
    return index < 0 ? [] : device.interfaceAddresses[index].filter((to) => device.addresses[to].family === family).map((to) => device.addresses[to].text);
  };
  return (iface: string, service: string, family: Family, address: bigint): Traced => {
    const from = formatAddress(family, address);
    const moves = new Set<string>();
    let worst = -1;
    const targets = [...new Set([...destinations(before, iface, family), ...destinations(after, iface, family)])];
    for (const to of targets) {
      for (const at of instants) {
        const was = trace(before, { from, interface: iface, service, to, at }).outcome;
        const now = trace(after, { from, interface: iface, service, to, at }).outcome;
        if (was !== now) moves.add(`${was}>${now}`);
        worst = Math.max(worst, outcomeRank(now as Outcome));
      }
    }
    return { moves, after: worst < 0 ? null : OUTCOMES[worst] };
  };
}

const kindWords = (kind: SpaceKind) => ({ moves: new Set(kind.moves.map((move) => `${move.before}>${move.after}`)), after: kind.after });
const prefixOf = (cidr: string) => Number(cidr.slice(cidr.indexOf("/") + 1));

/** Checks one view of a space against trace; returns the views its zoom links open. */
function checkView(space: EffectSpace, view: ZoomView, traced: ReturnType<typeof tracer>, sample: (count: number) => number[]): ZoomView[] {
  const { family } = space;
  const at = (address: bigint) => traced(space.interface, space.service, family, address);
  const next: ZoomView[] = [];
  for (const index of sample(view.cells.length)) {
    const cell = view.cells[index];
    const block = cidrBlock(cell.cidr)!;
    expect(cell.counts.reduce((total, count) => total + BigInt(count), 0n), cell.cidr).toBe(block.last - block.first + 1n); // RFC 4632 §3.1
    if (cell.uniform) {
      const kind = kindWords(space.kinds[cell.top]);
      for (const address of [block.first, (block.first + block.last) / 2n, block.last]) expect(at(address), `${formatAddress(family, address)} in ${cell.cidr}`).toEqual(kind);
      continue;
    }
    // Mixed: every kind counted in the cell has an address of the cell that traces to it.
    cell.counts.forEach((count, rank) => {
      if (count === "0") return;
      const segment = space.segments.find((candidate) => candidate.rank === rank && candidate.last >= block.first && candidate.first <= block.last)!;
      const address = segment.first > block.first ? segment.first : block.first;
      expect(at(address), `kind ${rank} in ${cell.cidr}`).toEqual(kindWords(space.kinds[rank]));
    });
    const zoom = cell.zoom!;
    expect(parseViewBlock(family, zoom)).toEqual({ ok: true, block: zoom });
    const target = cidrBlock(zoom)!;
    expect(target.first >= block.first && target.last <= block.last, `${zoom} inside ${cell.cidr}`).toBe(true);
    expect(prefixOf(zoom) === view.cellPrefix || prefixOf(zoom) % ZOOM_ALIGN[family] === 0, zoom).toBe(true);
    // No change of kind is lost outside the zoom block: the cell's edges are of the block's edge kinds.
    expect(at(block.first)).toEqual(at(target.first));
    expect(at(block.last)).toEqual(at(target.last));
    const zoomed = zoomView(family, space.segments, zoom, space.kinds.length);
    expect(zoomed.counts.filter((count) => count !== "0").length, `${zoom} shows a change of kind`).toBeGreaterThan(1);
    expect(zoomed.trail).toEqual([...view.trail, view.block]);
    next.push(zoomed);
  }
  return next;
}

/** The distinct sources of the family that move on interface × service, from the diff's CIDR lists alone. */
function movingCount(cells: readonly DiffChange[], iface: string, service: string, family: Family): bigint {
  const pairs: Array<[bigint, bigint]> = [];
  for (const cell of cells) {
    if (cell.interface !== iface || cell.service !== service) continue;
    for (const transition of cell.transitions) {
      for (const text of transition.ranges) {
        const { range } = parseCidr(text);
        if (range.family === family) pairs.push([range.first, range.last]);
      }
    }
  }
  return countOf(collapse(pairs));
}

describe("The effect's address-space picture against trace on the base and the draft", () => {
  const before = compiled(TERMINAL);
  const after = compiled(PROPOSED, before);
  const effect = changeEffect(before, after);
  const spaces = effectSpaces(after, effect.cells);
  const traced = tracer(before, after);

  test("There is a space for each interface × service × family where a source moves, and only those", () => {
    const expected = new Set<string>();
    for (const cell of effect.cells) for (const transition of cell.transitions) for (const text of transition.ranges) expected.add(`${cell.interface} ${cell.service} ${parseCidr(text).range.family}`);
    expect(new Set(spaces.map((space) => `${space.interface} ${space.service} ${space.family}`))).toEqual(expected);
    // The NOC's v4 logins on mgmt, the v6 NOC's ssh on wan, ping from the internet, the contractor's weekend https.
    expect(expected).toEqual(new Set(["mgmt ssh 4", "mgmt https 4", "wan ssh 6", "wan ping 4", "wan ping 6", "wan https 4"]));
  });

  test.each(spaces.map((space) => [`${space.interface} ${space.service} IPv${space.family}`, space] as const))("%s: every cell a reader can reach agrees with trace", (_name, space) => {
    expect(BigInt(space.changed)).toBe(movingCount(effect.cells, space.interface, space.service, space.family));
    const queue = [zoomView(space.family, space.segments, rootBlock(space.family), space.kinds.length)];
    let marked = 0n;
    for (const cell of queue[0].cells) cell.counts.forEach((count, rank) => (marked += space.kinds[rank].moves.length > 0 ? BigInt(count) : 0n));
    expect(marked, "the changed cells hold exactly the sources that move").toBe(BigInt(space.changed));
    for (let seen = 0; queue.length > 0 && seen < 6; seen++) queue.push(...checkView(space, queue.shift()!, traced, (count) => [...Array(count).keys()]));
  }, 60_000);

  test("The NOC's /24 is marked on mgmt ssh: login with second factor → no answer, and no answer after everywhere around it", () => {
    const space = spaces.find((candidate) => candidate.interface === "mgmt" && candidate.service === "ssh" && candidate.family === 4)!;
    expect(space.changed).toBe("256"); // RFC 4632: a /24 holds 256 addresses
    const view = effectSpaceView(spaces, { interface: "mgmt", service: "ssh", family: "4", block: "10.60.4.0/24" })!;
    expect(view.problem).toBeNull();
    expect(view.view.cells.every((cell) => cell.uniform)).toBe(true);
    expect(new Set(view.view.cells.map((cell) => JSON.stringify(space.kinds[cell.top])))).toEqual(new Set([JSON.stringify({ after: "silent", moves: [{ before: "login-mfa", after: "silent" }] })]));
    // A block of the wrong family falls back to the whole space, with a note.
    const fallback = effectSpaceView(spaces, { interface: "mgmt", service: "ssh", family: "4", block: "2001:db8::/32" })!;
    expect(fallback.view.block).toBe("0.0.0.0/0");
    expect(fallback.problem).toContain("not an IPv4 block");
  });

  test("A page asking for no space, or one that does not change, is shown the first that does; nothing changes, no view", () => {
    expect(effectSpaceView(spaces, {})).toMatchObject({ interface: spaces[0].interface, service: spaces[0].service });
    expect(effectSpaceView(spaces, { interface: "mgmt", service: "ping" })?.interface).toBe(spaces[0].interface);
    expect(effectSpaceView([], {})).toBeNull();
  });
});

describe("On random models and one-rule edits, the picture agrees with trace", () => {
  const BUDGET = { numRuns: 12, timeoutMs: 60_000 } as const satisfies PropertyBudget;
  test(
    "Random walks down the zoom links of every changed space",
    () => {
      const edits = Object.values(RULE_EDITS);
      fc.assert(
        fc.property(fc.integer(), fc.integer(), (seed, walkSeed) => {
          const input = generateModel(seed, SMALL_SIZE).model;
          const before = compiled(input);
          const rnd = prng(walkSeed);
          const pick = () => Math.floor(rnd() * 1_000_000);
          const edited = edits[pick() % edits.length](before.model, pick);
          const after = compiled(edited, before);
          const effect = changeEffect(before, after);
          const spaces = effectSpaces(after, effect.cells);
          const traced = tracer(before, after);
          for (const space of spaces.slice(0, 3)) {
            expect(BigInt(space.changed)).toBe(movingCount(effect.cells, space.interface, space.service, space.family));
            let view: ZoomView | undefined = zoomView(space.family, space.segments, rootBlock(space.family), space.kinds.length);
            for (let depth = 0; view && depth < 5; depth++) {
              const current: ZoomView = view;
              const mixed = current.cells.flatMap((cell, index) => (cell.uniform ? [] : [index]));
              const next = checkView(space, current, traced, (count) => [...new Set([...Array.from({ length: 4 }, () => Math.floor(rnd() * count)), ...mixed.slice(0, 3)])].sort((a, b) => a - b));
              view = next.length ? next[Math.floor(rnd() * next.length)] : undefined;
            }
          }
        }),
        propertyParameters(BUDGET),
      );
    },
    BUDGET.timeoutMs,
  );
});
