// Reach: everything one source can reach — every interface × catalogue service.

import type { CompiledModel } from "./compile.ts";
import { traceProbe } from "./trace.ts";
import type { TraceResult } from "./trace.ts";

export interface ReachResult {
  readonly from: string;
  readonly at: string;
  readonly results: readonly TraceResult[];
}

/** Traces the source against every interface × catalogue service (destination: the interface's first address of the family). */
export function reachFrom(engine: CompiledModel, source: string, at?: string | number | Date, nowMs: number = Date.now()): ReachResult {
  const atMs = engine.instantOf(at, nowMs);
  const results: TraceResult[] = [];
  for (const f of engine.model.interfaces) {
    for (const s of engine.catalogue) results.push(traceProbe(engine, { from: source, interface: f.name, service: s.name, at: atMs }));
  }
  return { from: results[0]?.from ?? source, at: new Date(atMs).toISOString(), results };
}
