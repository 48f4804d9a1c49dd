// Addresses and address sets checked against published sources and, differentially,
// against general-purpose IP libraries from npm (ip-num, ipaddr.js, netmask).

import fc from "fast-check";
import ipaddr from "ipaddr.js";
import { IPv4CidrRange, IPv6CidrRange, RangedSet } from "ip-num";
import { Netmask } from "netmask";
import { describe, expect, test } from "vitest";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs.ts";
import {
  AddressSyntaxError,
  formatAddress,
  parseAddress,
  parseEntry,
  parseIPv4Number,
  parseIPv6Value,
  parseCidr,
  rangeToCidrs,
} from "#server/engine/addresses.ts";
import type { Family } from "#server/engine/addresses.ts";
import {
  collapse,
  complement,
  contains,
  countOf,
  intersect,
  subtract,
  union,
} from "#server/engine/address-sets.ts";
import type { Ranges } from "#server/engine/address-sets.ts";

const size = (text: string): bigint => {
  const r = parseEntry(text).range;
  return r.last - r.first + 1n;
};

describe("address counts from published sources", () => {
  test.each([
    ["10.0.0.0/8", 16_777_216n, "RFC 1918 §3"],
    ["172.16.0.0/12", 1_048_576n, "RFC 1918 §3"],
    ["192.168.0.0/16", 65_536n, "RFC 1918 §3"],
    ["192.0.2.0/24", 256n, "RFC 5737"],
    ["198.51.100.0/24", 256n, "RFC 5737"],
    ["203.0.113.0/24", 256n, "RFC 5737"],
    ["100.64.0.0/10", 4_194_304n, "RFC 6598"],
    ["169.254.0.0/16", 65_536n, "RFC 3927"],
    ["127.0.0.0/8", 16_777_216n, "RFC 1122 §3.2.1.3"],
    ["224.0.0.0/4", 268_435_456n, "RFC 5771"],
    ["240.0.0.0/4", 268_435_456n, "RFC 1112 §4"],
    ["255.255.255.255/32", 1n, "RFC 919 / RFC 6890"],
    ["2001:db8::/32", 2n ** 96n, "RFC 3849"],
    ["fc00::/7", 2n ** 121n, "RFC 4193"],
    ["fe80::/10", 2n ** 118n, "RFC 4291 §2.5.6"],
    ["ff00::/8", 2n ** 120n, "RFC 4291 §2.7"],
    ["::1/128", 1n, "RFC 4291 §2.5.3"],
    ["::/128", 1n, "RFC 4291 §2.5.2"],
  ])("%s holds %s addresses (%s)", (cidr, expected) => {
    expect(size(cidr)).toBe(expected);
  });

  test("the three RFC 1918 blocks hold 17,891,328 addresses together (RFC 1918, sum)", () => {
    const set = collapse(["10.0.0.0/8", "172.16.0.0/12", "192.168.0.0/16"].map((t) => {
      const r = parseEntry(t).range;
      return [r.first, r.last] as const;
    }));
    expect(countOf(set)).toBe(17_891_328n);
  });

  test.each([32, 31, 30, 24, 16, 8, 0])("a /%i holds 2^(32-n) addresses (RFC 4632 §3.1)", (n) => {
    expect(size(`0.0.0.0/${n}`)).toBe(2n ** BigInt(32 - n));
  });

  test.each([
    ["172.15.255.255", "172.16.0.0/12", false, "RFC 1918"],
    ["172.32.0.0", "172.16.0.0/12", false, "RFC 1918"],
    ["172.31.255.255", "172.16.0.0/12", true, "RFC 1918"],
    ["100.63.255.255", "100.64.0.0/10", false, "RFC 6598"],
    ["100.128.0.0", "100.64.0.0/10", false, "RFC 6598"],
    ["fbff:ffff:ffff:ffff:ffff:ffff:ffff:ffff", "fc00::/7", false, "RFC 4193"],
    ["fe00::", "fc00::/7", false, "RFC 4193"],
    ["fec0::", "fe80::/10", false, "RFC 4291 §2.5.6"],
    ["239.255.255.255", "224.0.0.0/4", true, "RFC 5771"],
  ])("%s in %s is %s (%s boundary)", (address, cidr, inside) => {
    const a = parseAddress(address);
    const r = parseEntry(cidr).range;
    expect(a.family === r.family && r.first <= a.value && a.value <= r.last).toBe(inside);
  });
});

