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

const HEX_GROUP = /^[0-9A-Fa-f]{1,4}$/;

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

/** IPv6 text (any case, compressed or exploded, optional trailing dotted quad) as a bigint, or null. */
export function parseIPv6Value(text: string): bigint | null {
  if (text.length < 2 || text.length > 45) return null;
  const halves = text.split("::");
  if (halves.length > 2) return null;
  const head = halves[0] === "" ? [] : halves[0].split(":");
  const tail = halves.length === 2 ? (halves[1] === "" ? [] : halves[1].split(":")) : [];
  const groups: number[] = [];
  const tailGroups: number[] = [];
  const readGroups = (parts: string[], out: number[], mayEndInIPv4: boolean): boolean => {
    for (let i = 0; i < parts.length; i++) {
      const part = parts[i];
      if (mayEndInIPv4 && i === parts.length - 1 && part.includes(".")) {
        const v4 = parseIPv4Number(part);
        if (v4 === null) return false;
        out.push(Math.floor(v4 / 65536), v4 % 65536);
      } else {
        if (!HEX_GROUP.test(part)) return false;
        out.push(parseInt(part, 16));
      }
    }
    return true;
  };
  if (halves.length === 1) {
    if (!readGroups(head, groups, true) || groups.length !== 8) return null;
  } else {
    if (!readGroups(head, groups, false) || !readGroups(tail, tailGroups, true)) return null;
    // "::" stands for at least one zero group (RFC 4291 §2.2).
    if (groups.length + tailGroups.length > 7) return null;
    while (groups.length + tailGroups.length < 8) groups.push(0);
    groups.push(...tailGroups);
  }
  let value = 0n;
  for (const g of groups) value = (value << 16n) | BigInt(g);
  return value;
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

/** RFC 5952 text: lower case, no leading zeros, longest (first) run of ≥ 2 zero groups as "::"; IPv4-mapped as ::ffff:a.b.c.d (§5). */
export function formatAddress(family: Family, value: bigint): string {
  if (family === 4) {
    const n = Number(value);
    return `${n >>> 24}.${(n >>> 16) & 255}.${(n >>> 8) & 255}.${n & 255}`;
  }
  if (value >> 32n === 0xffffn) return `::ffff:${formatAddress(4, value & 0xffffffffn)}`;
  const groups: number[] = [];
  for (let shift = 96n; shift >= 0n; shift -= 32n) {
    const word = Number((value >> shift) & 0xffffffffn);
    groups.push(word >>> 16, word & 0xffff);
  }
  let bestStart = -1;
  let bestLength = 1;
  for (let i = 0; i < 8; ) {
    if (groups[i] !== 0) {
      i++;
      continue;
    }
    let j = i;
    while (j < 8 && groups[j] === 0) j++;
    if (j - i > bestLength) {
      bestStart = i;
      bestLength = j - i;
    }
    i = j;
  }
  const hex = (gs: number[]): string => gs.map((g) => g.toString(16)).join(":");
  if (bestStart < 0) return hex(groups);
  return `${hex(groups.slice(0, bestStart))}::${hex(groups.slice(bestStart + bestLength))}`;
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
  const a = parseAddress(trimmed.slice(0, slash));
  const prefixText = trimmed.slice(slash + 1);
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
  const bits = FAMILY[family].bits;
  const out: string[] = [];
  let cursor = first;
  while (cursor <= last) {
    // Largest aligned block starting at cursor that stays inside the range.
    let hostBits = 0;
    while (hostBits < bits && ((cursor >> BigInt(hostBits)) & 1n) === 0n) hostBits++;
    while (hostBits > 0 && cursor + (1n << BigInt(hostBits)) - 1n > last) hostBits--;
    out.push(formatCidr(family, cursor, bits - hostBits));
    cursor += 1n << BigInt(hostBits);
  }
  return out;
}

export function formatRange(family: Family, first: bigint, last: bigint): string {
  return first === last ? formatAddress(family, first) : `${formatAddress(family, first)}-${formatAddress(family, last)}`;
}
