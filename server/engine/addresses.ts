// Addresses: one integer per address with a family tag. Parsing is strict and loud;
// output text follows RFC 5952 for IPv6.

export type Family = 4 | 6;

export interface FamilyInfo {
  readonly family: Family;
  readonly bits: number;
  /** Number of addresses in the family: 2^32 or 2^128. */
  readonly size: bigint;
  readonly max: bigint;
}

export const FAMILY: Readonly<Record<Family, FamilyInfo>> = {
  4: { family: 4, bits: 32, size: 1n << 32n, max: (1n << 32n) - 1n },
  6: { family: 6, bits: 128, size: 1n << 128n, max: (1n << 128n) - 1n },
};

export interface Address {
  readonly family: Family;
  readonly value: bigint;
}

/** A closed range [first, last] inside one family. */
export interface AddressRange {
  readonly family: Family;
  readonly first: bigint;
  readonly last: bigint;
}

/** Thrown for text that is not an address, CIDR or range; the message quotes the input. */
export class AddressSyntaxError extends Error {
  override name = "AddressSyntaxError";
}

/** A group of one to four hex digits (any case) as a number, or -1. */
function readHexGroup(part: string): number {
  if (part.length === 0 || part.length > 4) return -1;
  let value = 0;
  for (let i = 0; i < part.length; i++) {
    const c = part.charCodeAt(i);
    const digit = c >= 48 && c <= 57 ? c - 48 : c >= 97 && c <= 102 ? c - 87 : c >= 65 && c <= 70 ? c - 55 : -1;
    if (digit < 0) return -1;
    value = value * 16 + digit;
  }
  return value;
}

/** IPv4 dotted quad as a number, or null. Four parts, no leading zeros (they read as octal elsewhere). */
export function parseIPv4Number(text: string): number | null {
  let value = 0;
  let parts = 0;
  let octet = 0;
  let digits = 0;
  for (let i = 0; i <= text.length; i++) {
    const c = i < text.length ? text.charCodeAt(i) : 46; // a final "."
    if (c === 46) {
      if (digits === 0 || octet > 255 || ++parts > 4) return null;
      value = value * 256 + octet;
      octet = 0;
      digits = 0;
    } else if (c >= 48 && c <= 57) {
      if (digits > 0 && octet === 0) return null; // leading zero
      octet = octet * 10 + (c - 48);
      if (++digits > 3) return null;
    } else {
      return null;
    }
  }
  return parts === 4 ? value : null;
}

/** Scratch for the groups of an IPv6 address being read (parsing never re-enters itself). */
const READ_GROUPS = new Float64Array(8);
const READ_WORDS: Words = new Float64Array(4);

/** IPv6 text (any case, compressed or exploded, optional trailing dotted quad) as a bigint, or null. */
export function parseIPv6Value(text: string): bigint | null {
  if (text.length < 2 || text.length > 45) return null;
  const halves = text.split("::");
  if (halves.length > 2) return null;
  const head = halves[0] === "" ? [] : halves[0].split(":");
  const tail = halves.length === 2 ? (halves[1] === "" ? [] : halves[1].split(":")) : [];
  const g = READ_GROUPS;
  /** Reads parts into g from `at`; the count of groups after them, or -1 (more than 8 is -1 too). */
  const readGroups = (parts: string[], at: number, mayEndInIPv4: boolean): number => {
    for (let i = 0; i < parts.length; i++) {
      const part = parts[i];
      if (mayEndInIPv4 && i === parts.length - 1 && part.includes(".")) {
        const v4 = parseIPv4Number(part);
        if (v4 === null || at + 2 > 8) return -1;
        g[at++] = Math.floor(v4 / 65536);
        g[at++] = v4 % 65536;
      } else {
        const group = readHexGroup(part);
        if (group < 0 || at + 1 > 8) return -1;
        g[at++] = group;
      }
    }
    return at;
  };
  if (halves.length === 1) {
    if (readGroups(head, 0, true) !== 8) return null;
  } else {
    const before = readGroups(head, 0, false);
    if (before < 0) return null;
    // The tail is read after the head's groups, then moved to the end; "::" stands for at least one zero group (RFC 4291 §2.2).
    const end = readGroups(tail, before, true);
    if (end < 0 || end > 7) return null;
    const after = end - before;
    g.copyWithin(8 - after, before, end);
    g.fill(0, before, 8 - after);
  }
  const w = READ_WORDS;
  for (let i = 0; i < 4; i++) w[i] = g[2 * i] * 65536 + g[2 * i + 1];
  return fromWords(w);
}

