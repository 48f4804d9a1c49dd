// Address-space pictures for the exposure map: the engine's CIDR lists cut into equal blocks,
// each block coloured by the most exposed outcome present in it, plus address counts. Pure and
// browser-safe (the map component draws from it); addresses are read by the engine's own
// parser, so the pages accept exactly the text the engine does.
//
// Outcomes are passed as ranks (0 = silent … 5 = login-password, the order of OUTCOMES), so
// these helpers stay independent of the names.

import { AddressSyntaxError, FAMILY, parseCidr, type AddressRange, type Family } from "../engine/addresses.ts";

/** A cell with no address of the selected space (never happens for a full partition). */
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

export interface GridSpec {
  readonly family: Family;
  /** The part shown, as a CIDR, e.g. "0.0.0.0/0" or "2000::/3". */
  readonly base: string;
  /** Prefix length of one cell, e.g. 16 (a /16 per cell). */
  readonly cellPrefix: number;
  /** Cells per row when drawn. */
  readonly columns: number;
}

/** IPv4 as 256 × 256 cells, one /16 each: row = first octet, column = second octet. */
export const IPV4_GRID: GridSpec = { family: 4, base: "0.0.0.0/0", cellPrefix: 16, columns: 256 };
/**
 * IPv6 is too large for one picture, so we show where addresses live: global unicast 2000::/3
 * as 512 cells of /12 (32 × 16), and unique local fc00::/7 as 32 cells of /12 (one row). The
 * rest (link-local, multicast, reserved) is left out of the picture; the table still has it.
 */
export const IPV6_GRIDS: readonly GridSpec[] = [
  { family: 6, base: "2000::/3", cellPrefix: 12, columns: 32 },
  { family: 6, base: "fc00::/7", cellPrefix: 12, columns: 32 },
];

export function gridCellCount(spec: GridSpec): number {
  return 2 ** (spec.cellPrefix - Number(spec.base.split("/")[1]));
}

/**
 * For each cell, the highest rank whose CIDRs touch it. `byRank[r]` is the CIDR list of
 * outcome rank r. Each list is disjoint, so the work is cells + CIDRs per rank.
 */
export function buildGrid(spec: GridSpec, byRank: readonly (readonly string[])[]): Uint8Array {
  const base = cidrBlock(spec.base);
  if (!base) throw new Error(`bad grid base ${spec.base}`);
  const cells = new Uint8Array(gridCellCount(spec)).fill(NO_RANK);
  const shift = BigInt(FAMILY[spec.family].bits - spec.cellPrefix);
  byRank.forEach((cidrs, rank) => {
    for (const text of cidrs) {
      const block = cidrBlock(text);
      if (!block || block.family !== spec.family) continue;
      const first = block.first > base.first ? block.first : base.first;
      const last = block.last < base.last ? block.last : base.last;
      if (first > last) continue;
      const from = Number((first - base.first) >> shift);
      const to = Number((last - base.first) >> shift);
      for (let cell = from; cell <= to; cell++) if (cells[cell] === NO_RANK || cells[cell] < rank) cells[cell] = rank;
    }
  });
  return cells;
}

/** How many cells have each rank as their top (index = rank). */
export function cellsPerRank(cells: Uint8Array, ranks = 6): number[] {
  const counts = Array<number>(ranks).fill(0);
  for (const rank of cells) if (rank < ranks) counts[rank] += 1;
  return counts;
}

/** A run of equal cells within one row, for drawing (one rect per run, not per cell). */
export interface CellRun {
  readonly row: number;
  readonly column: number;
  readonly length: number;
  readonly rank: number;
}

/** Row-wise run-length encoding of a grid: the demo maps are a handful of runs, the worst case one per cell. */
export function gridRuns(cells: Uint8Array, columns: number): CellRun[] {
  const runs: CellRun[] = [];
  for (let row = 0; row * columns < cells.length; row++) {
    let column = 0;
    while (column < columns) {
      const rank = cells[row * columns + column];
      let length = 1;
      while (column + length < columns && cells[row * columns + column + length] === rank) length++;
      runs.push({ row, column, length, rank });
      column += length;
    }
  }
  return runs;
}

/** The highest rank with a non-zero count, or -1 when every count is zero. */
export function topRank(counts: readonly string[]): number {
  for (let rank = counts.length - 1; rank >= 0; rank--) if (counts[rank] !== "0") return rank;
  return -1;
}
