// A domain's elements: every range start and every range end + 1 of the sets it is built from
// cuts the family, and the cuts (with 0 and the family's size) are its bounds, ascending and
// distinct. Checked against a plain Set of bigints, with ranges drawn to touch both ends of
// each family and to repeat each other's cuts. Common practice, no source.
import { describe, expect, test } from "vitest";
import fc from "fast-check";
import { Domain } from "../../server/engine/domain.ts";
import { FAMILY } from "../../server/engine/addresses.ts";
import type { Family } from "../../server/engine/addresses.ts";

/** Ascending, disjoint [first, last] pairs from points (as a set's ranges are). */
function rangesFrom(points: readonly bigint[]): bigint[] {
  const sorted = [...new Set(points)].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  const out: bigint[] = [];
  for (let i = 0; i + 1 < sorted.length; i += 2) out.push(sorted[i], sorted[i + 1]);
  if (sorted.length % 2 === 1) out.push(sorted[sorted.length - 1], sorted[sorted.length - 1]);
  return out;
}

function pointArb(family: Family): fc.Arbitrary<bigint> {
  const max = FAMILY[family].max;
  // Both ends of the family, the 32-bit edge, and small values that repeat across sets.
  return fc.oneof(fc.constantFrom(0n, 1n, max - 1n, max, 2n ** 32n - 1n < max ? 2n ** 32n - 1n : max), fc.bigInt({ min: 0n, max: 64n }), fc.bigInt({ min: 0n, max }));
}

function expectedBounds(family: Family, sets: readonly bigint[][]): bigint[] {
  const cuts = new Set<bigint>([0n, FAMILY[family].size]);
  for (const r of sets) for (let i = 0; i < r.length; i += 2) cuts.add(r[i]).add(r[i + 1] + 1n);
  return [...cuts].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
}

describe("a domain's bounds", () => {
  for (const family of [4, 6] as const) {
    test(`IPv${family}: the distinct cuts of every set, ascending, from 0 to the family's size`, () => {
      fc.assert(
        fc.property(fc.array(fc.array(pointArb(family), { maxLength: 12 }), { maxLength: 20 }), (pointSets) => {
          const sets = pointSets.map(rangesFrom);
          const domain = new Domain(family, sets);
          const expected = expectedBounds(family, sets);
          expect(domain.bounds).toEqual(expected);
          expect(domain.size).toBe(expected.length - 1);
          if (family === 4) expect(Array.from(domain.boundsNumber ?? [])).toEqual(expected.map(Number));
          // Every range boundary is found as an element edge.
          for (const r of sets) for (let i = 0; i < r.length; i += 2) expect(domain.bounds[domain.indexOf(r[i])]).toBe(r[i]);
        }),
        { seed: 20261203, numRuns: 300 },
      );
    });
  }
});