describe("RFC 5952 text form", () => {
  test.each([
    ["2001:0db8::0001", "2001:db8::1", "§4.1 leading zeros"],
    ["2001:db8:0:0:0:0:2:1", "2001:db8::2:1", "§4.2.1 longest run"],
    ["2001:db8::1:1:1:1:1", "2001:db8:0:1:1:1:1:1", "§4.2.2 one zero field is not ::"],
    ["2001:0:0:1:0:0:0:1", "2001:0:0:1::1", "§4.2.3 longest run"],
    ["2001:db8:0:0:1:0:0:1", "2001:db8::1:0:0:1", "§4.2.3 first of equal runs"],
    ["2001:DB8::ABCD:EF", "2001:db8::abcd:ef", "§4.3 lower case"],
    ["::ffff:192.0.2.1", "::ffff:192.0.2.1", "§5 IPv4-mapped"],
    ["0:0:0:0:0:0:0:0", "::", "§4.2"],
  ])("%s → %s (%s)", (input, expected) => {
    const a = parseAddress(input);
    expect(formatAddress(a.family, a.value)).toBe(expected);
  });
});

describe("strict parsing", () => {
  test.each([
    "10.0.0", // short IPv4 forms are malformed (brief §3)
    "10.0.0.256",
    "010.0.0.1", // leading zero
    "1.2.3.4.5",
    "1..2.3",
    "",
    "2001:db8::1::2",
    "2001:db8:0:0:0:0:0:0:1",
    "12345::",
    "fe80::1%eth0",
    "2001:db8::g",
    "1:2:3:4:5:6:7::8",
  ])("rejects %j", (text) => {
    expect(() => parseAddress(text)).toThrow(AddressSyntaxError);
  });

  test.each(["192.0.2.0/33", "2001:db8::/129", "192.0.2.0/024", "192.0.2.9-192.0.2.1", "192.0.2.1-2001:db8::1"])("rejects entry %j", (text) => {
    expect(() => parseEntry(text)).toThrow(AddressSyntaxError);
  });

  test("a CIDR with host bits set is normalised and says so", () => {
    expect(parseEntry("192.0.2.77/24").normalised).toBe("192.0.2.0/24");
    expect(parseEntry("2001:db8::1/32").normalised).toBe("2001:db8::/32");
    expect(parseEntry("192.0.2.0/24").normalised).toBeUndefined();
  });
});

describe("minimal CIDR cover", () => {
  test("192.0.2.10–192.0.2.20 is 192.0.2.10/31, .12/30, .16/30, .20/32 (derived, RFC 4632 aggregation)", () => {
    const r = parseEntry("192.0.2.10-192.0.2.20").range;
    expect(rangeToCidrs(4, r.first, r.last)).toEqual(["192.0.2.10/31", "192.0.2.12/30", "192.0.2.16/30", "192.0.2.20/32"]);
  });

  test("192.24.0.0/21 + /22 + /22 aggregate to 192.24.0.0/20, and with 192.24.16.0/20 to /19 (RFC 1519 §5.1)", () => {
    const parts = ["192.24.0.0/21", "192.24.8.0/22", "192.24.12.0/22"].map((t) => {
      const r = parseEntry(t).range;
      return [r.first, r.last] as const;
    });
    const set = collapse(parts);
    expect(cidrsOf(set, 4)).toEqual(["192.24.0.0/20"]);
    const r = parseEntry("192.24.16.0/20").range;
    expect(cidrsOf(collapse([...parts, [r.first, r.last]]), 4)).toEqual(["192.24.0.0/19"]);
  });
});

