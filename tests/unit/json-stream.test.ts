// JSON in pieces: joined, the pieces are exactly what JSON.stringify writes (ECMA-262
// §25.5.2 JSON.stringify, SerializeJSONProperty / SerializeJSONObject / SerializeJSONArray),
// for any value, indentation, piece size and block size; and no piece grows with the document.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { jsonPieces, OWN_JSON } from "#server/formats/json-stream.ts";
import type { JsonPiecesOptions, OwnJson } from "#server/formats/json-stream.ts";

const joined = (value: unknown, options: JsonPiecesOptions = {}): string => Buffer.concat([...jsonPieces(value, options)]).toString("utf8");

/** Values JSON.stringify treats specially, besides plain JSON: left out, null, toJSON, boxed. */
const special = fc.oneof(
  fc.constant(undefined),
  fc.constant(() => 1),
  fc.constant(Symbol("s")),
  fc.constant(Number.NaN),
  fc.constant(-Infinity),
  fc.constant(-0),
  fc.date({ noInvalidDate: true }),
  fc.string().map((s) => ({ toJSON: (key: string) => `${key}:${s}` })),
  fc.double().map((n) => new Number(n)),
  fc.string().map((s) => new String(s)),
  fc.boolean().map((b) => new Boolean(b)),
  fc.string({ unit: "binary" }),
);

const text = fc.oneof(fc.string(), fc.string({ unit: "binary" }), fc.constantFrom('"', "\\", "\n", "\u0000", "\ud800", "\u2028"));

const { anything } = fc.letrec((tie) => ({
  anything: fc.oneof(
    { depthSize: "small", withCrossShrink: true },
    fc.jsonValue(),
    special,
    fc.array(tie("anything"), { maxLength: 12 }),
    fc.dictionary(fc.string(), tie("anything"), { maxKeys: 6 }),
    // Arrays of primitives go to JSON.stringify (long ones in blocks); arrays of strings with
    // nothing to escape are joined. Binary strings bring controls and lone surrogates.
    fc.array(fc.oneof(text, fc.double(), fc.boolean(), fc.constant(null), fc.constant(undefined)), { maxLength: 40 }),
    fc.array(text, { maxLength: 40 }),
    fc.array(fc.stringMatching(/^[0-9a-f.:/]{0,12}$/), { maxLength: 40 }),
  ),
}));

