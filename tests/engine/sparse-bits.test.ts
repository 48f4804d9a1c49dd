// The source bitsets rules are swept with: made from element ranges (toBits) and as unions
// (unionBits), stored several to a shared chunk and once per content. Checked against a plain
// set of element indices, and for what storing must never do: change a set made earlier, or
// give one object to two different sets. Common practice, no source.
import { describe, expect, test } from "vitest";
import fc from "fast-check";
import { Domain } from "../../server/engine/domain.ts";
import type { SparseBits } from "../../server/engine/domain.ts";

/** An IPv4 domain of exactly `size` elements: one element per address below size - 1, then the rest. */
function domainOf(size: number): Domain {
  return new Domain(4, [Array.from({ length: size - 1 }, (_, i) => [BigInt(i), BigInt(i)]).flat()]);
}

/** The elements a sparse bitset holds, ascending (or null when its words do not ascend or a mask is zero: not a valid sparse bitset). */
function elementsOf(bits: SparseBits): number[] | null {
  const out: number[] = [];
  for (let j = 0; j < bits.words.length; j++) {
    if ((j > 0 && bits.words[j] <= bits.words[j - 1]) || bits.masks[j] === 0 || bits.masks.length !== bits.words.length) return null;
    for (let bit = 0; bit < 32; bit++) if ((bits.masks[j] >>> bit) & 1) out.push((bits.words[j] << 5) + bit);
  }
  return out;
}

/** Ascending, disjoint element ranges [a0, b0, a1, b1 …] below size, from cut points. */
function rangesFrom(cuts: readonly number[], size: number, keep: readonly boolean[]): Int32Array {
  const points = [...new Set(cuts.map((c) => c % size))].sort((a, b) => a - b);
  const out: number[] = [];
  for (let i = 0; i + 1 < points.length; i += 2) if (keep[i % keep.length]) out.push(points[i], points[i + 1]);
  return Int32Array.from(out);
}

const plain = (ranges: Int32Array): number[] => {
  const out = new Set<number>();
  for (let i = 0; i < ranges.length; i += 2) for (let e = ranges[i]; e <= ranges[i + 1]; e++) out.add(e);
  return [...out].sort((a, b) => a - b);
};

const setsArb = fc.record({
  size: fc.integer({ min: 2, max: 1500 }),
  sets: fc.array(fc.tuple(fc.array(fc.nat(), { maxLength: 24 }), fc.array(fc.boolean(), { minLength: 1, maxLength: 5 })), { minLength: 1, maxLength: 40 }),
  unions: fc.array(fc.array(fc.nat(), { minLength: 0, maxLength: 5 }), { maxLength: 30 }),
});

describe("sparse bitsets of a domain", () => {
  test("toBits and unionBits hold exactly the elements of a plain set, and sets made earlier never change", { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(setsArb, ({ size, sets, unions }) => {
        const domain = domainOf(size);
        expect(domain.size).toBe(size);
        const made: { bits: SparseBits; elements: number[] }[] = [];
        for (const [cuts, keep] of sets) {
          const ranges = rangesFrom(cuts, size, keep);
          const bits = domain.toBits(ranges);
          made.push({ bits, elements: plain(ranges) });
        }
        for (const picks of unions) {
          const parts = picks.map((k) => made[k % made.length]);
          const bits = domain.unionBits(parts.map((p) => p.bits));
          const model = new Set<number>();
          for (const p of parts) for (const e of p.elements) model.add(e);
          made.push({ bits, elements: [...model].sort((a, b) => a - b) });
        }
        // Checked after all were made: a later set stored in the same chunk must not have overwritten one.
        for (const { bits, elements } of made) expect(elementsOf(bits)).toEqual(elements);
        // One object per content, and never one object for two contents.
        const wrong: string[] = [];
        for (let i = 0; i < made.length; i++) {
          for (let j = i + 1; j < made.length; j++) {
            const same = made[i].elements.length === made[j].elements.length && made[i].elements.every((e, k) => e === made[j].elements[k]);
            if ((made[i].bits === made[j].bits) !== same) wrong.push(`${i} ${j}`);
          }
        }
        expect(wrong).toEqual([]);
      }),
      { seed: 20261203, numRuns: 100 },
    );
  });

  test("sets larger than a chunk, and many sets filling several chunks, keep their contents", () => {
    // 20,000 elements: a set of every element (625 words) is larger than the first chunk, and 2,000 one-word sets fill several.
    const domain = domainOf(20_000);
    const all = domain.toBits(Int32Array.of(0, domain.size - 1));
    expect(all.words.length).toBe(domain.words);
    expect(domain.holdsAll(all)).toBe(true);
    expect(elementsOf(all)).toHaveLength(20_000);
    const small = Array.from({ length: 2000 }, (_, i) => domain.toBits(Int32Array.of(i % domain.size, i % domain.size)));
    expect(elementsOf(all)).toHaveLength(20_000);
    small.forEach((bits, i) => expect(elementsOf(bits)).toEqual([i % domain.size]));
    // Equal contents made apart are one object.
    expect(domain.toBits(Int32Array.of(3, 3))).toBe(small[3]);
    expect(domain.unionBits([small[1], small[2]])).toBe(domain.toBits(Int32Array.of(1, 2)));
  });
});
