// The exposure's CIDR lists written as bytes straight from the partitions behind them. They
// are the bulk of a large map's JSON (millions of CIDRs); the engine's lists would make a
// string per CIDR and JSON.stringify would then copy and scan each one. The text is the same:
// every CIDR is ASCII with nothing to escape, written in the lists' order with
// JSON.stringify's layout.
//
// A list is read from the partition's runs over the domain's elements (what the engine's
// `rangesWhere` turns into address ranges), so a range is known by its first and end element,
// two small integers. And the same range comes back again and again: the entries of one map
// cut the address space at the same address objects' edges (on the 2,000-rule benchmark model
// the lists at one instant hold 135,240 ranges, 9,657 of them distinct: 1,720,806 CIDRs, of
// which 183,778 are in distinct ranges). So a range's text is kept once written and copied the
// next time, up to a fixed number of bytes: memory stays flat whatever the size of the output.

import { Buffer } from "node:buffer";
import { CidrBytes } from "../engine/addresses.ts";
import type { CompiledModel } from "../engine/compile.ts";
import type { Domain, Runs } from "../engine/domain.ts";
import { exposureCells, outcomeSets, outcomeSetsOfRanges } from "../engine/exposure.ts";
import type { ExposureEntry } from "../engine/exposure.ts";
import { OUTCOMES } from "../engine/vocabulary.ts";
import { OWN_JSON } from "../formats/json-stream.ts";
import type { OwnJson } from "../formats/json-stream.ts";

/** Bytes per piece handed to the JSON writer. */
const PIECE = 1 << 16;
/** What follows each CIDR: its closing quote and a comma (the last list element's is taken back). */
const AFTER = Buffer.from('",', "latin1");

/**
 * The buffer every list is written into. A piece handed out is a view of it, copied by the
 * JSON writer before the writing goes on; and at every hand-out the buffer holds nothing
 * else, so writers taking turns cannot disturb each other.
 */
const SCRATCH = Buffer.allocUnsafe(PIECE);

/** Bytes of range text a cache keeps at most by default, with PER_RANGE counted for each range's bookkeeping. */
const KEPT_BYTES = 16 << 20;
const PER_RANGE = 64;
/** Bytes per block kept texts are copied into (one allocation for many texts). */
const BLOCK = 1 << 20;

/** A kept text: the cover of elements [start, end) of a domain; others with the same start follow in `next`. */
interface Kept {
  readonly end: number;
  readonly text: Uint8Array;
  readonly next: Kept | undefined;
}

/** Kept texts of one domain's ranges, all written with the same text before each CIDR. */
class RangeTexts {
  /** By first element. */
  readonly byStart: (Kept | undefined)[] = [];
  constructor(readonly domain: Domain) {}
}

/**
 * Range texts already written for one output, by the text before each CIDR (its depth and
 * indentation) and domain. Pass one cache to every slice of one output to share its texts.
 */
export class CidrTextCache {
  private readonly byBefore = new Map<string, Map<Domain, RangeTexts>>();
  private block: Buffer = Buffer.alloc(0);
  private blockAt = 0;
  private kept = 0;

  constructor(
    /** Bytes it keeps at most (texts and bookkeeping): memory flat whatever the output's size. */
    private readonly limit = KEPT_BYTES,
  ) {}

  textsFor(before: string, domain: Domain): RangeTexts {
    let byDomain = this.byBefore.get(before);
    if (byDomain === undefined) this.byBefore.set(before, (byDomain = new Map()));
    let texts = byDomain.get(domain);
    if (texts === undefined) byDomain.set(domain, (texts = new RangeTexts(domain)));
    return texts;
  }

