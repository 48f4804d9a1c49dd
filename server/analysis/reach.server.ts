// The reach question for the page and its CSV: one source — an address, or a CIDR block answered
// per group of sources with the same answer — against every interface × catalogue service of a
// device (or the interfaces asked for), with input errors as field messages (never a 500).

import { isSourceBlock, parseSource, ProbeError, reachGroupRows, reachGroups } from "../engine/index.ts";
import type { CompiledModel, ReachGroupRow } from "../engine/index.ts";
import { namesByKind } from "./catalogue.ts";

export interface ReachRow extends ReachGroupRow {
  /** Stable key for sorting ties: "interface service group". */
  readonly name: string;
  readonly interfaceIndex: number;
  readonly serviceIndex: number;
}

export type ReachQuery = { from: string; at: string; interfaces: string[] };
type ReachErrors = { from?: string; at?: string; interface?: string };

export type ReachAnswer =
  | {
      readonly ok: true;
      readonly from: string;
      /** Addresses in the source, decimal; "1" for one address. */
      readonly count: string;
      readonly block: boolean;
      readonly at: string;
      readonly localTime: string;
      readonly rows: readonly ReachRow[];
    }
  | { readonly ok: false; readonly errors: ReachErrors };

/** The `from`, `at` and repeated `interface` of a reach URL, trimmed and bounded (what the form shows back). */
export function reachQueryOf(url: URL): ReachQuery {
  const interfaces = [...new Set(url.searchParams.getAll("interface").map((name) => name.trim().slice(0, 63)))].filter((name) => name !== "").slice(0, 64);
  return { from: (url.searchParams.get("from") ?? "").trim().slice(0, 100), at: (url.searchParams.get("at") ?? "").trim().slice(0, 60), interfaces };
}

export function answerReach(device: CompiledModel, query: { from: string; at: string; interfaces?: readonly string[] }, nowMs = Date.now()): ReachAnswer {
  const model = device.model;
  const errors: ReachErrors = {};
  let atMs = nowMs;
  try {
    atMs = device.instantOf(query.at || undefined, nowMs);
  } catch (error) {
    if (!(error instanceof ProbeError)) throw error;
    errors.at = `${error.message}. Use e.g. 2025-03-04T10:00 (device clock) or 2025-03-04T16:00Z.`;
  }
  const unknown = (query.interfaces ?? []).filter((name) => !model.interfaces.some((entry) => entry.name === name));
  if (unknown.length > 0) errors.interface = `This device has no interface ${unknown.map((name) => `"${name}"`).join(", ")}.`;
  if (!query.from) errors.from = "Enter a source address (IPv4 or IPv6) or a CIDR block.";
  if (!errors.from) {
    // Say everything wrong at once: the source is checked whatever else is wrong.
    try {
      parseSource(query.from);
    } catch (error) {
      if (!(error instanceof ProbeError)) throw error;
      errors.from = error.message.replace(/^from: /, "");
    }
  }
  if (errors.from || errors.at || errors.interface) return { ok: false, errors };
  const result = reachGroups(device, query.from, atMs, { interfaces: query.interfaces ?? [] }, nowMs);
  const interfaces = model.interfaces.map((entry) => entry.name);
  const services = namesByKind(device.catalogue);
  const rows = reachGroupRows(result).map(
    ({ row, group }): ReachRow => ({ ...row, name: `${row.interface} ${row.service} ${group}`, interfaceIndex: interfaces.indexOf(row.interface), serviceIndex: services.indexOf(row.service) }),
  );
  return { ok: true, from: result.from, count: result.count, block: isSourceBlock(query.from), at: result.at, localTime: result.localTime, rows };
}