/** Parses one address; throws AddressSyntaxError quoting the input. */
export function parseAddress(text: string): Address {
  if (text.includes(":")) {
    if (text.includes("%")) throw new AddressSyntaxError(`zone indexes are not accepted in "${text}"`);
    const value = parseIPv6Value(text);
    if (value === null) throw new AddressSyntaxError(`"${text}" is not an IPv6 address`);
    return { family: 6, value };
  }
  const v4 = parseIPv4Number(text);
  if (v4 === null) {
    throw new AddressSyntaxError(`"${text}" is not an IPv4 address (four decimal parts 0-255, no leading zeros)`);
  }
  return { family: 4, value: BigInt(v4) };
}

// Text pieces looked up rather than converted: octets in decimal (with and without the dot
// that follows), bytes in hex, prefix lengths with their slash.
const OCTETS: readonly string[] = Array.from({ length: 256 }, (_, i) => String(i));
const OCTETS_DOT: readonly string[] = OCTETS.map((o) => `${o}.`);
const HEX: readonly string[] = Array.from({ length: 256 }, (_, i) => i.toString(16));
const HEX2: readonly string[] = Array.from({ length: 256 }, (_, i) => i.toString(16).padStart(2, "0"));
const SLASH_PREFIX: readonly string[] = Array.from({ length: 129 }, (_, i) => `/${i}`);
/** 2^0 … 2^32 as numbers (a lookup: `2 ** n` is a call to pow in the hot loop). */
const POW2: readonly number[] = Array.from({ length: 33 }, (_, i) => 2 ** i);

/** Dotted-quad text of an IPv4 address held as a number in [0, 2^32). */
function formatIPv4Number(n: number): string {
  return OCTETS_DOT[n >>> 24] + OCTETS_DOT[(n >>> 16) & 255] + OCTETS_DOT[(n >>> 8) & 255] + OCTETS[n & 255];
}

/** Lower-case hex of one 16-bit group without leading zeros (RFC 5952 §4.1, §4.3), alone and after a colon; filled as groups are met. */
const GROUP_TEXT: (string | undefined)[] = new Array<string | undefined>(65536);
const COLON_GROUP_TEXT: (string | undefined)[] = new Array<string | undefined>(65536);

function hexGroup(g: number): string {
  return (GROUP_TEXT[g] ??= g > 255 ? HEX[g >>> 8] + HEX2[g & 255] : HEX[g]);
}

function colonHexGroup(g: number): string {
  return (COLON_GROUP_TEXT[g] ??= `:${hexGroup(g)}`);
}

/** An IPv6 address as four 32-bit words (numbers), most significant first; filled by toWords. */
type Words = Float64Array;
const TWO_32 = 4294967296;

function toWords(value: bigint, out: Words): Words {
  const hi = value >> 64n;
  out[0] = Number(hi >> 32n);
  out[1] = Number(BigInt.asUintN(32, hi));
  out[2] = Number(BigInt.asUintN(32, value >> 32n));
  out[3] = Number(BigInt.asUintN(32, value));
  return out;
}

/** Scratch for the eight groups of an IPv6 address (formatting never re-enters itself). */
const GROUPS = new Uint16Array(8);

/**
 * The eight groups of an IPv6 address (four 32-bit words) into GROUPS, and the run of zero
 * groups "::" stands for as start × 16 + length, or -1 (RFC 5952 §4.2.2–4.2.3: the longest
 * run of two or more zero groups, the first of equals).
 */