  /** Keeps a copy of `text`, the cover of elements [start, end), while there is room. */
  keep(texts: RangeTexts, start: number, end: number, text: Uint8Array): void {
    if (this.kept + text.length + PER_RANGE > this.limit) return;
    this.kept += text.length + PER_RANGE;
    if (this.block.length - this.blockAt < text.length) {
      this.block = Buffer.allocUnsafe(Math.max(BLOCK, text.length));
      this.blockAt = 0;
    }
    const copy = this.block.subarray(this.blockAt, this.blockAt + text.length);
    copy.set(text);
    this.blockAt += text.length;
    texts.byStart[start] = { end, text: copy, next: texts.byStart[start] };
  }
}

/** Where a ListsWriter is in the list of the current outcome: its head, its ranges, its closing bracket. */
const HEAD = 0;
const RANGES = 1;
const CLOSE = 2;

/**
 * Writes the JSON text of the six CIDR lists of a partition, as JSON.stringify writes the
 * engine's `ranges` object, into SCRATCH, a piece at a time. Outcome k's list is the merged
 * runs of value k, each as the minimal cover of its addresses (the engine's `rangesWhere` and
 * `rangesToCidrs`). A plain method rather than a generator holds the loop, so V8 optimises it
 * while it runs (a cold CLI runs it once).
 */
class ListsWriter {
  private k = 0;
  private phase = HEAD;
  /** The outcomes' ranges (see group) and where the current outcome's go on. */
  private pairs = new Int32Array(0);
  private offsets = new Int32Array(OUTCOMES.length + 1);
  private r = 0;
  /** A range cut by the end of a piece: where its cover goes on, and its last address. */
  private next: bigint | null = null;
  private last = 0n;
  private readonly piece: CidrBytes;
  private readonly heads: readonly string[];
  private readonly close: string;
  private readonly end: string;
  private readonly texts: RangeTexts;

  constructor(
    private readonly runs: Runs,
    private readonly domain: Domain,
    private readonly cache: CidrTextCache,
    at: string,
    gap: string,
  ) {
    const compact = gap === "";
    const inner = at + gap;
    const before = compact ? '"' : `\n${inner}${gap}"`;
    this.texts = cache.textsFor(before, domain);
    this.piece = new CidrBytes(SCRATCH, Buffer.from(before, "latin1"), AFTER);
    this.heads = OUTCOMES.map((o, k) => `${k > 0 ? "," : "{"}${compact ? "" : `\n${inner}`}${JSON.stringify(o)}${compact ? ":" : ": "}[`);
    this.close = compact ? "]" : `\n${inner}]`;
    this.end = compact ? "}" : `\n${at}}`;
  }

  /** The bytes written since the last take, handed out; the piece starts empty again. */
  take(): Uint8Array {
    const text = SCRATCH.subarray(0, this.piece.at);
    this.piece.at = 0;
    return text;
  }

  /** Writes short text if it fits; false when the piece must be taken first. */
  private put(text: string): boolean {
    if (PIECE - this.piece.at < text.length) return false;
    this.piece.at += SCRATCH.write(text, this.piece.at, "latin1");
    return true;
  }

  /**
   * The merged ranges of each outcome as element pairs [start, end), grouped by outcome in one
   * pass over the runs: outcome k's are pairs[offsets[k] … offsets[k + 1]). Runs of the same
   * value next to each other are one range, as the engine merges them.
   */
  private group(): void {
    const { starts, values } = this.runs;
    const n = starts.length;
    const size = this.domain.size;
    const offsets = new Int32Array(OUTCOMES.length + 1);
    for (let r = 0; r < n; r++) if (r === 0 || values[r] !== values[r - 1]) offsets[values[r] + 1] += 2;
    for (let k = 0; k < OUTCOMES.length; k++) offsets[k + 1] += offsets[k];
    const pairs = new Int32Array(offsets[OUTCOMES.length]);
    const at = offsets.slice(0, OUTCOMES.length);
    for (let r = 0; r < n; ) {
      const value = values[r];
      const start = starts[r];
      do r++;
      while (r < n && values[r] === value);
      pairs[at[value]++] = start;
      pairs[at[value]++] = r < n ? starts[r] : size;
    }
    this.pairs = pairs;
    this.offsets = offsets;
  }

