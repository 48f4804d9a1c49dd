// The reach question for the page and its CSV: one source against every interface × catalogue
// service of a device, with input errors as field messages (never a 500).

import { ProbeError, reach } from "../engine/index.ts";
import type { CompiledModel, Outcome } from "../engine/index.ts";
import { namesByKind } from "./catalogue.ts";

export interface ReachRow {
  /** Stable key for sorting ties: "interface service". */
  readonly name: string;
  readonly interfaceIndex: number;
  readonly serviceIndex: number;
  readonly interface: string;
  readonly to: string | null;
  readonly service: string;
  readonly outcome: Outcome;
  /** The deciding layer: the last layer of the trace. */
  readonly layer: string;
  readonly detail: string;
  readonly ruleId: string | null;
  readonly eligibleAccounts: readonly string[];
}

export type ReachAnswer =
  | { readonly ok: true; readonly from: string; readonly at: string; readonly localTime: string; readonly rows: readonly ReachRow[] }
  | { readonly ok: false; readonly errors: { from?: string; at?: string } };

/** The `from` and `at` of a reach URL, trimmed and bounded (what the form shows back). */
export function reachQueryOf(url: URL): { from: string; at: string } {
  return { from: (url.searchParams.get("from") ?? "").trim().slice(0, 100), at: (url.searchParams.get("at") ?? "").trim().slice(0, 60) };
}

export function answerReach(device: CompiledModel, query: { from: string; at: string }, nowMs = Date.now()): ReachAnswer {
  const model = device.model;
  const errors: { from?: string; at?: string } = {};
  let atMs = nowMs;
  try {
    atMs = device.instantOf(query.at || undefined, nowMs);
  } catch (error) {
    if (!(error instanceof ProbeError)) throw error;
    errors.at = `${error.message}. Use e.g. 2025-03-04T10:00 (device clock) or 2025-03-04T16:00Z.`;
  }
  if (!query.from) errors.from = "Enter a source address (IPv4 or IPv6).";
  if (!errors.from && errors.at) {
    // Say everything wrong at once: check the source too, at the default instant.
    try {
      reach(device, query.from, nowMs);
    } catch (error) {
      if (!(error instanceof ProbeError)) throw error;
      errors.from = error.message.replace(/^from: /, "");
    }
  }
  if (errors.from || errors.at) return { ok: false, errors };
  try {
    const result = reach(device, query.from, atMs);
    const interfaces = model.interfaces.map((entry) => entry.name);
    const services = namesByKind(device.catalogue);
    const rows = result.results.map((trace): ReachRow => {
      const deciding = trace.layers[trace.layers.length - 1];
      return {
        name: `${trace.interface} ${trace.service}`,
        interfaceIndex: interfaces.indexOf(trace.interface),
        serviceIndex: services.indexOf(trace.service),
        interface: trace.interface,
        to: trace.to,
        service: trace.service,
        outcome: trace.outcome,
        layer: deciding?.layer ?? "",
        detail: deciding?.detail ?? "",
        ruleId: trace.ruleId,
        eligibleAccounts: [...trace.eligibleAccounts],
      };
    });
    return { ok: true, from: result.from, at: result.at, localTime: device.clock.localText(atMs), rows };
  } catch (error) {
    if (!(error instanceof ProbeError)) throw error;
    return { ok: false, errors: { from: error.message.replace(/^from: /, "") } };
  }
}