function groupsAndRun(w: Words): number {
  const g = GROUPS;
  for (let i = 0; i < 4; i++) {
    g[2 * i] = w[i] >>> 16;
    g[2 * i + 1] = w[i] & 0xffff;
  }
  let bestStart = -1;
  let bestLength = 1;
  for (let i = 0; i < 8; ) {
    if (g[i] !== 0) {
      i++;
      continue;
    }
    let j = i + 1;
    while (j < 8 && g[j] === 0) j++;
    if (j - i > bestLength) {
      bestStart = i;
      bestLength = j - i;
    }
    i = j;
  }
  return bestStart < 0 ? -1 : bestStart * 16 + bestLength;
}

/** Whether the words are an IPv4-mapped address (::ffff:a.b.c.d, RFC 5952 §5). */
function isMappedIPv4(w: Words): boolean {
  return w[0] === 0 && w[1] === 0 && w[2] === 0xffff;
}

/** RFC 5952 text of an IPv6 address given as four 32-bit words. */
function formatIPv6Words(w: Words): string {
  if (isMappedIPv4(w)) return `::ffff:${formatIPv4Number(w[3])}`;
  const run = groupsAndRun(w);
  const g = GROUPS;
  if (run < 0) {
    let text = hexGroup(g[0]);
    for (let i = 1; i < 8; i++) text += colonHexGroup(g[i]);
    return text;
  }
  const bestStart = run >>> 4;
  // "::" is the colon that ends the groups before the run (or starts the text) and the one
  // that starts each group after it.
  let text = ":";
  if (bestStart > 0) {
    text = hexGroup(g[0]);
    for (let i = 1; i < bestStart; i++) text += colonHexGroup(g[i]);
    text += ":";
  }
  const after = bestStart + (run & 15);
  if (after === 8) return `${text}:`;
  for (let i = after; i < 8; i++) text += colonHexGroup(g[i]);
  return text;
}

function fromWords(w: Words): bigint {
  return (BigInt(w[0]) << 96n) | (BigInt(w[1]) << 64n) | (BigInt(w[2]) << 32n) | BigInt(w[3]);
}

// ASCII bytes of the same texts, for writers that fill byte buffers (the CLI's JSON output).
const DOT = 46;
const COLON = 58;
const SLASH = 47;
const HEX_DIGIT = new Uint8Array(Array.from("0123456789abcdef", (c) => c.charCodeAt(0)));
const MAPPED_PREFIX = new Uint8Array(Array.from("::ffff:", (c) => c.charCodeAt(0)));

/** Decimal ASCII of 0–255 looked up, four bytes each: the length, then the digits. */
const DECIMAL = new Uint8Array(256 * 4);
for (let n = 0; n < 256; n++) {
  const text = String(n);
  DECIMAL[n * 4] = text.length;
  for (let k = 0; k < text.length; k++) DECIMAL[n * 4 + 1 + k] = text.charCodeAt(k);
}

/** Writes a number in 0–255 (an octet, a prefix length) in decimal at `at`; returns the offset after it. */
function writeDecimal(n: number, bytes: Uint8Array, at: number): number {
  const i = n << 2;
  const length = DECIMAL[i];
  bytes[at] = DECIMAL[i + 1];
  if (length > 1) {
    bytes[at + 1] = DECIMAL[i + 2];
    if (length > 2) bytes[at + 2] = DECIMAL[i + 3];
  }
  return at + length;
}

/** Writes an IPv4 address (a number) as dotted-quad ASCII at `at`; returns the offset after it. */
function writeIPv4Number(n: number, bytes: Uint8Array, at: number): number {
  at = writeDecimal(n >>> 24, bytes, at);
  bytes[at++] = DOT;
  at = writeDecimal((n >>> 16) & 255, bytes, at);
  bytes[at++] = DOT;
  at = writeDecimal((n >>> 8) & 255, bytes, at);
  bytes[at++] = DOT;
  return writeDecimal(n & 255, bytes, at);
}

/** Writes a 16-bit group in lower-case hex without leading zeros; returns the offset after it. */
function writeHexGroup(g: number, bytes: Uint8Array, at: number): number {
  if (g >= 0x1000) bytes[at++] = HEX_DIGIT[g >>> 12];
  if (g >= 0x100) bytes[at++] = HEX_DIGIT[(g >>> 8) & 15];
  if (g >= 0x10) bytes[at++] = HEX_DIGIT[(g >>> 4) & 15];
  bytes[at++] = HEX_DIGIT[g & 15];
  return at;
}

