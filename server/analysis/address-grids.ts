// The address-space picture of the exposure map: a drill-down over one entry's partition of the
// source space. A view is one block (0.0.0.0/0 at first) cut into at most 256 equal cells; a
// cell with one outcome is uniform, a cell with several is mixed and links to the smallest
// aligned block that holds every change of outcome inside it, so the reader reaches the
// boundaries in a few steps even deep in IPv6. Pure and browser-safe; addresses are read by the
// engine's own parser, so the pages accept exactly the text the engine does.
//
// Outcomes are passed as ranks (0 = silent … 5 = login-password, the order of OUTCOMES), so
// these helpers stay independent of the names.

import { AddressSyntaxError, FAMILY, formatCidr, parseCidr, pushCidrs, type AddressRange, type Family } from "../engine/addresses.ts";

/** A rank meaning "no outcome" (an hour or a cell the partition does not cover). */
export const NO_RANK = 255;

/** A CIDR (or a single address) as its first and last address; null when the engine would refuse it. */
export function cidrBlock(text: string): AddressRange | null {
  try {
    return parseCidr(text).range;
  } catch (error) {
    if (error instanceof AddressSyntaxError) return null;
    throw error;
  }
}

/** Number of addresses in a CIDR list (RFC 4632 §3.1: a /n holds 2^(bits−n)). */
export function addressCount(cidrs: readonly string[]): bigint {
  let total = 0n;
  for (const text of cidrs) {
    const block = cidrBlock(text);
    if (block) total += block.last - block.first + 1n;
  }
  return total;
}

/** The highest rank with a non-zero count, or -1 when every count is zero. */
export function topRank(counts: readonly string[]): number {
  for (let rank = counts.length - 1; rank >= 0; rank--) if (counts[rank] !== "0") return rank;
  return -1;
}

// ---------------------------------------------------------------------------------------------
// The partition as segments

/** A maximal run of addresses with one outcome. */
export interface Segment {
  readonly first: bigint;
  readonly last: bigint;
  readonly rank: number;
}

/**
 * One entry's partition (`byRank[r]` = the CIDR list of outcome rank r, one family) as sorted
 * segments, neighbours of the same rank merged. Text the engine would refuse and the other
 * family's blocks are left out.
 */
export function segmentsOf(family: Family, byRank: readonly (readonly string[])[]): Segment[] {
  const blocks: Segment[] = [];
  byRank.forEach((cidrs, rank) => {
    for (const text of cidrs) {
      const block = cidrBlock(text);
      if (block && block.family === family) blocks.push({ first: block.first, last: block.last, rank });
    }
  });
  blocks.sort((a, b) => (a.first < b.first ? -1 : a.first > b.first ? 1 : 0));
  const merged: Segment[] = [];
  for (const block of blocks) {
    const previous = merged.at(-1);
    if (previous && previous.rank === block.rank && previous.last + 1n === block.first) merged[merged.length - 1] = { ...previous, last: block.last };
    else merged.push(block);
  }
  return merged;
}

/** Index of the first segment that ends at or after `address` (binary search). */
function firstEndingAtOrAfter(segments: readonly Segment[], address: bigint): number {
  let low = 0;
  let high = segments.length;
  while (low < high) {
    const middle = (low + high) >> 1;
    if (segments[middle].last < address) low = middle + 1;
    else high = middle;
  }
  return low;
}

// ---------------------------------------------------------------------------------------------
// Zoomable views

/** Bits added per zoom level: a view has at most 2^8 = 256 cells, 16 × 16. */
export const ZOOM_STEP = 8;
/**
 * Zoom targets start on these prefix lengths, so a block reads cleanly: whole octets for IPv4
 * (/8, /16, /24) and whole hex digits for IPv6 (/32, /44, /48 …).
 */
export const ZOOM_ALIGN: Readonly<Record<Family, number>> = { 4: 8, 6: 4 };

/** The whole source space of a family, where the picture starts. */
export function rootBlock(family: Family): string {
  return family === 4 ? "0.0.0.0/0" : "::/0";
}

