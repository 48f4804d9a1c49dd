// The exposure's CIDR lists written as bytes straight from the address ranges. They are the
// bulk of a large map's JSON (millions of CIDRs); the engine's lists would make a string per
// CIDR and JSON.stringify would then copy and scan each one. The text is the same: every CIDR
// is ASCII with nothing to escape, written in the lists' order with JSON.stringify's layout.

import { Buffer } from "node:buffer";
import { CidrBytes } from "../engine/addresses.ts";
import type { Ranges } from "../engine/address-sets.ts";
import { outcomeSetsOfRanges } from "../engine/exposure.ts";
import type { ExposureEntry, OutcomeSets } from "../engine/exposure.ts";
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

/**
 * JSON text of the six CIDR lists of a partition, as JSON.stringify writes the engine's
 * `ranges` object, in ASCII bytes.
 */
function* cidrListsText(sets: OutcomeSets, at: string, gap: string): Generator<Uint8Array, void, undefined> {
  const compact = gap === "";
  const inner = at + gap;
  const piece = new CidrBytes(SCRATCH, Buffer.from(compact ? '"' : `\n${inner}${gap}"`, "latin1"), AFTER);
  const take = (): Uint8Array => {
    const text = SCRATCH.subarray(0, piece.at);
    piece.at = 0;
    return text;
  };
  /** Whether short text needs the piece taken first to fit. */
  const full = (text: string): boolean => PIECE - piece.at < text.length;
  const put = (text: string): void => {
    piece.at += SCRATCH.write(text, piece.at, "latin1");
  };
  const ranges: readonly Ranges[] = sets.ranges;
  for (let k = 0; k < OUTCOMES.length; k++) {
    const list = ranges[k];
    const head = `${k > 0 ? "," : "{"}${compact ? "" : `\n${inner}`}${JSON.stringify(OUTCOMES[k])}${compact ? ":" : ": "}[${list.length === 0 ? "]" : ""}`;
    if (full(head)) yield take();
    put(head);
    if (list.length === 0) continue;
    for (let r = 0; r < list.length; r += 2) {
      let from: bigint | null = list[r];
      while ((from = piece.cover(sets.family, from, list[r + 1])) !== null) yield take();
    }
    // The last CIDR's comma; it is in this piece, as a piece is only taken before a CIDR.
    piece.at--;
    const close = compact ? "]" : `\n${inner}]`;
    if (full(close)) yield take();
    put(close);
  }
  const end = compact ? "}" : `\n${at}}`;
  if (full(end)) yield take();
  put(end);
  yield take();
}

/** An entry's CIDR lists, written from the partition's ranges. */
class CidrLists implements OwnJson {
  constructor(private readonly sets: OutcomeSets) {}
  [OWN_JSON](at: string, gap: string): Iterable<Uint8Array> {
    return cidrListsText(this.sets, at, gap);
  }
}

/**
 * `value` (an exposure at an instant or one slice) for the JSON writer, each entry's CIDR lists
 * written from the ranges of the partition behind them; an entry whose lists the engine did not
 * make is left as it is.
 */
export function withCidrBytes<T extends { readonly entries: readonly ExposureEntry[] }>(value: T): unknown {
  return {
    ...value,
    entries: value.entries.map((entry) => {
      const sets = outcomeSetsOfRanges(entry.ranges);
      return sets === undefined ? entry : { ...entry, ranges: new CidrLists(sets) };
    }),
  };
}
