import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, exposure, OUTCOMES, parseModel, trace, type DeviceModel, type DeviceModelInput, type Outcome } from "#server/engine/index";
import { generateModel, SMALL_SIZE } from "#server/engine/testing/generate-model";
import { MAX_DRILL_PROBES, predictDrill } from "#server/training/drills";
import { TRAINING_EXAMPLES } from "#server/training/examples";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs";

// The predict drill's generated probe sets (issue 12, point 4): deterministic for a seed,
// balanced across outcomes, every expected answer equal to trace().

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`invalid model: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

/** The outcomes some source gets somewhere on the model, from the exposure map (PRODUCT.md §3). */
function possibleOutcomes(model: DeviceModel): Set<Outcome> {
  const out = new Set<Outcome>();
  for (const slice of exposure(compileModel(model)).slices) for (const entry of slice.entries) for (const outcome of OUTCOMES) if (entry.counts[outcome] !== "0") out.add(outcome);
  return out;
}

function checkDrill(model: DeviceModel, seed: number, count: number): void {
  const drill = predictDrill(model, seed, count);
  // Deterministic for a seed.
  expect(predictDrill(model, seed, count)).toEqual(drill);
  expect(drill).toHaveLength(Math.min(count, MAX_DRILL_PROBES));
  // Every expected answer is trace()'s: the outcome and the deciding layer (the last one listed, PRODUCT.md §3).
  const device = compileModel(model);
  for (const entry of drill) {
    const result = trace(device, entry.probe);
    expect(entry.expected).toEqual({ outcome: result.outcome, decidingLayer: result.layers[result.layers.length - 1].layer });
  }
  // Balanced: every outcome the model can give appears, none more than once more often than another.
  const possible = possibleOutcomes(model);
  const counts = new Map<Outcome, number>();
  for (const entry of drill) counts.set(entry.expected.outcome, (counts.get(entry.expected.outcome) ?? 0) + 1);
  expect([...counts.keys()].every((outcome) => possible.has(outcome))).toBe(true);
  if (drill.length >= possible.size) expect(counts.size).toBe(possible.size);
  const values = [...possible].map((outcome) => counts.get(outcome) ?? 0);
  expect(Math.max(...values) - Math.min(...values)).toBeLessThanOrEqual(1);
}

describe("The predict drill's probes", () => {
  test("on every shipped example: deterministic for a seed, balanced across its outcomes, every answer equal to trace()", () => {
    for (const example of TRAINING_EXAMPLES) checkDrill(validated(example.document), 7, 12);
  });

  test("another seed draws another set; no probes asked, none given", () => {
    const model = validated(TRAINING_EXAMPLES.find((example) => example.key === "login-sources")!.document);
    expect(predictDrill(model, 1, 10)).not.toEqual(predictDrill(model, 2, 10));
    expect(predictDrill(model, 1, 0)).toEqual([]);
    expect(predictDrill(model, 1, 500)).toHaveLength(MAX_DRILL_PROBES);
  });

  // About 0.4 s a run on a busy 2-core machine (each run builds the exposure map three times).
  const BUDGET: PropertyBudget = { numRuns: 12, timeoutMs: 60_000 };
  test("on random models: deterministic, balanced, every answer equal to trace()", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.integer({ min: 1, max: 2 ** 30 }), fc.integer({ min: 1, max: 20 }), (modelSeed, drillSeed, count) => {
        checkDrill(validated(generateModel(modelSeed, { ...SMALL_SIZE, rules: 8 }).model), drillSeed, count);
      }),
      propertyParameters(BUDGET),
    );
  }, BUDGET.timeoutMs);
});
