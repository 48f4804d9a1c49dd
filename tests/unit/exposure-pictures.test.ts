// The exposure map's pictures against the engine's own answers: every uniform cell of the
// address-space drill-down has the outcome `trace` gives for a probe from inside it, every mixed
// cell's counts are witnessed by probes, every zoom link leads to a valid view that still holds
// every change of outcome, and the week × hour view's changing and steady sources really change
// and really stay. Demo devices (seeders/devices) and random models (fast-check).
// Semantics: PRODUCT.md §3 (trace, exposure map); the pictures: server/analysis/address-grids.ts,
// server/analysis/week-hours.ts.

import { readdirSync, readFileSync } from "node:fs";
import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { cidrBlock, parseViewBlock, rootBlock, segmentsOf, ZOOM_ALIGN, zoomView, type ZoomView } from "#server/analysis/address-grids";
import { answerExposure, entryKey, exposureQueryOf, familyOf } from "#server/analysis/exposure.server";
import { FAMILY, formatAddress, type Family } from "#server/engine/addresses";
import { compileModel, exposure, OUTCOMES, parseModel, trace, type CompiledModel, type ExposureEntry } from "#server/engine/index";
import { generateModel, prng, SMALL_SIZE } from "#server/engine/testing/generate-model";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs";

const AT = "2025-03-18T10:00"; // a Tuesday morning on the device clock
const DEMO_DIRECTORY = new URL("../../seeders/devices/", import.meta.url);
const DEMO_NAMES = readdirSync(DEMO_DIRECTORY)
  .filter((name) => name.endsWith(".json") && name !== "index.json")
  .map((name) => name.replace(/\.json$/, ""));

function compiled(input: unknown): CompiledModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return compileModel(parsed.model);
}
const demoDevice = (name: string) => compiled(JSON.parse(readFileSync(new URL(`${name}.json`, DEMO_DIRECTORY), "utf8")));

const prefixOf = (cidr: string) => Number(cidr.slice(cidr.indexOf("/") + 1));
const sizeOf = (cidr: string) => {
  const block = cidrBlock(cidr)!;
  return block.last - block.first + 1n;
};
const sum = (counts: readonly string[]) => counts.reduce((total, count) => total + BigInt(count), 0n);

/** What `trace` says for a probe from `address` on this entry (the exposure map's probe: no account, PRODUCT.md §3). */
function outcomeFrom(device: CompiledModel, entry: ExposureEntry, family: Family, address: bigint, at: string | number) {
  return trace(device, { from: formatAddress(family, address), interface: entry.interface, service: entry.service, to: entry.to, at }).outcome;
}

/**
 * Checks one view against trace and returns the views its zoom links lead to. `sample` picks the
 * cells to probe (all of them for the demo devices, a few for random models).
 */
function checkView(device: CompiledModel, entry: ExposureEntry, view: ZoomView, at: string | number, sample: (count: number) => number[]): ZoomView[] {
  const family = familyOf(entry.to);
  const segments = segmentsOf(family, OUTCOMES.map((outcome) => entry.ranges[outcome]));
  expect(sum(view.counts)).toBe(sizeOf(view.block)); // the cells cover the block exactly (RFC 4632 §3.1)
  expect(view.cells.length).toBe(2 ** (view.cellPrefix - prefixOf(view.block)));
  // The view in words: uniform cells merged into blocks, each block's ends traced to its outcome.
  expect(view.uniform.reduce((total, group) => total + group.cells, 0) + view.cells.filter((cell) => !cell.uniform).length).toBe(view.cells.length);
  for (const group of view.uniform) {
    for (const text of group.cidrs.slice(0, 4)) {
      const range = cidrBlock(text)!;
      expect(outcomeFrom(device, entry, family, range.first, at), text).toBe(OUTCOMES[group.rank]);
      expect(outcomeFrom(device, entry, family, range.last, at), text).toBe(OUTCOMES[group.rank]);
    }
  }
  const next: ZoomView[] = [];
  for (const index of sample(view.cells.length)) {
    const cell = view.cells[index];
    const block = cidrBlock(cell.cidr)!;
    expect(sum(cell.counts), cell.cidr).toBe(block.last - block.first + 1n);
    if (cell.uniform) {
      // Witness: the cell's colour is what trace says from its first, middle and last address.
      for (const address of [block.first, (block.first + block.last) / 2n, block.last]) {
        expect(outcomeFrom(device, entry, family, address, at), `${formatAddress(family, address)} in ${cell.cidr}`).toBe(OUTCOMES[cell.top]);
      }
      expect(cell.zoom).toBeNull();
      continue;
    }
    // Mixed: each outcome counted in the cell is traced from an address of the cell.
    OUTCOMES.forEach((outcome, rank) => {
      if (cell.counts[rank] === "0") return;
      const hit = entry.ranges[outcome].map((text) => cidrBlock(text)!).find((range) => range.last >= block.first && range.first <= block.last)!;
      const address = hit.first > block.first ? hit.first : block.first;
      expect(outcomeFrom(device, entry, family, address, at), `${outcome} in ${cell.cidr}`).toBe(outcome);
    });
    expect(cell.top).toBe(Math.max(...OUTCOMES.map((_, rank) => rank).filter((rank) => cell.counts[rank] !== "0")));
    // The zoom link: a block the page accepts, inside the cell, on an aligned prefix.
    const zoom = cell.zoom!;
    expect(parseViewBlock(family, zoom)).toEqual({ ok: true, block: zoom });
    const target = cidrBlock(zoom)!;
    expect(target.first >= block.first && target.last <= block.last, `${zoom} inside ${cell.cidr}`).toBe(true);
    expect(prefixOf(zoom) === view.cellPrefix || prefixOf(zoom) % ZOOM_ALIGN[family] === 0, zoom).toBe(true);
    // No change is lost: outside the zoom block the cell keeps the outcome of the block's edges.
    expect(outcomeFrom(device, entry, family, block.first, at)).toBe(outcomeFrom(device, entry, family, target.first, at));
    expect(outcomeFrom(device, entry, family, block.last, at)).toBe(outcomeFrom(device, entry, family, target.last, at));
    const zoomed = zoomView(family, segments, zoom);
    expect(zoomed.counts.filter((count) => count !== "0").length, `${zoom} shows a change`).toBeGreaterThan(1);
    // The breadcrumb of the view a link opens leads back through the view the link was on.
    expect(zoomed.trail).toEqual([...view.trail, view.block]);
    next.push(zoomed);
  }
  return next;
}

