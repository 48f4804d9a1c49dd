// The first-match sweep's runs builder: a partition recorded per 32-element word (one value
// for the whole word, or where each piece of a mixed word starts and its value there) must
// give the same runs as one value per element compressed directly (runsFromArray).
// Common practice, no source.
import { describe, expect, test } from "vitest";
import fc from "fast-check";
import { MIXED_WORD, pieceStartBits, runsFromArray, runsFromPieces } from "../../server/engine/domain.ts";

/** Values per element as stretches (lengths 1…70 with a value -1…4), so words hold a few pieces or one value. */
const stretches = fc.array(fc.tuple(fc.integer({ min: 1, max: 70 }), fc.integer({ min: -1, max: 4 })), { minLength: 1, maxLength: 60 });

describe("runsFromPieces", () => {
  test("equals runsFromArray over the same values, whichever way each word is recorded", () => {
    fc.assert(
      fc.property(stretches, fc.array(fc.boolean(), { minLength: 1, maxLength: 200 }), fc.array(fc.integer({ min: 0, max: 31 }), { maxLength: 40 }), (parts, mixedChoice, extraStarts) => {
        const values = Int32Array.from(parts.flatMap(([length, value]) => new Array<number>(length).fill(value)));
        const length = values.length;
        const words = (length + 31) >>> 5;
        const wordOwners = new Int32Array(words);
        const pieceStarts = new Int32Array(words);
        // Only the piece starts are kept: every other element is scribbled over, as the sweep leaves it.
        const kept = new Int32Array(length).fill(99);
        for (let w = 0; w < words; w++) {
          const base = w << 5;
          const end = Math.min(base + 32, length);
          const uniform = values.subarray(base, end).every((v) => v === values[base]);
          if (uniform && !mixedChoice[w % mixedChoice.length]) {
            wordOwners[w] = values[base];
            continue;
          }
          wordOwners[w] = MIXED_WORD;
          let starts = 0;
          for (let i = base; i < end; i++) if (i === base || values[i] !== values[i - 1]) starts |= 1 << (i - base);
          // A piece may also start beside one of the same value: the builder merges them.
          for (const bit of extraStarts) if (base + bit < end) starts |= 1 << bit;
          pieceStarts[w] = starts;
          for (let bit = 0; bit < 32; bit++) if ((starts >>> bit) & 1) kept[base + bit] = values[base + bit];
        }
        const expected = runsFromArray(values, length);
        const got = runsFromPieces(kept, wordOwners, pieceStarts, length);
        expect(Array.from(got.starts)).toEqual(Array.from(expected.starts));
        expect(Array.from(got.values)).toEqual(Array.from(expected.values));
      }),
      { seed: 20261203, numRuns: 300 },
    );
  });

  test("pieceStartBits marks each set bit whose lower neighbour is clear", () => {
    fc.assert(
      fc.property(fc.integer({ min: -(2 ** 31), max: 2 ** 31 - 1 }), (mask) => {
        let expected = 0;
        for (let bit = 0; bit < 32; bit++) {
          const set = (mask >>> bit) & 1;
          const below = bit === 0 ? 0 : (mask >>> (bit - 1)) & 1;
          if (set === 1 && below === 0) expected |= 1 << bit;
        }
        expect(pieceStartBits(mask)).toBe(expected);
      }),
      { seed: 20261203, numRuns: 500 },
    );
  });
});