describe("jsonPieces", () => {
  test("joined pieces equal JSON.stringify for any value, indentation, piece and block size", () => {
    fc.assert(
      fc.property(
        anything,
        fc.integer({ min: 0, max: 12 }),
        fc.integer({ min: 1, max: 64 }),
        fc.integer({ min: 1, max: 8 }),
        (value, indent, pieceSize, blockSize) => {
          const expected = JSON.stringify(value, null, indent);
          const pieces = [...jsonPieces(value, { indent, pieceSize, blockSize })];
          if (expected === undefined) expect(pieces).toEqual([]);
          else {
            expect(Buffer.concat(pieces).toString("utf8")).toBe(expected);
            // Every piece but the last is full.
            expect(pieces.slice(0, -1).every((piece) => piece.length === pieceSize)).toBe(true);
          }
        },
      ),
      { numRuns: 500 },
    );
  });

  test("deeply indented primitive arrays (past JSON.stringify's 10-character gap limit) keep their indentation", () => {
    let value: unknown = ["a", 1, null];
    for (let depth = 0; depth < 8; depth++) value = { level: depth, inner: [value, ["x", "y"]] };
    for (const indent of [1, 2, 3, 10]) {
      for (const blockSize of [1, 2, 2048]) expect(joined(value, { indent, blockSize })).toBe(JSON.stringify(value, null, indent));
    }
  });

  test("every property is read once, as JSON.stringify reads it; toJSON gets the key", () => {
    let reads = 0;
    const value = {
      get lists() {
        reads++;
        return { a: ["192.0.2.0/24"], b: [] };
      },
      when: { toJSON: (key: string) => `key=${key}` },
      list: [{ toJSON: (key: string) => `index ${key}` }],
    };
    expect(joined(value, { indent: 2 })).toBe(JSON.stringify(value, null, 2));
    expect(reads).toBe(2); // once by JSON.stringify, once by jsonPieces
  });

  test("pieces keep the piece size while the document grows (300,000 CIDR-like strings)", () => {
    const list = Array.from({ length: 300_000 }, (_, i) => `10.${(i >> 16) & 255}.${(i >> 8) & 255}.${i & 255}/32`);
    const document = { entries: [{ ranges: { silent: list } }] };
    let total = 0;
    let longest = 0;
    for (const piece of jsonPieces(document, { indent: 2, pieceSize: 1 << 16 })) {
      total += piece.length;
      longest = Math.max(longest, piece.length);
    }
    expect(total).toBe(JSON.stringify(document, null, 2).length);
    expect(longest).toBe(1 << 16);
  });

  test("cycles and BigInts throw the TypeError JSON.stringify throws", () => {
    const cyclic: Record<string, unknown> = { a: [1] };
    cyclic.self = { back: cyclic };
    expect(() => JSON.stringify(cyclic)).toThrow(TypeError);
    expect(() => joined(cyclic)).toThrow(TypeError);
    expect(() => joined({ n: 1n })).toThrow(TypeError);
    expect(() => joined([1n])).toThrow(TypeError);
  });

  test("values JSON.stringify writes as nothing yield no piece", () => {
    expect([...jsonPieces(undefined)]).toEqual([]);
    expect([...jsonPieces(() => 1)]).toEqual([]);
    expect(joined({ toJSON: () => undefined })).toBe("");
  });

  test("a value writing its own text (OWN_JSON) is placed with the indentation of its line", () => {
    /** Stands for `value`: its text made here, a character per piece, shifted to the line it starts on. */
    const own = (value: unknown): OwnJson => ({
      *[OWN_JSON](at: string, gap: string) {
        yield* (JSON.stringify(value, null, gap) ?? "").replaceAll("\n", `\n${at}`);
      },
    });
    const inner = { silent: ["192.0.2.0/24", "2001:db8::/32"], refused: [] };
    const document = { entries: [{ to: "198.51.100.1", ranges: inner }, { to: "198.51.100.2", ranges: inner }] };
    const standIn = { entries: document.entries.map((e) => ({ ...e, ranges: own(e.ranges) })) };
    for (const indent of [0, 2, 4]) {
      for (const pieceSize of [1, 16, 1 << 16]) expect(joined(standIn, { indent, pieceSize })).toBe(JSON.stringify(document, null, indent));
    }
  });

  test("a value writing its own bytes may fill one buffer again for every piece; text around it keeps its characters", () => {
    /** Stands for `value`: its UTF-8 bytes three at a time, always in the same buffer (so a piece not copied at once would come out wrong). */
    const ownBytes = (value: unknown): OwnJson => ({
      *[OWN_JSON](at: string, gap: string) {
        const bytes = Buffer.from((JSON.stringify(value, null, gap) ?? "").replaceAll("\n", `\n${at}`), "utf8");
        const scratch = new Uint8Array(3);
        for (let i = 0; i < bytes.length; i += 3) {
          const n = Math.min(3, bytes.length - i);
          scratch.set(bytes.subarray(i, i + n));
          yield scratch.subarray(0, n);
        }
      },
    });
    const inner = { silent: ["192.0.2.0/24", "2001:db8::/32"], note: "façade ☂ 𝄞", refused: [] };
    const document = { "clé": "é", entries: [{ to: "198.51.100.1", ranges: inner }, { to: "198.51.100.2", ranges: inner }] };
    const standIn = { ...document, entries: document.entries.map((e) => ({ ...e, ranges: ownBytes(e.ranges) })) };
    for (const indent of [0, 2, 4]) {
      for (const pieceSize of [1, 5, 16, 1 << 16]) expect(joined(standIn, { indent, pieceSize })).toBe(JSON.stringify(document, null, indent));
    }
  });
});