describe("The address-space drill-down against trace", () => {
  test.each(DEMO_NAMES)("%s: every cell a reader can reach agrees with trace, and every zoom link is valid", (name) => {
    const device = demoDevice(name);
    const atMs = device.instantOf(AT, Date.now());
    const entries = exposure(device, atMs).entries;
    expect(entries.length).toBeGreaterThan(0);
    let mixedSeen = 0;
    for (const entry of entries) {
      const family = familyOf(entry.to);
      const segments = segmentsOf(family, OUTCOMES.map((outcome) => entry.ranges[outcome]));
      // Breadth first from the whole space, a bounded number of views per entry.
      const queue = [zoomView(family, segments, rootBlock(family))];
      for (let seen = 0; queue.length && seen < 3; seen++) {
        const view = queue.shift()!;
        mixedSeen += view.cells.filter((cell) => !cell.uniform).length;
        queue.push(...checkView(device, entry, view, atMs, (count) => [...Array(count).keys()]));
      }
    }
    // Every demo device answers someone on some entry, so the walk crossed mixed cells.
    expect(mixedSeen).toBeGreaterThan(0);
  }, 60_000);

  test("An exposed and a hardened device no longer draw the same picture", () => {
    const root = (name: string, iface: string, service: string) => {
      const entry = exposure(demoDevice(name), AT).entries.find((candidate) => candidate.interface === iface && candidate.service === service && !candidate.to.includes(":"))!;
      return zoomView(4, segmentsOf(4, OUTCOMES.map((outcome) => entry.ranges[outcome])), rootBlock(4));
    };
    // seeders/devices/README.md: clf-gw-02's console answers the internet; bwc-edge-01 answers only its operators.
    const exposed = root("clf-gw-02", "outside", "https");
    const hardened = root("bwc-edge-01", "mgmt", "https");
    const tops = (view: ZoomView) => view.cells.map((cell) => `${cell.top}${cell.uniform ? "" : "+"}`).join();
    expect(tops(exposed)).not.toBe(tops(hardened));
    expect(exposed.cells.filter((cell) => cell.uniform && cell.top === OUTCOMES.indexOf("login-password")).length).toBeGreaterThan(200);
    expect(hardened.cells.filter((cell) => cell.uniform && cell.top === 0).length).toBeGreaterThan(200);
  });

  const BUDGET = { numRuns: 20, timeoutMs: 30_000 } as const satisfies PropertyBudget;
  test("On random models, random walks down the zoom links agree with trace", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, walkSeed) => {
        const generated = generateModel(seed, SMALL_SIZE);
        const device = compiled(generated.model);
        const rnd = prng(walkSeed);
        const atMs = Date.UTC(2025, 2, 17) + Math.floor(rnd() * 7 * 1440) * 60_000;
        const entries = exposure(device, atMs).entries;
        if (entries.length === 0) return;
        const entry = entries[Math.floor(rnd() * entries.length)];
        const family = familyOf(entry.to);
        const segments = segmentsOf(family, OUTCOMES.map((outcome) => entry.ranges[outcome]));
        // A few random cells per view, always including every mixed one that leads on.
        let view: ZoomView | undefined = zoomView(family, segments, rootBlock(family));
        for (let depth = 0; view && depth < 6; depth++) {
          const current: ZoomView = view;
          const mixed = current.cells.flatMap((cell, index) => (cell.uniform ? [] : [index]));
          const next = checkView(device, entry, current, atMs, (count) => [...new Set([...Array.from({ length: 6 }, () => Math.floor(rnd() * count)), ...mixed.slice(0, 4)])].sort((a, b) => a - b));
          view = next.length ? next[Math.floor(rnd() * next.length)] : undefined;
        }
      }),
      propertyParameters(BUDGET),
    );
  }, BUDGET.timeoutMs);
});