/** A special-purpose block worth naming on the picture (RFC 6890 registry and the address architecture). */
export interface SpecialBlock {
  readonly cidr: string;
  readonly label: string;
  readonly source: string;
  /** Drawn with a mark; global unicast is named on hover only, as it is most of the picture. */
  readonly marked?: false;
}

export const SPECIAL_BLOCKS: Readonly<Record<Family, readonly SpecialBlock[]>> = {
  4: [
    { cidr: "0.0.0.0/8", label: "This network", source: "RFC 1122" },
    { cidr: "10.0.0.0/8", label: "Private", source: "RFC 1918" },
    { cidr: "100.64.0.0/10", label: "Shared address space", source: "RFC 6598" },
    { cidr: "127.0.0.0/8", label: "Loopback", source: "RFC 1122" },
    { cidr: "169.254.0.0/16", label: "Link-local", source: "RFC 3927" },
    { cidr: "172.16.0.0/12", label: "Private", source: "RFC 1918" },
    { cidr: "192.0.2.0/24", label: "Documentation", source: "RFC 5737" },
    { cidr: "192.168.0.0/16", label: "Private", source: "RFC 1918" },
    { cidr: "198.51.100.0/24", label: "Documentation", source: "RFC 5737" },
    { cidr: "203.0.113.0/24", label: "Documentation", source: "RFC 5737" },
    { cidr: "224.0.0.0/4", label: "Multicast", source: "RFC 5771" },
    { cidr: "240.0.0.0/4", label: "Reserved", source: "RFC 1112" },
  ],
  6: [
    { cidr: "::1/128", label: "Loopback", source: "RFC 4291" },
    { cidr: "::ffff:0:0/96", label: "IPv4-mapped", source: "RFC 4291" },
    { cidr: "2001:db8::/32", label: "Documentation", source: "RFC 3849" },
    { cidr: "2000::/3", label: "Global unicast", source: "RFC 4291", marked: false },
    { cidr: "fc00::/7", label: "Unique local", source: "RFC 4193" },
    { cidr: "fe80::/10", label: "Link-local", source: "RFC 4291" },
    { cidr: "ff00::/8", label: "Multicast", source: "RFC 4291" },
  ],
};

/** The most specific special-purpose block holding all of [first, last], or null. */
function specialOf(family: Family, first: bigint, last: bigint): SpecialBlock | null {
  let best: { block: SpecialBlock; size: bigint } | null = null;
  for (const block of SPECIAL_BLOCKS[family]) {
    const range = cidrBlock(block.cidr);
    if (!range || range.first > first || range.last < last) continue;
    const size = range.last - range.first;
    if (!best || size < best.size) best = { block, size };
  }
  return best?.block ?? null;
}

export interface ZoomCell {
  readonly cidr: string;
  /** Addresses of each outcome rank in the cell, decimal. */
  readonly counts: string[];
  /** The most exposed rank present. */
  readonly top: number;
  /** Every address of the cell has the same outcome. */
  readonly uniform: boolean;
  /** For a mixed cell: the block to show next (see `changeHull`); null for a uniform cell. */
  readonly zoom: string | null;
  /** The special-purpose block the cell lies in, as "Private, RFC 1918", or null. */
  readonly special: string | null;
  /** The cell lies in special-purpose space other than global unicast (drawn with a mark). */
  readonly marked: boolean;
}

export interface ZoomView {
  readonly family: Family;
  /** The block shown, e.g. "10.0.0.0/8". */
  readonly block: string;
  /** The views from the whole space down to (not including) this one, as a reader zooms in. */
  readonly trail: string[];
  readonly cellPrefix: number;
  readonly columns: number;
  readonly cells: ZoomCell[];
  /** Addresses of each outcome rank in the whole block, decimal. */
  readonly counts: string[];
  /** The special-purpose block the whole view lies in, as "Documentation, RFC 3849", or null. */
  readonly special: string | null;
  /** The uniform cells of each outcome as minimal CIDR blocks (neighbours merged), most cells first. */
  readonly uniform: { readonly rank: number; readonly cells: number; readonly cidrs: string[] }[];
}

