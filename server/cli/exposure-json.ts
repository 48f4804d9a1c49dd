// The exposure's CIDR lists written as bytes straight from the address ranges. They are the
// bulk of a large map's JSON (millions of CIDRs); the engine's lists would make a string per
// CIDR and JSON.stringify would then copy and scan each one. The text is the same: every CIDR
// is ASCII with nothing to escape, written in the lists' order with JSON.stringify's layout.

import { Buffer } from "node:buffer";
import { writeCidrs } from "../engine/addresses.ts";
import type { Ranges } from "../engine/address-sets.ts";
import { outcomeSets } from "../engine/exposure.ts";
import type { ExposureCell, ExposureEntry, OutcomeSets } from "../engine/exposure.ts";
import type { CompiledModel } from "../engine/index.ts";
import { OUTCOMES } from "../engine/vocabulary.ts";
import { OWN_JSON } from "../formats/json-stream.ts";
import type { OwnJson } from "../formats/json-stream.ts";

/** Bytes per piece handed to the JSON writer. */
const PIECE = 1 << 16;
/** What follows each CIDR: its closing quote and a comma (the last list element's is taken back). */
const AFTER = Buffer.from('",', "latin1");

/** JSON text of the six CIDR lists of a partition, as JSON.stringify writes the engine's `ranges` object. */
function* cidrListsText(sets: OutcomeSets, at: string, gap: string): Generator<string, void, undefined> {
  const compact = gap === "";
  const inner = at + gap;
  const before = Buffer.from(compact ? '"' : `\n${inner}${gap}"`, "latin1");
  const bytes = Buffer.allocUnsafe(PIECE);
  let length = 0;
  const take = (): string => {
    const text = bytes.toString("latin1", 0, length);
    length = 0;
    return text;
  };
  /** Room for `text` in the piece, taking the piece first when there is none. */
  const room = (size: number): string | null => (PIECE - length < size ? take() : null);
  const put = (text: string): void => {
    length += bytes.write(text, length, "latin1");
  };
  const ranges: readonly Ranges[] = sets.ranges;
  for (let k = 0; k < OUTCOMES.length; k++) {
    const head = `${k > 0 ? "," : "{"}${compact ? "" : `\n${inner}`}${JSON.stringify(OUTCOMES[k])}${compact ? ":" : ": "}[`;
    const full = room(head.length + 2);
    if (full !== null) yield full;
    const list = ranges[k];
    if (list.length === 0) {
      put(`${head}]`);
      continue;
    }
    put(head);
    for (let r = 0; r < list.length; r += 2) {
      let from: bigint | null = list[r];
      for (;;) {
        const written = writeCidrs(sets.family, from, list[r + 1], bytes, length, before, AFTER);
        length = written.at;
        from = written.next;
        if (from === null) break;
        yield take();
      }
    }
    // The last CIDR's comma; it is in this piece, as a piece is only taken before a CIDR.
    length--;
    const close = compact ? "]" : `\n${inner}]`;
    const full2 = room(close.length);
    if (full2 !== null) yield full2;
    put(close);
  }
  const end = compact ? "}" : `\n${at}}`;
  const full = room(end.length);
  if (full !== null) yield full;
  put(end);
  yield take();
}

/** An entry's CIDR lists, written from the partition's ranges. */
class CidrLists implements OwnJson {
  constructor(private readonly sets: OutcomeSets) {}
  [OWN_JSON](at: string, gap: string): Iterable<string> {
    return cidrListsText(this.sets, at, gap);
  }
}

/**
 * `value` (an exposure at an instant or one slice) for the JSON writer, its entries' CIDR
 * lists written from the ranges of `cells` (the slice's cells, in the entries' order). The
 * value is returned as it is when its entries are not those cells.
 */
export function withCidrBytes<T extends { readonly entries: readonly ExposureEntry[] }>(engine: CompiledModel, value: T, cells: readonly ExposureCell[]): unknown {
  const { entries } = value;
  if (entries.length !== cells.length) return value;
  const same = entries.every((entry, i) => {
    const cell = cells[i];
    return entry.interface === engine.model.interfaces[cell.iface].name && entry.to === engine.addresses[cell.to].text && entry.service === engine.catalogue[cell.cls].name;
  });
  if (!same) return value;
  return {
    ...value,
    entries: entries.map((entry, i) => {
      const copy: Record<string, unknown> = {};
      for (const key of Object.keys(entry) as (keyof ExposureEntry)[]) copy[key] = key === "ranges" ? new CidrLists(outcomeSets(engine, cells[i].partition)) : entry[key];
      return copy;
    }),
  };
}
