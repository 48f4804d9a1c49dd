// The "predict" drill's probe sets (issue 12, point 4; docs/decisions/016): N generated probes on
// a scenario, the same for the same seed, balanced across the outcomes the scenario can give;
// each with the answer a trainee must give — the outcome and the layer that decides it — taken
// from trace() itself. Pure: the engine's exposure map says which sources get which outcome on
// which interface, service and slice of the week, so a probe of each outcome is drawn from
// there, never guessed.
import { parseCidr } from "../engine/addresses.ts";
import { compileModel, exposure, instantInSlice, OUTCOMES, trace, type DeviceModel, type Layer, type Outcome } from "../engine/index.ts";
import { formatAddress } from "../engine/addresses.ts";
import { prng } from "../engine/testing/generate-model.ts";
import type { LessonProbe } from "./examples.ts";

export const MAX_DRILL_PROBES = 50;

export type DrillProbe = {
  probe: LessonProbe & { to: string; at: string };
  /** What the trainee must answer, as trace() gives it. */
  expected: { outcome: Outcome; decidingLayer: Layer };
};

/** Where one outcome happens: an interface × device address × service × slice, and the sources that get it there. */
type Place = { interface: string; to: string; service: string; slice: number; cidrs: readonly string[] };

/** A uniformly drawn integer in [0, n) from a seeded generator, for bigint ranges (IPv6). */
function below(random: () => number, n: bigint): bigint {
  if (n <= 1n) return 0n;
  let value = 0n;
  // 32 bits at a time, enough of them to cover n, then reduced (the bias is negligible beside 2^32 per word).
  for (let bits = 0n; 1n << bits < n * 4294967296n; bits += 32n) value = (value << 32n) | BigInt(Math.floor(random() * 4294967296));
  return value % n;
}

/** A seeded shuffle (Fisher–Yates). */
function shuffled<T>(items: readonly T[], random: () => number): T[] {
  const out = [...items];
  for (let i = out.length - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1));
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

/**
 * `count` probes on the model for the seed: the outcomes the model can give are taken in turn
 * (in an order the seed shuffles), so each appears ⌊count/k⌋ or ⌈count/k⌉ times; for each, a
 * place where it happens and a source inside its addresses are drawn. Catalogue services only;
 * no account (every eligible account counts, as in the exposure map).
 */
export function predictDrill(model: DeviceModel, seed: number, count: number): DrillProbe[] {
  const wanted = Math.max(0, Math.min(MAX_DRILL_PROBES, Math.floor(count)));
  const device = compileModel(model);
  const map = exposure(device);
  const places = new Map<Outcome, Place[]>(OUTCOMES.map((outcome) => [outcome, []]));
  map.slices.forEach((slice, index) => {
    for (const entry of slice.entries) {
      for (const outcome of OUTCOMES) {
        if (entry.ranges[outcome].length > 0) places.get(outcome)!.push({ interface: entry.interface, to: entry.to, service: entry.service, slice: index, cidrs: entry.ranges[outcome] });
      }
    }
  });
  const random = prng(seed);
  const possible = shuffled(
    OUTCOMES.filter((outcome) => places.get(outcome)!.length > 0),
    random,
  );
  if (possible.length === 0 || wanted === 0) return [];
  const probes: DrillProbe[] = [];
  for (let i = 0; i < wanted; i++) {
    const outcome = possible[i % possible.length];
    const candidates = places.get(outcome)!;
    const place = candidates[Math.floor(random() * candidates.length)];
    const { range } = parseCidr(place.cidrs[Math.floor(random() * place.cidrs.length)]);
    const from = formatAddress(range.family, range.first + below(random, range.last - range.first + 1n));
    const probe = { from, interface: place.interface, service: place.service, to: place.to, at: instantInSlice(device, place.slice) };
    // The answer is trace()'s, whatever the map said.
    const result = trace(device, probe);
    probes.push({ probe, expected: { outcome: result.outcome, decidingLayer: result.layers[result.layers.length - 1].layer } });
  }
  return probes;
}