function cidrsOf(set: Ranges, family: Family): string[] {
  const out: string[] = [];
  for (let i = 0; i < set.length; i += 2) out.push(...rangeToCidrs(family, set[i], set[i + 1]));
  return out;
}

/**
 * Runs and Vitest timeouts of the property tests below, with room for a loaded 2-core machine
 * (the ip-num covers take the longest: up to about 3 s there). Seeds: DEVELOPERS.md, Tests.
 */
const BUDGETS = {
  quick: { numRuns: 300, timeoutMs: 15_000 },
  cover4: { numRuns: 200, timeoutMs: 20_000 },
  cover6: { numRuns: 25, timeoutMs: 20_000 },
  sizes6: { numRuns: 200, timeoutMs: 15_000 },
} as const satisfies Record<string, PropertyBudget>;

const v4 = fc.bigInt({ min: 0n, max: 2n ** 32n - 1n });
const v6 = fc
  .bigInt({ min: 0n, max: 2n ** 128n - 1n })
  // ipaddr.js writes IPv4-mapped addresses in hex; RFC 5952 §5 prefers dotted, so leave them out here.
  .filter((v) => v >> 32n !== 0xffffn);

describe("differential checks against npm IP libraries", () => {
  test("IPv6 text matches ipaddr.js toRFC5952String, and round-trips", () => {
    fc.assert(
      fc.property(v6, fc.integer({ min: 0, max: 7 }), (value, zeros) => {
        // Carve a zero run to exercise "::" placement.
        const mask = ((1n << BigInt(16 * zeros)) - 1n) << BigInt(16 * (7 - zeros));
        const v = value & ~mask;
        if (v >> 32n === 0xffffn) return;
        const text = formatAddress(6, v);
        expect(text).toBe(ipaddr.IPv6.parse(text).toRFC5952String());
        expect(ipaddr.IPv6.parse(text).toRFC5952String()).toBe(text);
        expect(parseAddress(text).value).toBe(v);
        expect(parseAddress(ipaddr.IPv6.parse(text).toNormalizedString()).value).toBe(v);
      }),
      propertyParameters(BUDGETS.quick),
    );
  }, BUDGETS.quick.timeoutMs);

  test("IPv4 CIDR bounds match netmask's base, broadcast and size", () => {
    fc.assert(
      fc.property(v4, fc.integer({ min: 1, max: 32 }), (value, prefix) => {
        const text = `${formatAddress(4, value)}/${prefix}`;
        const ours = parseEntry(text).range;
        const theirs = new Netmask(text);
        expect(formatAddress(4, ours.first)).toBe(theirs.base);
        expect(formatAddress(4, ours.last)).toBe(theirs.broadcast ?? theirs.last);
        expect(ours.last - ours.first + 1n).toBe(BigInt(theirs.size));
      }),
      propertyParameters(BUDGETS.quick),
    );
  }, BUDGETS.quick.timeoutMs);

  test.each([4, 6] as const)("IPv%i range → CIDRs is an exact, minimal cover per ip-num", (family) => {
    const gen = family === 4 ? v4 : v6;
    const budget = family === 4 ? BUDGETS.cover4 : BUDGETS.cover6;
    fc.assert(
      fc.property(gen, gen, (a, b) => {
        const [first, last] = a <= b ? [a, b] : [b, a];
        const cidrs = rangeToCidrs(family, first, last);
        const ranges = cidrs.map((c) => (family === 4 ? IPv4CidrRange.fromCidr(c) : IPv6CidrRange.fromCidr(c)));
        // Exact: consecutive blocks from first to last.
        expect(ranges[0].getFirst().getValue()).toBe(first);
        expect(ranges[ranges.length - 1].getLast().getValue()).toBe(last);
        for (let i = 1; i < ranges.length; i++) expect(ranges[i].getFirst().getValue()).toBe(ranges[i - 1].getLast().getValue() + 1n);
        // Minimal: no two neighbours form one CIDR block.
        for (let i = 1; i < Math.min(ranges.length, 12); i++) {
          const joined = RangedSet.fromRangeString(`${formatAddress(family, ranges[i - 1].getFirst().getValue())}-${formatAddress(family, ranges[i].getLast().getValue())}`);
          expect(joined.isCidrAble()).toBe(false);
        }
      }),
      propertyParameters(budget),
    );
  }, BUDGETS.cover4.timeoutMs);

  test("IPv6 CIDR sizes match ip-num", () => {
    fc.assert(
      fc.property(v6, fc.integer({ min: 0, max: 128 }), (value, prefix) => {
        const text = `${formatAddress(6, value)}/${prefix}`;
        const ours = parseEntry(text).range;
        const theirs = IPv6CidrRange.fromCidr(text);
        expect(ours.first).toBe(theirs.getFirst().getValue());
        expect(ours.last - ours.first + 1n).toBe(theirs.getSize());
      }),
      propertyParameters(BUDGETS.sizes6),
    );
  }, BUDGETS.sizes6.timeoutMs);
});