/**
 * The smallest block holding every change of outcome inside [first, last] — both sides of each
 * boundary — widened to the family's alignment but never beyond `minPrefix`; null when the
 * range has one outcome. Everything in the range outside the hull keeps the outcome it has at
 * the hull's edge, so zooming to the hull loses no change.
 */
export function changeHull(family: Family, segments: readonly Segment[], first: bigint, last: bigint, minPrefix: number): string | null {
  let index = firstEndingAtOrAfter(segments, first);
  let firstChange: bigint | null = null;
  let lastChange: bigint | null = null;
  let previousRank: number | null = null;
  for (; index < segments.length && segments[index].first <= last; index++) {
    const segment = segments[index];
    if (previousRank !== null && segment.rank !== previousRank) {
      // The boundary is at the segment's start (it starts inside the range: an earlier one overlapped).
      firstChange ??= segment.first;
      lastChange = segment.first;
    }
    previousRank = segment.rank;
  }
  if (firstChange === null || lastChange === null) return null;
  const bits = FAMILY[family].bits;
  // Common leading bits of the two outermost addresses on either side of a boundary.
  const differing = ((firstChange - 1n) ^ lastChange).toString(2).length;
  const align = ZOOM_ALIGN[family];
  const prefix = Math.max(minPrefix, Math.floor((bits - differing) / align) * align);
  const host = BigInt(bits - prefix);
  return formatCidr(family, (lastChange >> host) << host, prefix);
}

/** Address counts per rank over [first, last], and whether one rank has them all. */
function countsOver(segments: readonly Segment[], start: number, first: bigint, last: bigint, ranks: number): { counts: bigint[]; next: number } {
  const counts = Array<bigint>(ranks).fill(0n);
  let index = start;
  for (; index < segments.length && segments[index].first <= last; index++) {
    const segment = segments[index];
    const from = segment.first > first ? segment.first : first;
    const to = segment.last < last ? segment.last : last;
    if (from <= to && segment.rank < ranks) counts[segment.rank] += to - from + 1n;
    if (segment.last > last) break; // it continues into the next cell
  }
  return { counts, next: index };
}

/** Parses a block for the picture: a CIDR of this family, host bits cleared. */
export function parseViewBlock(family: Family, text: string): { ok: true; block: string } | { ok: false; problem: string } {
  let parsed;
  try {
    parsed = parseCidr(text);
  } catch (error) {
    if (error instanceof AddressSyntaxError) return { ok: false, problem: `"${text}" is not a CIDR block` };
    throw error;
  }
  if (parsed.range.family !== family) return { ok: false, problem: `"${text}" is not an IPv${family} block` };
  const { first, last } = parsed.range;
  const prefix = FAMILY[family].bits - (last - first + 1n).toString(2).length + 1;
  return { ok: true, block: formatCidr(family, first, prefix) };
}

function prefixOf(cidr: string): number {
  return Number(cidr.slice(cidr.indexOf("/") + 1));
}

/**
 * The view of one block: its cells (row by row, address order), their counts, uniformity and
 * zoom targets, and the breadcrumb trail from the whole space. `block` must come from
 * `parseViewBlock` (or `rootBlock`). Work: the cells plus the segments inside the block.
 */
