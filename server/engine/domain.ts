// The compiled source space of one family: every boundary of every set it is built from (the
// address objects the rules name, the login sources) cuts the family into "elements"
// (intervals no such set tells apart; any union of those sets is a union of elements).
// Sets become index ranges and bitsets over elements; partitions become runs of elements.

import { FAMILY } from "./addresses.ts";
import type { Family } from "./addresses.ts";
import type { Ranges } from "./address-sets.ts";

/** Runs over element indices: run k covers elements starts[k] … starts[k+1]-1 (the last run ends at the last element). */
export interface Runs {
  readonly starts: Int32Array;
  readonly values: Int32Array;
}

/** A sparse bitset over elements: parallel word indices and 32-bit masks. */
export interface SparseBits {
  readonly words: Int32Array;
  readonly masks: Int32Array;
}

/** 32-bit limbs per IPv6 bound: 2^128 itself needs a fifth. */
const LIMBS = 5;

/** FNV-1a's offset basis and prime (32-bit), for the content hash of stored sparse bitsets. */
const HASH_SEED = 0x811c9dc5;
const HASH_PRIME = 0x01000193;

/** Sizes (32-bit entries) of the chunks sparse bitsets are stored in: 4 KiB at first, doubling up to 1 MiB. */
const CHUNK_MIN = 1024;
const CHUNK_MAX = 262_144;

export class Domain {
  /** Element i is [bounds[i], bounds[i+1] - 1]; bounds[0] = 0 and the last bound is 2^bits. */
  readonly bounds: readonly bigint[];
  /** IPv4 only: the bounds as plain numbers for fast search. */
  readonly boundsNumber: Float64Array | null;
  readonly size: number;
  readonly words: number;

  constructor(
    readonly family: Family,
    sets: readonly Ranges[],
  ) {
    let bounds: bigint[];
    // Every cut into one array, sorted, then equal neighbours dropped: a Set of this many
    // numbers above 2^31 (or bigints) cost several times the sort.
    if (family === 4) {
      // IPv4 bounds below 2^32 fit a Uint32Array, whose sort is native; 2^32 is the last bound.
      let count = 1;
      for (const r of sets) count += r.length;
      const cuts = new Uint32Array(count);
      let n = 1; // cuts[0] = 0
      for (const r of sets) {
        for (let i = 0; i < r.length; i += 2) {
          cuts[n++] = Number(r[i]);
          const end = Number(r[i + 1]) + 1;
          if (end < 2 ** 32) cuts[n++] = end;
        }
      }
      const sorted = cuts.subarray(0, n).sort();
      let distinct = 0;
      for (let i = 0; i < n; i++) if (distinct === 0 || sorted[i] !== sorted[distinct - 1]) sorted[distinct++] = sorted[i];
      const numbers = new Float64Array(distinct + 1);
      for (let i = 0; i < distinct; i++) numbers[i] = sorted[i];
      numbers[distinct] = 2 ** 32;
      this.boundsNumber = numbers;
      bounds = Array.from(numbers, (b) => BigInt(b));
    } else {
      const cuts: bigint[] = [0n, FAMILY[family].size];
      for (const r of sets) for (let i = 0; i < r.length; i += 2) cuts.push(r[i], r[i + 1] + 1n);
      cuts.sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
      let distinct = 0;
      for (let i = 0; i < cuts.length; i++) if (distinct === 0 || cuts[i] !== cuts[distinct - 1]) cuts[distinct++] = cuts[i];
      cuts.length = distinct;
      bounds = cuts;
      this.boundsNumber = null;
    }
    this.bounds = bounds;
    this.size = bounds.length - 1;
    this.words = (this.size + 31) >>> 5;
  }

  /** Index of the element holding the address. */
  indexOf(value: bigint): number {
    return lastAtMost(this.bounds, value, this.size);
  }