describe("The week × hour view against trace", () => {
  /** The device-clock text of a week minute in the week of 17 March 2025 (no daylight-saving change in the demo and generated zones). */
  const localAt = (minute: number) => {
    const day = 17 + Math.floor(minute / 1440);
    const time = minute % 1440;
    return `2025-03-${String(day).padStart(2, "0")}T${String(Math.floor(time / 60)).padStart(2, "0")}:${String(time % 60).padStart(2, "0")}`;
  };

  test("clf-fw-01: the vendor's addresses light the support-window hours with a second-factor login; the operator network answers every hour alike", () => {
    // seeders/devices/README.md: quillstone-support (203.0.113.128/27) reaches https Mon–Fri 08:00–17:00 only; lf-noc (198.51.100.64/27) always.
    const device = demoDevice("clf-fw-01");
    const answer = answerExposure(device, exposureQueryOf(new URL(`http://x/?at=${AT}&interface=outside&service=https&family=4`)));
    if (!answer.ok || !answer.focus) throw new Error("no focused entry");
    const week = answer.focus.week!;
    expect(week.changing).toEqual(["203.0.113.128/27"]);
    expect(week.changingCount).toBe("32"); // a /27 holds 2^5 (RFC 4632 §3.1)
    expect(week.steady[OUTCOMES.indexOf("login-mfa")]).toBe("32");
    const entry = exposure(device, AT).entries.find((candidate) => entryKey(candidate) === answer.focus!.key)!;
    for (let hour = 0; hour < 168; hour++) {
      const cell = week.hours[hour];
      expect(cell.changes).toBe(false); // the window's edges are on the hour
      const at = localAt(hour * 60 + 30);
      // Every address of the changing /27 answers alike, so its first and last are witnesses of the hour's colour.
      for (const address of ["203.0.113.128", "203.0.113.159"]) {
        expect(trace(device, { from: address, interface: "outside", service: "https", to: entry.to, at }).outcome, `${address} at ${at}`).toBe(OUTCOMES[cell.top]);
      }
      expect(trace(device, { from: "198.51.100.70", interface: "outside", service: "https", to: entry.to, at }).outcome).toBe("login-mfa");
    }
    const lit = week.hours.flatMap((cell, hour) => (cell.top === OUTCOMES.indexOf("login-mfa") ? [hour] : []));
    expect(lit).toEqual([0, 1, 2, 3, 4].flatMap((day) => Array.from({ length: 9 }, (_, hour) => day * 24 + 8 + hour)));
  });

  const BUDGET = { numRuns: 15, timeoutMs: 30_000 } as const satisfies PropertyBudget;
  test("On random models with schedules, changing addresses change between slices and steady ones never do", () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer(), (seed, pickSeed) => {
        const device = compiled(generateModel(seed, SMALL_SIZE).model);
        if (device.week.slices.length < 2) return;
        const rnd = prng(pickSeed);
        const slices = exposure(device).slices;
        const entries = slices[0].entries;
        const entry = entries[Math.floor(rnd() * entries.length)];
        const answer = answerExposure(device, { ...exposureQueryOf(new URL("http://x/")), at: localAt(slices[0].startMinute), focus: entryKey(entry) });
        if (!answer.ok || !answer.focus?.week) throw new Error("no week view");
        const week = answer.focus.week;
        const family = familyOf(entry.to);
        const outcomesOver = (address: string) => new Set(slices.map((slice) => trace(device, { from: address, interface: entry.interface, service: entry.service, to: entry.to, at: localAt(slice.startMinute) }).outcome));
        for (const block of week.changing.slice(0, 3)) expect(outcomesOver(formatAddress(family, cidrBlock(block)!.first)).size, block).toBeGreaterThan(1);
        // A steady address: the first of the space, unless it changes.
        const changingRanges = week.changing.map((block) => cidrBlock(block)!);
        const candidates = [0n, FAMILY[family].max, ...changingRanges.map((range) => range.last + 1n)].filter((address) => address <= FAMILY[family].max && !changingRanges.some((range) => range.first <= address && address <= range.last));
        if (week.changingBlocks === week.changing.length) for (const address of candidates.slice(0, 3)) expect(outcomesOver(formatAddress(family, address)).size).toBe(1);
        expect(sum(week.steady) + BigInt(week.changingCount)).toBe(FAMILY[family].size); // steady and changing split the space (RFC 4632 §3.1)
      }),
      propertyParameters(BUDGET),
    );
  }, BUDGET.timeoutMs);
});
