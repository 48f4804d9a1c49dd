// CIDR text without walking bits: the engine's minimal CIDR cover (a few word operations per
// block) and its address text (table lookups) give exactly what the earlier bit-by-bit
// algorithm gave. That algorithm is kept here as the reference, unchanged:
// - RFC 4632 §3.1: a /n covers 2^(bits−n) addresses, a block starts on a multiple of its size;
//   the minimal cover takes, from the cursor, the largest aligned block inside the range.
// - RFC 5952 §4 (lower case, no leading zeros, the longest — first of equal — run of two or
//   more zero groups as "::") and §5 (IPv4-mapped addresses in dotted form).

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { CidrBytes, FAMILY, formatAddress, parseCidr, rangeToCidrs } from "#server/engine/addresses.ts";
import type { Family } from "#server/engine/addresses.ts";
import { collapse, rangesToCidrs, setToCidrs } from "#server/engine/address-sets.ts";
import type { Ranges } from "#server/engine/address-sets.ts";

/** The reference address text (the engine's code before the word-based rewrite). */
function referenceFormat(family: Family, value: bigint): string {
  if (family === 4) {
    const n = Number(value);
    return `${n >>> 24}.${(n >>> 16) & 255}.${(n >>> 8) & 255}.${n & 255}`;
  }
  if (value >> 32n === 0xffffn) return `::ffff:${referenceFormat(4, value & 0xffffffffn)}`;
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

/** The reference minimal cover: trailing zero bits counted one at a time, then shrunk one bit at a time. */
function referenceCover(family: Family, first: bigint, last: bigint): string[] {
  const bits = FAMILY[family].bits;
  const out: string[] = [];
  let cursor = first;
  while (cursor <= last) {
    let hostBits = 0;
    while (hostBits < bits && ((cursor >> BigInt(hostBits)) & 1n) === 0n) hostBits++;
    while (hostBits > 0 && cursor + (1n << BigInt(hostBits)) - 1n > last) hostBits--;
    out.push(`${referenceFormat(family, cursor)}/${bits - hostBits}`);
    cursor += 1n << BigInt(hostBits);
  }
  return out;
}

function referenceRanges(ranges: Ranges, family: Family): string[] {
  const out: string[] = [];
  for (let i = 0; i < ranges.length; i += 2) out.push(...referenceCover(family, ranges[i], ranges[i + 1]));
  return out;
}

/**
 * Addresses where covers change shape: anywhere, on a block boundary of any size, one either
 * side of one, the ends of the family, and (IPv6) inside ::ffff:0:0/96 and near zero runs.
 */
function address(family: Family): fc.Arbitrary<bigint> {
  const bits = FAMILY[family].bits;
  const max = FAMILY[family].max;
  const clamp = (v: bigint): bigint => (v < 0n ? 0n : v > max ? max : v);
  const aligned = fc
    .tuple(fc.bigInt({ min: 0n, max }), fc.integer({ min: 0, max: bits }), fc.integer({ min: -1, max: 1 }))
    .map(([v, k, nudge]) => clamp(((v >> BigInt(k)) << BigInt(k)) + BigInt(nudge)));
  const choices = [fc.bigInt({ min: 0n, max }), aligned, fc.constantFrom(0n, 1n, max - 1n, max)];
  if (family === 6) {
    choices.push(fc.bigInt({ min: 0n, max: 0xffffffffn }).map((v) => (0xffffn << 32n) | v)); // RFC 5952 §5
    choices.push(
      fc.tuple(fc.bigInt({ min: 0n, max }), fc.integer({ min: 0, max: 7 }), fc.integer({ min: 0, max: 8 })).map(([v, at, zeros]) => {
        let out = v;
        for (let g = at; g < Math.min(8, at + zeros); g++) out &= ~(0xffffn << BigInt(16 * (7 - g)));
        return out;
      }),
    );
  }
  return fc.oneof(...choices);
}

/** Canonical ranges of one family: a few [first, last] pairs, some short, some spanning blocks. */
function rangesOf(family: Family): fc.Arbitrary<Ranges> {
  const max = FAMILY[family].max;
  const span = fc.oneof(fc.bigInt({ min: 0n, max: 300n }), fc.bigInt({ min: 0n, max }), address(family));
  const pair = fc.tuple(address(family), span).map(([first, length]): readonly [bigint, bigint] => {
    const last = first + length > max ? max : first + length;
    return [first, last];
  });
  return fc.array(pair, { maxLength: 5 }).map((pairs) => collapse(pairs));
}

describe("minimal CIDR cover, word by word, equals the bit-by-bit reference", () => {
  test.each([4, 6] as const)("IPv%i: rangesToCidrs equals the reference and covers exactly (RFC 4632 §3.1)", (family) => {
    const bits = FAMILY[family].bits;
    fc.assert(
      fc.property(rangesOf(family), (ranges) => {
        const cidrs = rangesToCidrs(ranges, family);
        expect(cidrs).toEqual(referenceRanges(ranges, family));
        // A /n covers 2^(bits−n) addresses, so the sizes add up to the set's size.
        let covered = 0n;
        for (const c of cidrs) covered += 1n << BigInt(bits - Number(c.slice(c.indexOf("/") + 1)));
        let size = 0n;
        for (let i = 0; i < ranges.length; i += 2) size += ranges[i + 1] - ranges[i] + 1n;
        expect(covered).toBe(size);
      }),
      { numRuns: family === 4 ? 400 : 250 },
    );
  });

  test("whole families and single addresses (RFC 4632 §3.1: /0 is 2^32 or 2^128 addresses, /32 and /128 one)", () => {
    expect(rangeToCidrs(4, 0n, FAMILY[4].max)).toEqual(["0.0.0.0/0"]);
    expect(rangeToCidrs(6, 0n, FAMILY[6].max)).toEqual(["::/0"]);
    expect(rangeToCidrs(4, FAMILY[4].max, FAMILY[4].max)).toEqual(["255.255.255.255/32"]);
    expect(rangeToCidrs(6, FAMILY[6].max, FAMILY[6].max)).toEqual(["ffff:ffff:ffff:ffff:ffff:ffff:ffff:ffff/128"]);
    // Everything but the first address: one block per bit (derived from RFC 4632 §3.1).
    expect(rangeToCidrs(4, 1n, FAMILY[4].max)).toEqual(referenceCover(4, 1n, FAMILY[4].max));
    expect(rangeToCidrs(4, 1n, FAMILY[4].max).length).toBe(32);
    expect(rangeToCidrs(6, 0n, FAMILY[6].max - 1n)).toEqual(referenceCover(6, 0n, FAMILY[6].max - 1n));
    expect(rangeToCidrs(6, 0n, FAMILY[6].max - 1n).length).toBe(128);
  });

  test("setToCidrs lists IPv4 before IPv6, each ascending", () => {
    const v4 = parseCidr("192.0.2.0/24").range; // RFC 5737
    const v6 = parseCidr("2001:db8::/32").range; // RFC 3849
    expect(setToCidrs({ v4: [v4.first, v4.last + 6n], v6: [v6.first, v6.last] })).toEqual(["192.0.2.0/24", "192.0.3.0/30", "192.0.3.4/31", "2001:db8::/32"]);
  });

  test("every CIDR the cover writes parses back to the block it names", () => {
    fc.assert(
      fc.property(fc.constantFrom<Family>(4, 6), fc.nat(), (family, seed) => {
        const first = fc.sample(address(family), { seed, numRuns: 1 })[0];
        const last = first + BigInt(seed % 5000) > FAMILY[family].max ? FAMILY[family].max : first + BigInt(seed % 5000);
        let cursor = first;
        for (const cidr of rangeToCidrs(family, first, last)) {
          const block = parseCidr(cidr);
          expect(block.normalised).toBeUndefined(); // no host bits: the block is aligned
          expect(block.range.first).toBe(cursor);
          cursor = block.range.last + 1n;
        }
        expect(cursor).toBe(last + 1n);
      }),
      { numRuns: 200 },
    );
  });
});

describe("CIDR covers written as bytes (CidrBytes) are the same text", () => {
  /** The cover of `ranges` written through a buffer of `size` bytes, emptied whenever it is full. */
  function written(ranges: Ranges, family: Family, size: number): string[] {
    const piece = new CidrBytes(new Uint8Array(size), new TextEncoder().encode("<"), new TextEncoder().encode(">"));
    let text = "";
    const take = (): void => {
      text += new TextDecoder("latin1").decode(piece.bytes.subarray(0, piece.at));
      piece.at = 0;
    };
    for (let i = 0; i < ranges.length; i += 2) {
      let from: bigint | null = ranges[i];
      while ((from = piece.cover(family, from, ranges[i + 1])) !== null) take();
    }
    take();
    return text === "" ? [] : text.slice(1, -1).split("><");
  }

  test.each([4, 6] as const)("IPv%i: the reference's CIDRs, in order, whatever the buffer size", (family) => {
    fc.assert(
      fc.property(rangesOf(family), fc.integer({ min: 46, max: 400 }), (ranges, size) => {
        expect(written(ranges, family, size)).toEqual(referenceRanges(ranges, family));
      }),
      { numRuns: family === 4 ? 400 : 250 },
    );
  });

  test("whole families, the all-zero address and IPv4-mapped text (RFC 5952 §4.2, §5)", () => {
    expect(written([0n, FAMILY[4].max], 4, 64)).toEqual(["0.0.0.0/0"]);
    expect(written([0n, FAMILY[6].max], 6, 64)).toEqual(["::/0"]);
    expect(written([0n, 0n, 1n, 1n], 6, 64)).toEqual(["::/128", "::1/128"]);
    const mapped = (0xffffn << 32n) | 0xc0000201n;
    expect(written([mapped, mapped], 6, 64)).toEqual(["::ffff:192.0.2.1/128"]);
    expect(written([0x20010db8n << 96n, (0x20010db8n << 96n) + 1n], 6, 64)).toEqual(["2001:db8::/127"]);
  });
});

describe("address text equals the reference (RFC 5952 §4, §5)", () => {
  test.each([4, 6] as const)("IPv%i", (family) => {
    fc.assert(
      fc.property(address(family), (value) => {
        expect(formatAddress(family, value)).toBe(referenceFormat(family, value));
      }),
      { numRuns: 1000 },
    );
  });

  test("examples from RFC 5952", () => {
    const text = (t: string): string => formatAddress(6, parseCidr(t).range.first);
    expect(text("2001:0db8:0000:0000:0000:0000:0000:0001")).toBe("2001:db8::1"); // §4.1, §4.2.1
    expect(text("2001:db8:0:0:1:0:0:1")).toBe("2001:db8::1:0:0:1"); // §4.2.3: the first of equal runs
    expect(text("2001:0:0:1:0:0:0:1")).toBe("2001:0:0:1::1"); // §4.2.3: the longest run
    expect(text("2001:db8:0:1:1:1:1:1")).toBe("2001:db8:0:1:1:1:1:1"); // §4.2.2: one zero group stays
    expect(text("2001:DB8::AAAA")).toBe("2001:db8::aaaa"); // §4.3
    expect(text("::ffff:192.0.2.1")).toBe("::ffff:192.0.2.1"); // §5
  });
});
