// Candidate lists are looked up by their rule mask (many cells share one list) and outcome runs
// are shared by partitions with the same owner runs: both checked here against a plain model —
// a filter over the rules for the lists, the naive evaluator for the outcomes.
import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, parseModel } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModel } from "#server/engine/index.ts";
import { contains, rangesOf } from "#server/engine/address-sets.ts";
import { arrivals } from "#server/engine/analysis.ts";
import { formatAddress } from "#server/engine/addresses.ts";
import { NaiveEvaluator } from "#server/engine/naive.ts";
import { instantInSlice } from "#server/engine/week-times.ts";
import { OUTCOMES } from "#server/engine/vocabulary.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";

function validated(seed: number): DeviceModel {
  const parsed = parseModel(generateModel(seed, SMALL_SIZE).model);
  if (!parsed.ok) throw new Error(`generated model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

/** The candidate rules of a cell as a plain filter: enabled, on the interface or any, holding the destination, naming the class. */
function plainCandidates(engine: CompiledModel, iface: number, to: number, cls: number): number[] {
  const target = engine.addresses[to];
  const key = engine.classes[cls].key;
  return engine.rules
    .filter((r) => r.enabled && (r.iface === -1 || r.iface === iface) && contains(rangesOf(r.destinations, target.family), target.value) && (r.anyService || r.serviceKeys.has(key)))
    .map((r) => r.position);
}

describe("candidate lists by rule mask", () => {
  test("every cell's list is the plain filter of the rules; equal lists share an id, different lists do not", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), (seed) => {
        const engine = compileModel(validated(seed));
        const byId = new Map<number, string>();
        for (let iface = 0; iface < engine.interfaceAddresses.length; iface++) {
          for (let to = 0; to < engine.addresses.length; to++) {
            for (let cls = 0; cls < engine.classes.length; cls++) {
              const plain = plainCandidates(engine, iface, to, cls);
              const candidates = engine.candidateRules(iface, to, cls);
              expect(Array.from(candidates.rules)).toEqual(plain);
              expect(Array.from(candidates.scheduledRules)).toEqual(plain.filter((p) => engine.rules[p].schedule >= 0));
              expect(candidates.scheduled).toBe(plain.some((p) => engine.rules[p].schedule >= 0));
              const text = plain.join(",");
              const known = byId.get(candidates.id);
              if (known === undefined) byId.set(candidates.id, text);
              else expect(known).toBe(text);
            }
          }
        }
        expect(new Set(byId.values()).size).toBe(byId.size);
      }),
      propertyParameters({ numRuns: 25, timeoutMs: 30_000 }),
    );
  }, 30_000);
});

describe("outcome runs shared by owner runs", () => {
  test("in every cell and slice, sampled elements get the outcome the naive evaluator gives", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), (seed) => {
        const model = validated(seed);
        const engine = compileModel(model);
        const naive = new NaiveEvaluator(model);
        const rnd = prng(seed);
        let checked = 0;
        // Every arrival (a destination of a family the interface has), as trace and the findings see them.
        for (const { iface, to } of arrivals(engine)) {
          const target = engine.addresses[to];
          const domain = engine.domains[target.family];
          for (const c of engine.classes) {
            if (c.service === null) continue;
            for (let slice = 0; slice < engine.week.slices.length; slice++) {
              const outcome = engine.outcomeOf(iface, to, c.index, slice);
              // The first element and one at random: the outcome runs read there against a linear scan over the rules.
              for (const element of [0, Math.floor(rnd() * domain.size)]) {
                const source = domain.bounds[element];
                const expected = naive.trace({ from: formatAddress(target.family, source), interface: model.interfaces[iface].name, service: c.service.name, to: target.text, atMs: Date.parse(instantInSlice(engine, slice)) });
                expect(OUTCOMES[engine.lookup(outcome, source)]).toBe(expected.outcome);
                checked++;
              }
            }
          }
        }
        expect(checked).toBeGreaterThan(0);
      }),
      propertyParameters({ numRuns: 10, timeoutMs: 30_000 }),
    );
  }, 30_000);
});