  /** Writes on until the text is complete (true) or the piece is full (false: take it and call again). */
  fill(): boolean {
    if (this.pairs.length === 0 && this.runs.starts.length > 0) this.group();
    const piece = this.piece;
    const pairs = this.pairs;
    const domain = this.domain;
    const family = domain.family;
    const bounds = domain.bounds;
    const byStart = this.texts.byStart;
    for (; this.k < OUTCOMES.length; this.k++) {
      const k = this.k;
      if (this.phase === HEAD) {
        if (!this.put(this.heads[k])) return false;
        this.phase = RANGES;
        this.r = this.offsets[k];
      }
      const stop = this.offsets[k + 1];
      const wrote = stop > this.offsets[k];
      if (this.phase === RANGES) {
        if (this.next !== null) {
          this.next = piece.cover(family, this.next, this.last);
          if (this.next !== null) return false;
        }
        for (let r = this.r; r < stop; r += 2) {
          const start = pairs[r];
          const end = pairs[r + 1];
          let kept = byStart[start];
          while (kept !== undefined && kept.end !== end) kept = kept.next;
          if (kept !== undefined) {
            if (PIECE - piece.at < kept.text.length) {
              this.r = r;
              return false;
            }
            SCRATCH.set(kept.text, piece.at);
            piece.at += kept.text.length;
            continue;
          }
          const from = piece.at;
          const last = bounds[end] - 1n;
          const next = piece.cover(family, bounds[start], last);
          // Kept only when written whole into this piece (nearly always; one cut by a piece's end is kept when next met).
          if (next === null) this.cache.keep(this.texts, start, end, SCRATCH.subarray(from, piece.at));
          else {
            // Taken before the range (nothing written yet: it starts afresh) or within it (it goes on from `next`).
            this.r = r;
            if (piece.at !== from) {
              this.next = next;
              this.last = last;
              this.r = r + 2;
            }
            return false;
          }
        }
        this.r = stop;
        // The last CIDR's comma; it is in this piece, as a piece is only taken before a range or within one.
        if (wrote) piece.at--;
        this.phase = CLOSE;
      }
      if (!this.put(wrote ? this.close : "]")) return false;
      this.phase = HEAD;
    }
    return this.put(this.end);
  }
}

function* cidrListsText(writer: ListsWriter): Generator<Uint8Array, void, undefined> {
  while (!writer.fill()) yield writer.take();
  yield writer.take();
}

/** An entry's CIDR lists, written from the partition's runs. */
class CidrLists implements OwnJson {
  constructor(
    private readonly runs: Runs,
    private readonly domain: Domain,
    private readonly cache: CidrTextCache,
  ) {}
  [OWN_JSON](at: string, gap: string): Iterable<Uint8Array> {
    return cidrListsText(new ListsWriter(this.runs, this.domain, this.cache, at, gap));
  }
}

/**
 * `value` (the exposure of `device` at an instant or one slice, `slice` its index) for the
 * JSON writer, each entry's CIDR lists written from the partition behind them. An entry is
 * matched to its partition by identity (the engine's lists of exactly that partition); one
 * that is not (lists the engine did not make) is left as it is.
 */
export function withCidrBytes<T extends { readonly entries: readonly ExposureEntry[] }>(value: T, device: CompiledModel, slice: number, cache = new CidrTextCache()): unknown {
  const cells = exposureCells(device, slice);
  return {
    ...value,
    entries: value.entries.map((entry, i) => {
      const partition = cells[i]?.partition;
      const sets = outcomeSetsOfRanges(entry.ranges);
      if (partition === undefined || sets === undefined || sets !== outcomeSets(device, partition)) return entry;
      return { ...entry, ranges: new CidrLists(partition.outcome, device.domains[partition.family], cache) };
    }),
  };
}