export function zoomView(family: Family, segments: readonly Segment[], block: string, ranks = 6): ZoomView {
  const range = cidrBlock(block);
  if (!range || range.family !== family) throw new Error(`zoomView: bad block ${block}`);
  const bits = FAMILY[family].bits;
  const prefix = prefixOf(block);
  const cellPrefix = Math.min(prefix + ZOOM_STEP, bits);
  const cellCount = 2 ** (cellPrefix - prefix);
  const cellSize = 1n << BigInt(bits - cellPrefix);
  const cells: ZoomCell[] = [];
  const total = Array<bigint>(ranks).fill(0n);
  let index = firstEndingAtOrAfter(segments, range.first);
  for (let cell = 0; cell < cellCount; cell++) {
    const first = range.first + BigInt(cell) * cellSize;
    const last = first + cellSize - 1n;
    const { counts, next } = countsOver(segments, index, first, last, ranks);
    index = next;
    const present = counts.filter((count) => count > 0n).length;
    let top = NO_RANK;
    for (let rank = ranks - 1; rank >= 0; rank--) if (counts[rank] > 0n) { top = rank; break; }
    counts.forEach((count, rank) => (total[rank] += count));
    const special = specialOf(family, first, last);
    cells.push({
      cidr: formatCidr(family, first, cellPrefix),
      counts: counts.map(String),
      top,
      uniform: present === 1,
      zoom: present > 1 ? changeHull(family, segments, first, last, cellPrefix) : null,
      special: special ? `${special.label}, ${special.source}` : null,
      marked: special !== null && special.marked !== false,
    });
  }
  // Inside one special-purpose block the view says so once, instead of marking every cell.
  const whole = specialOf(family, range.first, range.last);
  if (whole) for (let cell = 0; cell < cells.length; cell++) if (cells[cell].special === `${whole.label}, ${whole.source}`) cells[cell] = { ...cells[cell], marked: false };
  // Runs of neighbouring uniform cells of one outcome, read back as CIDR blocks (RFC 4632 aggregation).
  const uniform = new Map<number, { cells: number; cidrs: string[] }>();
  for (let cell = 0; cell < cells.length; ) {
    if (!cells[cell].uniform) {
      cell += 1;
      continue;
    }
    let end = cell;
    while (end + 1 < cells.length && cells[end + 1].uniform && cells[end + 1].top === cells[cell].top) end += 1;
    const entry = uniform.get(cells[cell].top) ?? { cells: 0, cidrs: [] };
    entry.cells += end - cell + 1;
    pushCidrs(entry.cidrs, family, range.first + BigInt(cell) * cellSize, range.first + BigInt(end + 1) * cellSize - 1n);
    uniform.set(cells[cell].top, entry);
    cell = end + 1;
  }
  return {
    family,
    block,
    trail: trailTo(family, segments, block),
    cellPrefix,
    columns: 2 ** Math.ceil((cellPrefix - prefix) / 2),
    cells,
    counts: total.map(String),
    special: whole ? `${whole.label}, ${whole.source}` : null,
    uniform: [...uniform.entries()].map(([rank, entry]) => ({ rank, ...entry })).sort((a, b) => b.cells - a.cells || b.rank - a.rank),
  };
}

/**
 * The views a reader passes through from the whole space to `block` by following zoom links:
 * at each view, the cell holding the block, then that cell's zoom target when it still holds
 * the block. A block typed into the URL that no link leads to is reached from its nearest view.
 */
export function trailTo(family: Family, segments: readonly Segment[], block: string): string[] {
  const target = cidrBlock(block);
  if (!target) return [];
  const targetPrefix = prefixOf(block);
  const bits = FAMILY[family].bits;
  const trail: string[] = [];
  let view = rootBlock(family);
  while (prefixOf(view) < targetPrefix) {
    trail.push(view);
    const cellPrefix = Math.min(prefixOf(view) + ZOOM_STEP, bits);
    if (cellPrefix > targetPrefix) break; // the block is between this view and its cells
    const host = BigInt(bits - cellPrefix);
    const cellFirst = (target.first >> host) << host;
    const cellLast = cellFirst + (1n << host) - 1n;
    const hull = changeHull(family, segments, cellFirst, cellLast, cellPrefix);
    const hullRange = hull ? cidrBlock(hull) : null;
    view = hull && hullRange && prefixOf(hull) <= targetPrefix && hullRange.first <= target.first && hullRange.last >= target.last ? hull : formatCidr(family, cellFirst, cellPrefix);
  }
  return trail;
}
