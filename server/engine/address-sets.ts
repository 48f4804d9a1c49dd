// Address sets: per family, sorted non-overlapping non-adjacent closed ranges stored flat
// as [first0, last0, first1, last1, …]. CIDRs only appear at the edges.

import { FAMILY, pushCidrs } from "./addresses.ts";
import type { AddressRange, Family } from "./addresses.ts";

/** Flat sorted ranges [first0, last0, …]; adjacent or overlapping ranges are always merged. */
export type Ranges = readonly bigint[];

export interface AddressSet {
  readonly v4: Ranges;
  readonly v6: Ranges;
}

export const EMPTY_SET: AddressSet = { v4: [], v6: [] };
export const ALL_IPV4: Ranges = [0n, FAMILY[4].max];
export const ALL_IPV6: Ranges = [0n, FAMILY[6].max];
export const ANY_SET: AddressSet = { v4: ALL_IPV4, v6: ALL_IPV6 };

export function rangesOf(set: AddressSet, family: Family): Ranges {
  return family === 4 ? set.v4 : set.v6;
}

/** Sorts and merges arbitrary pairs into canonical Ranges. */
export function collapse(pairs: readonly (readonly [bigint, bigint])[]): Ranges {
  const sorted = [...pairs].sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0));
  const out: bigint[] = [];
  for (const [first, last] of sorted) pushMerged(out, first, last);
  return out;
}

/** Appends [first, last] (first ≥ every earlier first), merging with the previous range when they touch. */
function pushMerged(out: bigint[], first: bigint, last: bigint): void {
  const n = out.length;
  if (n > 0 && first <= out[n - 1] + 1n) {
    if (last > out[n - 1]) out[n - 1] = last;
  } else {
    out.push(first, last);
  }
}

export function setFromRanges(ranges: readonly AddressRange[]): AddressSet {
  const v4: [bigint, bigint][] = [];
  const v6: [bigint, bigint][] = [];
  for (const r of ranges) (r.family === 4 ? v4 : v6).push([r.first, r.last]);
  return { v4: collapse(v4), v6: collapse(v6) };
}

export function union(a: Ranges, b: Ranges): Ranges {
  if (a.length === 0) return b;
  if (b.length === 0) return a;
  const out: bigint[] = [];
  let i = 0;
  let j = 0;
  while (i < a.length || j < b.length) {
    let first: bigint;
    let last: bigint;
    if (j >= b.length || (i < a.length && a[i] <= b[j])) {
      first = a[i];
      last = a[i + 1];
      i += 2;
    } else {
      first = b[j];
      last = b[j + 1];
      j += 2;
    }
    pushMerged(out, first, last);
  }
  return out;
}

export function intersect(a: Ranges, b: Ranges): Ranges {
  const out: bigint[] = [];
  let i = 0;
  let j = 0;
  while (i < a.length && j < b.length) {
    const first = a[i] > b[j] ? a[i] : b[j];
    const last = a[i + 1] < b[j + 1] ? a[i + 1] : b[j + 1];
    if (first <= last) out.push(first, last);
    if (a[i + 1] < b[j + 1]) i += 2;
    else j += 2;
  }
  return out;
}

export function complement(a: Ranges, family: Family): Ranges {
  const out: bigint[] = [];
  let cursor = 0n;
  for (let i = 0; i < a.length; i += 2) {
    if (a[i] > cursor) out.push(cursor, a[i] - 1n);
    cursor = a[i + 1] + 1n;
  }
  if (cursor <= FAMILY[family].max) out.push(cursor, FAMILY[family].max);
  return out;
}

export function subtract(a: Ranges, b: Ranges, family: Family): Ranges {
  if (a.length === 0 || b.length === 0) return a;
  return intersect(a, complement(b, family));
}

export function isSubset(a: Ranges, b: Ranges): boolean {
  return equalRanges(intersect(a, b), a);
}

export function equalRanges(a: Ranges, b: Ranges): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

export function contains(a: Ranges, value: bigint): boolean {
  let lo = 0;
  let hi = a.length / 2 - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (value < a[2 * mid]) hi = mid - 1;
    else if (value > a[2 * mid + 1]) lo = mid + 1;
    else return true;
  }
  return false;
}

export function countOf(a: Ranges): bigint {
  let n = 0n;
  for (let i = 0; i < a.length; i += 2) n += a[i + 1] - a[i] + 1n;
  return n;
}

export function unionSets(a: AddressSet, b: AddressSet): AddressSet {
  return { v4: union(a.v4, b.v4), v6: union(a.v6, b.v6) };
}

export function subtractSets(a: AddressSet, b: AddressSet): AddressSet {
  return { v4: subtract(a.v4, b.v4, 4), v6: subtract(a.v6, b.v6, 6) };
}

export function isEmptySet(a: AddressSet): boolean {
  return a.v4.length === 0 && a.v6.length === 0;
}

/** Minimal CIDR list of a set of ranges, ascending (one array, no spreading of intermediate lists). */
export function rangesToCidrs(a: Ranges, family: Family, out: string[] = []): string[] {
  for (let i = 0; i < a.length; i += 2) pushCidrs(out, family, a[i], a[i + 1]);
  return out;
}

export function setToCidrs(a: AddressSet): string[] {
  return rangesToCidrs(a.v6, 6, rangesToCidrs(a.v4, 4));
}