  /** IPv4 fast path of indexOf. */
  indexOfNumber(value: number): number {
    return lastAtMost(this.boundsNumber as Float64Array, value, this.size);
  }

  /** Ranges whose boundaries are all in this domain, as element index pairs [a0, b0, …]. */
  toIndexRanges(ranges: Ranges): Int32Array {
    const out = new Int32Array(ranges.length);
    const numbers = this.boundsNumber;
    if (numbers === null) {
      for (let i = 0; i < ranges.length; i++) out[i] = this.indexOf(ranges[i]);
      return out;
    }
    // IPv4: ranges are ascending, so each search starts where the previous one ended.
    let from = 0;
    for (let i = 0; i < ranges.length; i++) {
      const value = Number(ranges[i]);
      let lo = from;
      let hi = this.size - 1;
      while (lo < hi) {
        const mid = (lo + hi + 1) >> 1;
        if (numbers[mid] <= value) lo = mid;
        else hi = mid - 1;
      }
      out[i] = from = lo;
    }
    return out;
  }

  toBits(indexRanges: Int32Array): SparseBits {
    const { words, masks } = this.#bitsScratch();
    let n = 0;
    for (let i = 0; i < indexRanges.length; i += 2) {
      const a = indexRanges[i];
      const b = indexRanges[i + 1];
      for (let w = a >>> 5; w <= b >>> 5; w++) {
        const lo = w === a >>> 5 ? a & 31 : 0;
        const hi = w === b >>> 5 ? b & 31 : 31;
        const mask = hi - lo === 31 ? -1 : ((1 << (hi - lo + 1)) - 1) << lo;
        if (n > 0 && words[n - 1] === w) masks[n - 1] |= mask;
        else {
          words[n] = w;
          masks[n++] = mask;
        }
      }
    }
    return this.#stored(words, masks, n);
  }

  #dense: Int32Array | undefined;
  #scratch: { words: Int32Array; masks: Int32Array } | undefined;

  /** Room for one sparse bitset of this domain (at most one entry per word), reused between calls. */
  #bitsScratch(): { words: Int32Array; masks: Int32Array } {
    return (this.#scratch ??= { words: new Int32Array(this.words), masks: new Int32Array(this.words) });
  }

  /** Per 32 words, a bit for each word unionBits has touched (all zero between calls). */
  #touchedWords: Int32Array | undefined;

