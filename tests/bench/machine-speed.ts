// The machine's speed on the day, as the benchmarks report it beside their figures: the naive
// reference evaluator (server/engine/naive.ts, a fixed amount of work whose code does not change)
// on the first 400 probes of the engine benchmark's model. The same 2-core machine ran it in
// about 1 to 5.6 ms a probe on different days (docs/bench/history.md), so figures of two days
// compare only through it.
import { performance } from "node:perf_hooks";
import { parseModel, type DeviceModel } from "#server/engine/index.ts";
import { NaiveEvaluator } from "#server/engine/naive.ts";
import { BENCH_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";

/** The engine benchmark's seed and the Monday its week of probes starts on. */
export const SEED = 20250301;
export const START = Date.UTC(2025, 2, 24);
export const NAIVE_PROBES = 400;

export interface Probe {
  from: string;
  interface: string;
  service: string;
  atMs: number;
}

/** Random probes over the model's interfaces, the given sources, eight services and the week from START. */
export function benchProbes(model: DeviceModel, sources: readonly string[], count: number, seed: number): Probe[] {
  const rnd = prng(seed);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const services = ["https", "http", "ssh", "telnet", "ping", "snmp", "webconsole", "tcp/8080"];
  return Array.from({ length: count }, () => ({
    from: pick(sources),
    interface: pick(model.interfaces).name,
    service: pick(services),
    atMs: START + Math.floor(rnd() * 7 * 24 * 60) * 60_000,
  }));
}

/** µs a probe of the naive evaluator on the given probes (the engine benchmark's `naiveUsPerProbe`). */
export function naiveMicrosecondsPerProbe(model: DeviceModel, probes: readonly Probe[]): number {
  const naive = new NaiveEvaluator(model);
  const started = performance.now();
  for (const probe of probes) naive.trace(probe);
  return ((performance.now() - started) * 1000) / probes.length;
}

/** The same measure standing alone (for the web and load benchmarks): the bench model, its first 400 probes. */
export function machineSpeed(): { naiveUsPerProbe: number } {
  const generated = generateModel(SEED, BENCH_SIZE);
  const parsed = parseModel(generated.model);
  if (!parsed.ok) throw new Error("the benchmark model does not validate");
  const probes = benchProbes(parsed.model, generated.sampleSources, NAIVE_PROBES, SEED + 1);
  return { naiveUsPerProbe: Math.round(naiveMicrosecondsPerProbe(parsed.model, probes) * 1000) / 1000 };
}
