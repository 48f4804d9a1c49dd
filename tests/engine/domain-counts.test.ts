// Outcome counts per value over a domain's elements: the fast paths (IPv4 as numbers, IPv6 as
// 32-bit limbs) against a plain bigint sum of each element's size. Exact integer arithmetic is
// the whole check (RFC 4291 §2.5: 128-bit addresses, so a count reaches 2^128).
import { describe, expect, test } from "vitest";
import fc from "fast-check";
import { Domain, runsFromArray } from "../../server/engine/domain.ts";
import type { Family } from "../../server/engine/addresses.ts";

function referenceCounts(domain: Domain, values: Int32Array, slots: number): bigint[] {
  const counts = new Array<bigint>(slots).fill(0n);
  for (let e = 0; e < domain.size; e++) counts[values[e]] += domain.bounds[e + 1] - domain.bounds[e];
  return counts;
}

const SLOTS = 6;

function rangesArbitrary(family: Family) {
  const top = family === 4 ? 2n ** 32n - 1n : 2n ** 128n - 1n;
  const address = fc.oneof(fc.bigInt({ min: 0n, max: top }), fc.constantFrom(0n, top, top >> 1n, (top >> 1n) + 1n));
  return fc.array(fc.tuple(address, address).map(([a, b]) => (a <= b ? [a, b] : [b, a])), { minLength: 0, maxLength: 40 });
}

describe.each([4, 6] as const)("Domain.countsByValue, IPv%s", (family) => {
  test("equals the bigint sum of element sizes per value, and the counts sum to the family's size", () => {
    fc.assert(
      fc.property(rangesArbitrary(family), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (pairs, seed) => {
        const domain = new Domain(family, [pairs.flat()]);
        let state = seed;
        const values = Int32Array.from({ length: domain.size }, () => {
          state = (state * 1103515245 + 12345) & 0x7fffffff;
          return state % SLOTS;
        });
        const counts = domain.countsByValue(runsFromArray(values, domain.size), SLOTS);
        expect(counts).toEqual(referenceCounts(domain, values, SLOTS));
        expect(counts.reduce((a, b) => a + b, 0n)).toBe(family === 4 ? 2n ** 32n : 2n ** 128n);
      }),
      { seed: 20261203, numRuns: 200 },
    );
  });
});