  /**
   * The union of sparse bitsets (one of them returned as is when it is the only one). Words
   * are ORed into a dense scratch and each touched word noted in a bitmap of words, which is
   * then read in order: no sort of the touched words (at 16,000 rules a union holds about 500
   * of the IPv4 domain's 3,500 words, and sorting them was most of its cost).
   */
  unionBits(parts: readonly SparseBits[]): SparseBits {
    if (parts.length === 1) return parts[0];
    const dense = (this.#dense ??= new Int32Array(this.words));
    const touched = (this.#touchedWords ??= new Int32Array((this.words + 31) >>> 5));
    const { words: out, masks } = this.#bitsScratch();
    let low = touched.length;
    let high = -1;
    for (const part of parts) {
      const { words, masks: partMasks } = part;
      const count = words.length;
      if (count === 0) continue;
      for (let j = 0; j < count; j++) {
        const w = words[j];
        touched[w >>> 5] |= 1 << (w & 31);
        dense[w] |= partMasks[j];
      }
      // A part's words ascend: its first and last bound the block of the bitmap to read.
      if (words[0] >>> 5 < low) low = words[0] >>> 5;
      if (words[count - 1] >>> 5 > high) high = words[count - 1] >>> 5;
    }
    let n = 0;
    // The content hash (#stored's) is taken on the way.
    let hash = HASH_SEED;
    for (let i = low; i <= high; i++) {
      let bits = touched[i];
      if (bits === 0) continue;
      touched[i] = 0;
      const base = i << 5;
      while (bits !== 0) {
        const lowest = bits & -bits;
        const w = base + 31 - Math.clz32(lowest);
        const mask = dense[w];
        out[n] = w;
        masks[n++] = mask;
        dense[w] = 0;
        hash = Math.imul(Math.imul(hash ^ w, HASH_PRIME) ^ mask, HASH_PRIME);
        bits ^= lowest;
      }
    }
    return this.#stored(out, masks, n, hash);
  }

  /**
   * Sparse bitsets made here, by a hash of their content: rules name the same sets through
   * different lists (a list holding "any", a group and its members), and one copy serves all.
   */
  readonly #bitsByContent = new Map<number, SparseBits[]>();
  /**
   * Where new sparse bitsets are stored: a chunk shared by many (words, then masks, each a view),
   * so thousands of small sets are not each an allocation of their own. Chunks grow from small
   * (a small model wastes little) to CHUNK_MAX; a full chunk lives on through its views alone.
   */
  #chunk = new Int32Array(0);
  #chunkUsed = 0;

  /**
   * The first n entries of words and masks (scratch) as a stored sparse bitset: an equal one
   * made before, or a new one. `contentHash`: the words' and masks' hash from HASH_SEED, when
   * the caller took it while writing them.
   */
  #stored(words: Int32Array, masks: Int32Array, n: number, contentHash?: number): SparseBits {
    let hash = contentHash ?? HASH_SEED;
    if (contentHash === undefined) for (let j = 0; j < n; j++) hash = Math.imul(Math.imul(hash ^ words[j], HASH_PRIME) ^ masks[j], HASH_PRIME);
    hash = Math.imul(hash ^ n, HASH_PRIME);
    const bucket = this.#bitsByContent.get(hash);
    if (bucket !== undefined) {
      for (const known of bucket) {
        if (known.words.length !== n) continue;
        let j = 0;
        while (j < n && known.words[j] === words[j] && known.masks[j] === masks[j]) j++;
        if (j === n) return known;
      }
    }
    let at = this.#chunkUsed;
    if (at + 2 * n > this.#chunk.length) {
      const size = Math.min(CHUNK_MAX, Math.max(CHUNK_MIN, this.#chunk.length * 2));
      if (2 * n > size) {
        // Larger than any chunk: its own allocation, and the current chunk stays.
        const own = new Int32Array(2 * n);
        return this.#keep(hash, bucket, own, 0, words, masks, n);
      }
      this.#chunk = new Int32Array(size);
      at = 0;
    }
    this.#chunkUsed = at + 2 * n;
    return this.#keep(hash, bucket, this.#chunk, at, words, masks, n);
  }

  #keep(hash: number, bucket: SparseBits[] | undefined, store: Int32Array, at: number, words: Int32Array, masks: Int32Array, n: number): SparseBits {
    store.set(words.subarray(0, n), at);
    store.set(masks.subarray(0, n), at + n);
    const bits: SparseBits = { words: store.subarray(at, at + n), masks: store.subarray(at + n, at + 2 * n) };
    if (bucket === undefined) this.#bitsByContent.set(hash, [bits]);
    else bucket.push(bits);
    return bits;
  }

  /** The first element a sparse bitset holds, or -1 when it is empty. */
  firstElement(bits: SparseBits): number {
    if (bits.words.length === 0) return -1;
    const mask = bits.masks[0];
    return (bits.words[0] << 5) + 31 - Math.clz32(mask & -mask);
  }

  /** Whether a sparse bitset holds every element. */
  holdsAll(bits: SparseBits): boolean {
    if (bits.words.length !== this.words) return false;
    for (let j = 0; j < bits.words.length; j++) {
      const expected = j === this.words - 1 && (this.size & 31) !== 0 ? (1 << (this.size & 31)) - 1 : -1;
      if (bits.masks[j] !== expected) return false;
    }
    return true;
  }

  /** Address ranges of the runs whose value is `value`. */
  rangesWhere(runs: Runs, value: number): bigint[] {
    const out: bigint[] = [];
    const n = runs.starts.length;
    for (let k = 0; k < n; k++) {
      if (runs.values[k] !== value) continue;
      const first = this.bounds[runs.starts[k]];
      const last = this.bounds[k + 1 < n ? runs.starts[k + 1] : this.size] - 1n;
      const m = out.length;
      if (m > 0 && out[m - 1] + 1n === first) out[m - 1] = last;
      else out.push(first, last);
    }
    return out;
  }

  /** Coverage counts per boundary, one scratch array per value asked for at once (all zero between calls). */
  #covers: Int32Array[] = [];

  #cover(i: number): Int32Array {
    while (this.#covers.length <= i) this.#covers.push(new Int32Array(this.size + 1));
    return this.#covers[i];
  }

  /** Adds [start, end) to a coverage count, noting boundaries touched for the first time. */
  static #count(cover: Int32Array, touched: number[], start: number, end: number): void {
    if (cover[start]++ === 0) touched.push(start);
    if (cover[end]-- === 0) touched.push(end);
  }

  /** The address ranges a coverage count covers, merged; leaves the count zero again. */
  #covered(cover: Int32Array, touched: readonly number[]): bigint[] {
    return this.#rangesAbove(Int32Array.from(touched).sort(), (at) => {
      const step = cover[at];
      cover[at] = 0;
      return step;
    });
  }

  /** The merged address ranges where a depth, changed by `stepAt` at each of the ascending boundaries, is above zero. */
  #rangesAbove(points: ArrayLike<number>, stepAt: (at: number) => number): bigint[] {
    const out: bigint[] = [];
    let depth = 0;
    let open = 0;
    for (let i = 0; i < points.length; i++) {
      const at = points[i];
      const before = depth;
      depth += stepAt(at);
      if (before === 0 && depth > 0) open = at;
      else if (before > 0 && depth === 0) {
        const first = this.bounds[open];
        const last = this.bounds[at] - 1n;
        const m = out.length;
        if (m > 0 && out[m - 1] + 1n === first) out[m - 1] = last;
        else out.push(first, last);
      }
    }
    return out;
  }

  /** For each of `values` (each 0…31), the address ranges where some run list has it, in one pass over the runs (a coverage count per boundary, so only the merged result becomes bigints). */
  rangesWhereEach(lists: readonly Runs[], values: readonly number[]): bigint[][] {
    const slot = new Int8Array(32).fill(-1);
    values.forEach((value, i) => (slot[value] = i));
    const covers = values.map((_, i) => this.#cover(i));
    const touched: number[][] = values.map(() => []);
    for (const runs of lists) {
      const n = runs.starts.length;
      for (let k = 0; k < n; k++) {
        const v = runs.values[k];
        const i = v >= 0 && v < 32 ? slot[v] : -1;
        if (i < 0) continue;
        Domain.#count(covers[i], touched[i], runs.starts[k], k + 1 < n ? runs.starts[k + 1] : this.size);
      }
    }
    return values.map((_, i) => this.#covered(covers[i], touched[i]));
  }

  /**
   * Adds `by` over the runs whose value is in `wanted` (a bit mask over values 0…31) to a
   * coverage difference array (size + 1 entries: +by at a run's start, -by at its end).
   */
  addCoverage(diff: Int32Array, runs: Runs, wanted: number, by: number): void {
    const n = runs.starts.length;
    for (let k = 0; k < n; k++) {
      if (((wanted >>> runs.values[k]) & 1) === 0) continue;
      diff[runs.starts[k]] += by;
      diff[k + 1 < n ? runs.starts[k + 1] : this.size] -= by;
    }
  }

  /** The address ranges where a coverage difference array (addCoverage) sums above zero, merged. */
  rangesCovered(diff: Int32Array): bigint[] {
    const points: number[] = [];
    for (let at = 0; at <= this.size; at++) if (diff[at] !== 0) points.push(at);
    return this.#rangesAbove(points, (at) => diff[at]);
  }

  /** Address counts per value (values 0 … slots-1). */
  countsByValue(runs: Runs, slots: number): bigint[] {
    const counts = new Array<bigint>(slots).fill(0n);
    const n = runs.starts.length;
    if (this.boundsNumber !== null) {
      // IPv4 counts stay below 2^53: add as numbers.
      const b = this.boundsNumber;
      const sums = new Float64Array(slots);
      for (let k = 0; k < n; k++) sums[runs.values[k]] += b[k + 1 < n ? runs.starts[k + 1] : this.size] - b[runs.starts[k]];
      for (let s = 0; s < slots; s++) counts[s] = BigInt(sums[s]);
      return counts;
    }
    // IPv6: sum 32-bit limbs as numbers (each limb sum stays far below 2^53 for any domain
    // size), one bigint per outcome at the end instead of two bigint operations per run.
    const limbs = this.#boundLimbs();
    const sums = new Float64Array(slots * LIMBS);
    for (let k = 0; k < n; k++) {
      const at = runs.values[k] * LIMBS;
      const end = (k + 1 < n ? runs.starts[k + 1] : this.size) * LIMBS;
      const start = runs.starts[k] * LIMBS;
      for (let j = 0; j < LIMBS; j++) sums[at + j] += limbs[end + j] - limbs[start + j];
    }
    for (let s = 0; s < slots; s++) {
      let total = 0n;
      for (let j = LIMBS - 1; j >= 0; j--) total = (total << 32n) + BigInt(sums[s * LIMBS + j]);
      counts[s] = total;
    }
    return counts;
  }

  #limbs: Float64Array | undefined;

  /** Each bound as LIMBS 32-bit limbs, least significant first. */
  #boundLimbs(): Float64Array {
    if (this.#limbs === undefined) {
      const limbs = new Float64Array((this.size + 1) * LIMBS);
      this.bounds.forEach((bound, i) => {
        let rest = bound;
        for (let j = 0; j < LIMBS; j++, rest >>= 32n) limbs[i * LIMBS + j] = Number(rest & 0xffffffffn);
      });
      this.#limbs = limbs;
    }
    return this.#limbs;
  }
}