describe("set algebra agrees with a brute-force membership table", () => {
  const U = 64;
  const pairs = fc.array(fc.tuple(fc.integer({ min: 0, max: U - 1 }), fc.integer({ min: 0, max: U - 1 })), { maxLength: 6 });
  const toSet = (ps: [number, number][]): Ranges => collapse(ps.map(([a, b]) => [BigInt(Math.min(a, b)), BigInt(Math.max(a, b))] as const));
  const table = (r: Ranges): boolean[] => Array.from({ length: U }, (_, i) => contains(r, BigInt(i)));
  test("union, intersect, subtract and complement", () => {
    fc.assert(
      fc.property(pairs, pairs, (pa, pb) => {
        const a = toSet(pa);
        const b = toSet(pb);
        const ta = table(a);
        const tb = table(b);
        expect(table(union(a, b))).toEqual(ta.map((x, i) => x || tb[i]));
        expect(table(intersect(a, b))).toEqual(ta.map((x, i) => x && tb[i]));
        expect(table(subtract(a, b, 4))).toEqual(ta.map((x, i) => x && !tb[i]));
        expect(table(complement(a, 4))).toEqual(ta.map((x) => !x));
        expect(countOf(a)).toBe(BigInt(ta.filter(Boolean).length));
        // Canonical: sorted, with gaps between ranges.
        for (let i = 2; i < a.length; i += 2) expect(a[i] > a[i - 1] + 1n).toBe(true);
      }),
      propertyParameters(BUDGETS.quick),
    );
  }, BUDGETS.quick.timeoutMs);
});

/**
 * The plain reading of IPv6 text, by splitting and a regular expression, that parseIPv6Value
 * replaced with a scan (common practice, no source): the two must accept the same texts with
 * the same values.
 */
function referenceIPv6Value(text: string): bigint | null {
  if (text.length < 2 || text.length > 45) return null;
  const halves = text.split("::");
  if (halves.length > 2) return null;
  const head = halves[0] === "" ? [] : halves[0].split(":");
  const tail = halves.length === 2 ? (halves[1] === "" ? [] : halves[1].split(":")) : [];
  const read = (parts: string[], mayEndInIPv4: boolean): number[] | null => {
    const out: number[] = [];
    for (let i = 0; i < parts.length; i++) {
      if (mayEndInIPv4 && i === parts.length - 1 && parts[i].includes(".")) {
        const v4 = parseIPv4Number(parts[i]);
        if (v4 === null) return null;
        out.push(Math.floor(v4 / 65536), v4 % 65536);
      } else if (/^[0-9A-Fa-f]{1,4}$/.test(parts[i])) out.push(parseInt(parts[i], 16));
      else return null;
    }
    return out;
  };
  let groups: number[];
  if (halves.length === 1) {
    const all = read(head, true);
    if (all === null || all.length !== 8) return null;
    groups = all;
  } else {
    const before = read(head, false);
    const after = read(tail, true);
    if (before === null || after === null || before.length + after.length > 7) return null;
    groups = [...before, ...Array<number>(8 - before.length - after.length).fill(0), ...after];
  }
  return groups.reduce((value, g) => (value << 16n) | BigInt(g), 0n);
}