/** Writes the RFC 5952 text of an IPv6 address (four 32-bit words) as ASCII; returns the offset after it. */
function writeIPv6Words(w: Words, bytes: Uint8Array, at: number): number {
  if (isMappedIPv4(w)) {
    bytes.set(MAPPED_PREFIX, at);
    return writeIPv4Number(w[3], bytes, at + MAPPED_PREFIX.length);
  }
  const run = groupsAndRun(w);
  const g = GROUPS;
  const start = run < 0 ? 8 : run >>> 4;
  for (let i = 0; i < start; i++) {
    if (i > 0) bytes[at++] = COLON;
    at = writeHexGroup(g[i], bytes, at);
  }
  if (run < 0) return at;
  // "::": the colon ending the groups before the run (or starting the text), then one before each group after it.
  bytes[at++] = COLON;
  const after = start + (run & 15);
  if (after === 8) {
    bytes[at++] = COLON;
    return at;
  }
  for (let i = after; i < 8; i++) {
    bytes[at++] = COLON;
    at = writeHexGroup(g[i], bytes, at);
  }
  return at;
}

/** Longest CIDR text in bytes: "ffff:ffff:ffff:ffff:ffff:ffff:ffff:ffff/128". */
const MAX_CIDR_BYTES = 43;

/**
 * Writes minimal CIDR covers (pushCidrs' CIDRs, in its order) as ASCII into a byte buffer
 * from `at`, each CIDR between `before` and `after`, with no string per CIDR.
 */
export class CidrBytes {
  at = 0;
  private readonly limit: number;

  constructor(
    readonly bytes: Uint8Array,
    private readonly before: Uint8Array,
    private readonly after: Uint8Array,
  ) {
    this.limit = bytes.length - (MAX_CIDR_BYTES + before.length + after.length);
  }

  /**
   * Writes the cover of [first, last] while the buffer has room for one more CIDR. Returns
   * null when the cover is complete, else the first address of the next CIDR: go on from
   * there once the buffer is emptied (`at` = 0).
   */
  cover(family: Family, first: bigint, last: bigint): bigint | null {
    const bytes = this.bytes;
    // The texts around each CIDR, copied in loops here (a helper per copy measured slower).
    const before = this.before;
    const after = this.after;
    let at = this.at;
    if (family === 4) {
      let cursor = Number(first);
      const end = Number(last);
      while (cursor <= end) {
        if (at > this.limit) {
          this.at = at;
          return BigInt(cursor);
        }
        const host = ipv4BlockHost(cursor, end);
        for (let k = 0; k < before.length; k++) bytes[at++] = before[k];
        at = writeIPv4Number(cursor, bytes, at);
        bytes[at++] = SLASH;
        at = writeDecimal(32 - host, bytes, at);
        for (let k = 0; k < after.length; k++) bytes[at++] = after[k];
        cursor += POW2[host];
      }
      this.at = at;
      return null;
    }
    const c = toWords(first, CURSOR);
    const l = toWords(last, LAST);
    for (;;) {
      if (at > this.limit) {
        this.at = at;
        return fromWords(c);
      }
      const step = ipv6BlockHost(c, l);
      const host = step & 255;
      for (let k = 0; k < before.length; k++) bytes[at++] = before[k];
      at = writeIPv6Words(c, bytes, at);
      bytes[at++] = SLASH;
      at = writeDecimal(128 - host, bytes, at);
      for (let k = 0; k < after.length; k++) bytes[at++] = after[k];
      if (step > 255) {
        this.at = at;
        return null;
      }
      advanceWords(c, host);
    }
  }
}

const FORMAT_WORDS: Words = new Float64Array(4);

/** RFC 5952 text: lower case, no leading zeros, longest (first) run of ≥ 2 zero groups as "::"; IPv4-mapped as ::ffff:a.b.c.d (§5). */
export function formatAddress(family: Family, value: bigint): string {
  if (family === 4) return formatIPv4Number(Number(value));
  return formatIPv6Words(toWords(value, FORMAT_WORDS));
}

