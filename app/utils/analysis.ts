// Pure helpers for the reach and exposure map pages: readable address counts, block grids of
// the address space from the engine's CIDR lists, the week × hour grid from slices, and CSV
// writing. No server imports, so the browser and the unit tests can use them.
//
// Outcomes are passed as ranks (0 = silent … 5 = login-password, the order of the engine's OUTCOMES),
// so these helpers stay independent of the names.

export type Family = 4 | 6;

/** A cell with no address of the selected space (never happens for a full partition). */
export const NO_RANK = 255;

// ---------------------------------------------------------------------------------------------
// Numbers

/** A decimal string with thousands separators: "4294967296" → "4,294,967,296". */
export function groupDigits(decimal: string): string {
  return decimal.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
}

const SUPERSCRIPT: Record<string, string> = { "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };

function superscript(n: number): string {
  return String(n)
    .split("")
    .map((digit) => SUPERSCRIPT[digit] ?? digit)
    .join("");
}

/**
 * A count an engineer can read. IPv4 counts (≤ 2^32) are exact with separators. Larger counts
 * (IPv6, up to 2^128) become "2⁹⁶" when an exact power of two, else "≈ 7.9 × 10²⁸"; counts
 * below 10^15 stay exact. `exact` is the grouped decimal, for a tooltip.
 */
export function formatCount(decimal: string): { text: string; exact: string } {
  const value = BigInt(decimal);
  const exact = groupDigits(value.toString());
  if (value < 1_000_000_000_000_000n) return { text: exact, exact };
  if ((value & (value - 1n)) === 0n) return { text: `2${superscript(value.toString(2).length - 1)}`, exact };
  const digits = value.toString();
  let exponent = digits.length - 1;
  let mantissa = (Number(digits.slice(0, 3)) / 100).toFixed(1);
  if (mantissa === "10.0") {
    mantissa = "1.0";
    exponent += 1;
  }
  return { text: `≈ ${mantissa} × 10${superscript(exponent)}`, exact };
}

// ---------------------------------------------------------------------------------------------
// Addresses (the engine writes CIDRs in canonical form: dotted IPv4, RFC 5952 IPv6)

export interface Block {
  readonly family: Family;
  readonly first: bigint;
  readonly last: bigint;
}

function parseIpv4(text: string): bigint | null {
  const parts = text.split(".");
  if (parts.length !== 4) return null;
  let value = 0n;
  for (const part of parts) {
    if (!/^\d{1,3}$/.test(part) || Number(part) > 255) return null;
    value = (value << 8n) | BigInt(part);
  }
  return value;
}

function parseIpv6(text: string): bigint | null {
  const halves = text.toLowerCase().split("::");
  if (halves.length > 2) return null;
  const groupsOf = (part: string): string[] => (part === "" ? [] : part.split(":"));
  const head = groupsOf(halves[0]);
  const tail = halves.length === 2 ? groupsOf(halves[1]) : [];
  // An embedded IPv4 tail (::ffff:192.0.2.1) counts as two groups.
  const last = tail.length ? tail : head;
  const lastGroup = last[last.length - 1];
  if (lastGroup !== undefined && lastGroup.includes(".")) {
    const v4 = parseIpv4(lastGroup);
    if (v4 === null) return null;
    last.splice(last.length - 1, 1, (v4 >> 16n).toString(16), (v4 & 0xffffn).toString(16));
  }
  const missing = 8 - head.length - tail.length;
  if (halves.length === 1 ? missing !== 0 : missing < 1) return null;
  const groups = halves.length === 2 ? [...head, ...Array<string>(missing).fill("0"), ...tail] : head;
  let value = 0n;
  for (const group of groups) {
    if (!/^[0-9a-f]{1,4}$/.test(group)) return null;
    value = (value << 16n) | BigInt(`0x${group}`);
  }
  return value;
}

/** A CIDR (or a single address) as its first and last address; null when malformed. */
export function parseCidr(text: string): Block | null {
  const [address, prefixText, extra] = text.trim().split("/");
  if (extra !== undefined || address === undefined) return null;
  const family: Family = address.includes(":") ? 6 : 4;
  const bits = family === 4 ? 32 : 128;
  const value = family === 4 ? parseIpv4(address) : parseIpv6(address);
  const prefix = prefixText === undefined ? bits : /^\d{1,3}$/.test(prefixText) ? Number(prefixText) : NaN;
  if (value === null || !(prefix >= 0 && prefix <= bits)) return null;
  const hostBits = BigInt(bits - prefix);
  const first = (value >> hostBits) << hostBits;
  return { family, first, last: first + (1n << hostBits) - 1n };
}

/** Number of addresses in a CIDR list (RFC 4632 §3.1: a /n holds 2^(bits−n)). */
export function addressCount(cidrs: readonly string[]): bigint {
  let total = 0n;
  for (const text of cidrs) {
    const block = parseCidr(text);
    if (block) total += block.last - block.first + 1n;
  }
  return total;
}

// ---------------------------------------------------------------------------------------------
// Block grids: a part of the address space cut into equal blocks, each block coloured by the
// most exposed outcome present in it.

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
  const base = parseCidr(spec.base);
  if (!base) throw new Error(`bad grid base ${spec.base}`);
  const cells = new Uint8Array(gridCellCount(spec)).fill(NO_RANK);
  const shift = BigInt((spec.family === 4 ? 32 : 128) - spec.cellPrefix);
  byRank.forEach((cidrs, rank) => {
    for (const text of cidrs) {
      const block = parseCidr(text);
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

// ---------------------------------------------------------------------------------------------
// Week × hour

export const WEEK_MINUTES = 7 * 24 * 60;

export interface RankedSlice {
  /** Local week minutes (0 = Monday 00:00); end is exclusive and ≤ start when the slice wraps past Sunday 24:00. */
  readonly startMinute: number;
  readonly endMinute: number;
  readonly rank: number;
}

export interface HourCell {
  /** The most exposed rank during the hour. */
  readonly top: number;
  /** The rank changes inside this hour (a window edge not on the hour). */
  readonly changes: boolean;
  /** Set by callers: more sources get an answer in this hour than in the week's quietest slice. */
  readonly wider?: boolean;
}

/** 7 × 24 cells (index = day × 24 + hour, Monday first, device wall clock). */
export function weekHourGrid(slices: readonly RankedSlice[]): HourCell[] {
  const intervals: { start: number; end: number; rank: number }[] = [];
  for (const slice of slices) {
    if (slice.endMinute > slice.startMinute) intervals.push({ start: slice.startMinute, end: slice.endMinute, rank: slice.rank });
    else {
      // Wraps past the end of the week (a lone slice with end == start is the whole week).
      intervals.push({ start: slice.startMinute, end: WEEK_MINUTES, rank: slice.rank });
      if (slice.endMinute > 0) intervals.push({ start: 0, end: slice.endMinute, rank: slice.rank });
    }
  }
  const cells: HourCell[] = [];
  for (let hour = 0; hour < 168; hour++) {
    const start = hour * 60;
    const end = start + 60;
    const ranks = new Set<number>();
    for (const interval of intervals) if (interval.start < end && interval.end > start) ranks.add(interval.rank);
    cells.push({ top: ranks.size ? Math.max(...ranks) : NO_RANK, changes: ranks.size > 1 });
  }
  return cells;
}

// ---------------------------------------------------------------------------------------------
// CSV (RFC 4180)

/**
 * One field: quoted when it holds a comma, a double quote, CR or LF; quotes are doubled. Text
 * that a spreadsheet would run as a formula (starting with = + - @, tab or CR) gets a leading
 * apostrophe (OWASP "CSV injection" guidance); numbers are left as they are.
 */
export function csvField(value: string | number | null | undefined): string {
  const raw = value === null || value === undefined ? "" : String(value);
  const text = typeof value === "string" && /^[=+\-@\t\r]/.test(raw) ? `'${raw}` : raw;
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** Rows as CSV text, CRLF line ends (RFC 4180 §2), ending with a line break. */
export function toCsv(rows: readonly (readonly (string | number | null | undefined)[])[]): string {
  return rows.map((row) => row.map(csvField).join(",")).join("\r\n") + "\r\n";
}

/** A safe download name: letters, digits, dot, dash and underscore only. */
export function downloadName(...parts: string[]): string {
  return parts.join("-").replace(/[^A-Za-z0-9._-]/g, "_");
}

// ---------------------------------------------------------------------------------------------
// Paging

export const PAGE_SIZE = 50;

/** A 1-based page number from the URL, clamped to the pages there are. */
export function pageOf(value: string | null, total: number, size = PAGE_SIZE): { page: number; pages: number; start: number; end: number } {
  const pages = Math.max(1, Math.ceil(total / size));
  const asked = Number(value);
  const page = Number.isInteger(asked) && asked >= 1 ? Math.min(asked, pages) : 1;
  const start = (page - 1) * size;
  return { page, pages, start, end: Math.min(total, start + size) };
}