/** Index of the last of the first `count` sorted values that is ≤ value (0 when none is). */
export function lastAtMost(sorted: ArrayLike<number> | readonly bigint[], value: number | bigint, count: number): number {
  let lo = 0;
  let hi = count - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (sorted[mid] <= value) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** Value of the run holding element `index`. */
export function runValueAt(runs: Runs, index: number): number {
  return runs.values[lastAtMost(runs.starts, index, runs.starts.length)];
}

let runStarts = new Int32Array(1024);
let runValues = new Int32Array(1024);

/** Compresses one value per element into runs (one pass into shared scratch, then copied out). */
function ensureScratch(length: number): void {
  if (runStarts.length < length) {
    runStarts = new Int32Array(length);
    runValues = new Int32Array(length);
  }
}

export function runsFromArray(values: Int32Array, length: number): Runs {
  ensureScratch(length);
  let count = 0;
  let previous = 0;
  for (let i = 0; i < length; i++) {
    const v = values[i];
    if (i === 0 || v !== previous) {
      runStarts[count] = i;
      runValues[count++] = v;
      previous = v;
    }
  }
  return { starts: runStarts.slice(0, count), values: runValues.slice(0, count) };
}

/** In `wordOwners`: the word's 32 elements do not all have one value; read them from the element array. */
export const MIXED_WORD = -2;

/**
 * Runs from a sweep that records, per 32-element word, either the one value covering it
 * (`wordOwners[w]`) or MIXED_WORD; for a mixed word, `pieceStarts[w]` has a bit at each
 * element where a piece (elements of one value, contiguous within the word) starts, and
 * `values` holds the piece's value at that element only. A partition then costs its words
 * and its pieces, not its elements: a rule's sources are unions of address objects, each a
 * contiguous stretch of elements, so a word holds a few pieces however many elements.
 */
export function runsFromPieces(values: Int32Array, wordOwners: Int32Array, pieceStarts: Int32Array, length: number): Runs {
  ensureScratch(length);
  const words = (length + 31) >>> 5;
  let count = 0;
  let previous = MIXED_WORD;
  for (let w = 0; w < words; w++) {
    const uniform = wordOwners[w];
    const base = w << 5;
    if (uniform !== MIXED_WORD) {
      if (uniform !== previous) {
        runStarts[count] = base;
        runValues[count++] = uniform;
        previous = uniform;
      }
      continue;
    }
    // Piece starts in ascending order: lowest set bit first.
    let starts = pieceStarts[w];
    while (starts !== 0) {
      const low = starts & -starts;
      const i = base + 31 - Math.clz32(low);
      const v = values[i];
      if (v !== previous) {
        runStarts[count] = i;
        runValues[count++] = v;
        previous = v;
      }
      starts ^= low;
    }
  }
  return { starts: runStarts.slice(0, count), values: runValues.slice(0, count) };
}

/** The bits of a mask where a stretch of set bits starts (set, with the bit below clear). */
export function pieceStartBits(mask: number): number {
  return mask & ~(mask << 1);
}

/**
 * Runs like `base`, except that the elements of runs whose value is flagged in `patched`
 * (indexed by value + 1) take their values from `values`; equal neighbours merge.
 */
export function patchedRuns(base: Runs, patched: Uint8Array, values: Int32Array, length: number): Runs {
  const n = base.starts.length;
  ensureScratch(length);
  let count = 0;
  let previous = MIXED_WORD;
  for (let k = 0; k < n; k++) {
    const v = base.values[k];
    const start = base.starts[k];
    if (patched[v + 1] === 0) {
      if (v !== previous) {
        runStarts[count] = start;
        runValues[count++] = v;
        previous = v;
      }
      continue;
    }
    const end = k + 1 < n ? base.starts[k + 1] : length;
    for (let i = start; i < end; i++) {
      const w = values[i];
      if (w !== previous) {
        runStarts[count] = i;
        runValues[count++] = w;
        previous = w;
      }
    }
  }
  return { starts: runStarts.slice(0, count), values: runValues.slice(0, count) };
}

/** Combines two run lists element-wise with f; equal neighbours merge. */
export function zipRuns(a: Runs, b: Runs, f: (x: number, y: number) => number): Runs {
  const na = a.starts.length;
  const nb = b.starts.length;
  ensureScratch(na + nb);
  let count = 0;
  let i = 0;
  let j = 0;
  while (i < na && j < nb) {
    const start = a.starts[i] > b.starts[j] ? a.starts[i] : b.starts[j];
    const v = f(a.values[i], b.values[j]);
    if (count === 0 || runValues[count - 1] !== v) {
      runStarts[count] = start;
      runValues[count++] = v;
    }
    const nextA = i + 1 < na ? a.starts[i + 1] : Infinity;
    const nextB = j + 1 < nb ? b.starts[j + 1] : Infinity;
    if (nextA <= nextB) i++;
    if (nextB <= nextA) j++;
  }
  return { starts: runStarts.slice(0, count), values: runValues.slice(0, count) };
}

/** Maps each run's value through `table` (indexed by value + 1, so -1 maps too); equal neighbours merge. */
export function mapRuns(a: Runs, table: Int32Array): Runs {
  const n = a.starts.length;
  ensureScratch(n);
  let count = 0;
  for (let k = 0; k < n; k++) {
    const v = table[a.values[k] + 1];
    if (count === 0 || runValues[count - 1] !== v) {
      runStarts[count] = a.starts[k];
      runValues[count++] = v;
    }
  }
  return { starts: runStarts.slice(0, count), values: runValues.slice(0, count) };
}