export function formatCidr(family: Family, first: bigint, prefix: number): string {
  return `${formatAddress(family, first)}/${prefix}`;
}

export interface ParsedEntry {
  readonly range: AddressRange;
  /** Set when a CIDR had host bits: the normalised text, for the warning. */
  readonly normalised?: string;
}

const PREFIX = /^(0|[1-9][0-9]{0,2})$/;

/** Parses a CIDR, a single address or a range "A-B" (same family, A ≤ B). */
export function parseEntry(text: string): ParsedEntry {
  const trimmed = text.trim();
  const dash = trimmed.indexOf("-");
  if (dash >= 0) {
    const a = parseAddress(trimmed.slice(0, dash).trim());
    const b = parseAddress(trimmed.slice(dash + 1).trim());
    if (a.family !== b.family) throw new AddressSyntaxError(`range "${text}" mixes IPv4 and IPv6`);
    if (a.value > b.value) throw new AddressSyntaxError(`range "${text}" ends before it starts`);
    return { range: { family: a.family, first: a.value, last: b.value } };
  }
  return parseCidr(text);
}

/**
 * Parses a CIDR or a single address (its /32 or /128); host bits are cleared. The pages read
 * the engine's CIDR lists with this too, so both accept exactly the same text.
 */
export function parseCidr(text: string): ParsedEntry {
  const trimmed = text.trim();
  const slash = trimmed.indexOf("/");
  if (slash < 0) {
    const a = parseAddress(trimmed);
    return { range: { family: a.family, first: a.value, last: a.value } };
  }
  const addressText = trimmed.slice(0, slash);
  const prefixText = trimmed.slice(slash + 1);
  // IPv4 on numbers (exact below 2^32): two BigInts per CIDR, not six bigint steps.
  const v4 = addressText.includes(":") ? null : parseIPv4Number(addressText);
  if (v4 !== null) {
    if (!PREFIX.test(prefixText) || Number(prefixText) > 32) throw new AddressSyntaxError(`"${text}" has an invalid prefix length (0-32)`);
    const prefix = Number(prefixText);
    const size = POW2[32 - prefix];
    const first = v4 - (v4 % size);
    const range = { family: 4 as const, first: BigInt(first), last: BigInt(first + size - 1) };
    return first === v4 ? { range } : { range, normalised: formatCidr(4, range.first, prefix) };
  }
  const a = parseAddress(addressText);
  const info = FAMILY[a.family];
  if (!PREFIX.test(prefixText) || Number(prefixText) > info.bits) {
    throw new AddressSyntaxError(`"${text}" has an invalid prefix length (0-${info.bits})`);
  }
  const prefix = Number(prefixText);
  const hostBits = BigInt(info.bits - prefix);
  const first = (a.value >> hostBits) << hostBits;
  const last = first + (1n << hostBits) - 1n;
  const range = { family: a.family, first, last };
  return first === a.value ? { range } : { range, normalised: formatCidr(a.family, first, prefix) };
}

/** An interface address "192.0.2.1/24" or "192.0.2.1": the address itself; the prefix only describes the link. */
export function parseInterfaceAddress(text: string): Address & { readonly prefix: number } {
  const slash = text.indexOf("/");
  const a = parseAddress(slash < 0 ? text : text.slice(0, slash));
  const bits = FAMILY[a.family].bits;
  if (slash < 0) return { ...a, prefix: bits };
  const prefixText = text.slice(slash + 1);
  if (!PREFIX.test(prefixText) || Number(prefixText) > bits) {
    throw new AddressSyntaxError(`"${text}" has an invalid prefix length (0-${bits})`);
  }
  return { ...a, prefix: Number(prefixText) };
}

/** Minimal CIDR cover of [first, last] (RFC 4632 aggregation), ascending. */
export function rangeToCidrs(family: Family, first: bigint, last: bigint): string[] {
  const out: string[] = [];
  pushCidrs(out, family, first, last);
  return out;
}

/**
 * Appends the minimal CIDR cover of [first, last] to out. Each block is the largest one that
 * starts at the cursor: 2^h addresses with h the smaller of the cursor's trailing zero bits
 * (alignment) and ⌊log2(addresses left)⌋ (RFC 4632 §3.1: a /n holds 2^(bits−n) addresses).
 * IPv4 works on numbers; IPv6 on four 32-bit words, so a block costs a few number
 * operations and no bigint arithmetic.
 */