describe("IPv6 text read by a scan equals the plain reading", () => {
  test("random texts of hex digits, colons and dots, and addresses written every way", () => {
    const piece = fc.constantFrom("0", "1", "a", "F", "ffff", "12345", "g", ":", "::", ":::", ".", "192.0.2.4", "255.255.255.255", "0192.0.2.4", "0:0", "");
    const texts = fc.oneof(
      fc.array(piece, { maxLength: 14 }).map((parts) => parts.join("")),
      fc.array(piece, { maxLength: 10 }).map((parts) => parts.join(":")),
      // Seven to nine groups with "::" somewhere: one group too many is the edge.
      fc.tuple(fc.array(fc.constantFrom("1", "ab", "192.0.2.4"), { minLength: 6, maxLength: 9 }), fc.nat()).map(([groups, at]) => {
        const k = at % (groups.length + 1);
        return `${groups.slice(0, k).join(":")}::${groups.slice(k).join(":")}`;
      }),
      fc.tuple(v6, fc.integer({ min: 0, max: 7 }), fc.boolean()).map(([value, zeros, upper]) => {
        const text = ipaddr.IPv6.parse(formatAddress(6, value & ~(((1n << BigInt(16 * zeros)) - 1n) << 32n))).toNormalizedString();
        return upper ? text.toUpperCase() : text;
      }),
    );
    fc.assert(
      fc.property(texts, (text) => {
        expect(parseIPv6Value(text)).toBe(referenceIPv6Value(text));
      }),
      propertyParameters({ numRuns: 3000, timeoutMs: 20_000 }),
    );
    for (const text of ["::", "::1", "1::", "1:2:3:4:5:6:7:8", "1:2:3:4:5:6:7::", "::2:3:4:5:6:7:8", "1:2:3:4:5:6:192.0.2.4", "::ffff:192.0.2.1", "1::2::3", "1:2:3:4:5:6:7:8:9", "1:2:3:4:5:6:7", ":1:2:3:4:5:6:7", "192.0.2.4::", "::192.0.2.4:1", "1:2:3:4::5:6:7:8", "1:2:3:4:5:6:7:8::", "::1:2:3:4:5:6:192.0.2.4", "1::2:3:4:5:6:192.0.2.4"]) {
      expect(parseIPv6Value(text), text).toBe(referenceIPv6Value(text));
    }
  }, 20_000);
});

describe("IPv4 CIDRs read on numbers equal the bigint reading", () => {
  test("any address and prefix 0-32: the block's bounds, and the normalised text when host bits are set (RFC 4632 §3.1)", () => {
    fc.assert(
      fc.property(v4, fc.integer({ min: 0, max: 32 }), (value, prefix) => {
        const host = BigInt(32 - prefix);
        const first = (value >> host) << host;
        const parsed = parseCidr(`${formatAddress(4, value)}/${prefix}`);
        expect(parsed.range).toEqual({ family: 4, first, last: first + (1n << host) - 1n });
        expect(parsed.normalised).toBe(first === value ? undefined : `${formatAddress(4, first)}/${prefix}`);
      }),
      propertyParameters({ numRuns: 2000, timeoutMs: 15_000 }),
    );
  }, 15_000);
});