export function pushCidrs(out: string[], family: Family, first: bigint, last: bigint): void {
  if (family === 4) {
    // Every IPv4 value, count and block size is an exact double below 2^33.
    let cursor = Number(first);
    const end = Number(last);
    while (cursor <= end) {
      const host = ipv4BlockHost(cursor, end);
      out.push(formatIPv4Number(cursor) + SLASH_PREFIX[32 - host]);
      cursor += POW2[host];
    }
    return;
  }
  const c = toWords(first, CURSOR);
  const l = toWords(last, LAST);
  for (;;) {
    const step = ipv6BlockHost(c, l);
    const host = step & 255;
    out.push(formatIPv6Words(c) + SLASH_PREFIX[128 - host]);
    if (step > 255) return;
    advanceWords(c, host);
  }
}

/** Host bits of the largest block at the IPv4 cursor that ends at or before `last`. */
function ipv4BlockHost(cursor: number, last: number): number {
  const left = last - cursor + 1;
  const bySize = left >= TWO_32 ? 32 : 31 - Math.clz32(left);
  const aligned = cursor === 0 ? 32 : 31 - Math.clz32(cursor & -cursor);
  return aligned < bySize ? aligned : bySize;
}

/** Host bits of the largest block at the IPv6 cursor c that ends at or before l; 256 more when it ends at l (the last block). */
function ipv6BlockHost(c: Words, l: Words): number {
  const d = LEFT;
  // d = last − cursor + 1 (addresses left); a carry out of the top word means all 2^128.
  let borrow = 0;
  for (let i = 3; i >= 0; i--) {
    let v = l[i] - c[i] - borrow;
    borrow = v < 0 ? 1 : 0;
    if (borrow === 1) v += TWO_32;
    d[i] = v;
  }
  let carry = 1;
  for (let i = 3; i >= 0 && carry === 1; i--) {
    if (d[i] === TWO_32 - 1) d[i] = 0;
    else {
      d[i] += 1;
      carry = 0;
    }
  }
  const bySize = carry === 1 ? 128 : floorLog2Words(d);
  const aligned = trailingZerosWords(c);
  const host = aligned < bySize ? aligned : bySize;
  return host === bySize && isPowerOfTwoWords(d, carry) ? host + 256 : host;
}

/** cursor += 2^host (host < 128, and no carry leaves the top word: the cursor stays ≤ last). */
function advanceWords(c: Words, host: number): void {
  let i = 3 - (host >>> 5);
  let v = c[i] + POW2[host & 31];
  while (v >= TWO_32) {
    c[i] = v - TWO_32;
    i--;
    v = c[i] + 1;
  }
  c[i] = v;
}

const CURSOR: Words = new Float64Array(4);
const LAST: Words = new Float64Array(4);
const LEFT: Words = new Float64Array(4);

/** Trailing zero bits of a 128-bit value in words (128 for zero). */
function trailingZerosWords(w: Words): number {
  for (let i = 3; i >= 0; i--) {
    const word = w[i];
    if (word !== 0) return (3 - i) * 32 + 31 - Math.clz32(word & -word);
  }
  return 128;
}

/** ⌊log2⌋ of a non-zero 128-bit value in words. */
function floorLog2Words(w: Words): number {
  for (let i = 0; i < 4; i++) if (w[i] !== 0) return (3 - i) * 32 + 31 - Math.clz32(w[i]);
  return -1;
}

/** Whether the value in words (with a carry out of the top meaning 2^128) is a power of two. */
function isPowerOfTwoWords(w: Words, carry: number): boolean {
  let bits = carry;
  for (let i = 0; i < 4 && bits <= 1; i++) {
    const word = w[i];
    if (word !== 0) bits += (word & (word - 1)) === 0 ? 1 : 2;
  }
  return bits === 1;
}

export function formatRange(family: Family, first: bigint, last: bigint): string {
  return first === last ? formatAddress(family, first) : `${formatAddress(family, first)}-${formatAddress(family, last)}`;
}
