// The findings' non-private exposure is computed only for the interface × service a check asks
// about, and the login and ping checks ask only about listened services. Both shortcuts are
// checked here on random models: against the naive evaluator (an unlistened service answers no
// login and no echo reply, whatever the rules say) and against a context that computed every
// interface × service's exposure before the checks ran (same findings, word for word).

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, parseModel } from "#server/engine/index.ts";
import type { DeviceModel } from "#server/engine/index.ts";
import { FINDING_CHECKS } from "#server/engine/findings/index.ts";
import { FindingContext } from "#server/engine/findings/context.ts";
import { NaiveEvaluator } from "#server/engine/naive.ts";
import { SMALL_SIZE, generateModel } from "#server/engine/testing/generate-model.ts";
import { ANSWERED, LOGIN_DENIED, LOGIN_MFA, LOGIN_PASSWORD } from "#server/engine/vocabulary.ts";
import { instantInSlice } from "#server/engine/week-times.ts";
import { propertyParameters, type PropertyBudget } from "#tests/support/property-runs.ts";

const BUDGETS = {
  unlistened: { numRuns: 15, timeoutMs: 30_000 },
  everyService: { numRuns: 40, timeoutMs: 30_000 },
} as const satisfies Record<string, PropertyBudget>;

const MEDIUM = { ...SMALL_SIZE, interfaces: 4, rules: 40, addressObjects: 30, entries: 80, groups: 6, accounts: 6, schedules: 3 };

function validated(seed: number, size = SMALL_SIZE): { model: DeviceModel; sources: readonly string[] } {
  const generated = generateModel(seed, size);
  const parsed = parseModel(generated.model);
  if (!parsed.ok) throw new Error(`generated model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return { model: parsed.model, sources: generated.sampleSources };
}

const LOGIN_OUTCOMES = new Set(["login-password", "login-mfa", "login-denied"]);
const ANSWER = { password: LOGIN_PASSWORD, mfa: LOGIN_MFA, denied: LOGIN_DENIED, answered: ANSWERED };

describe("the findings' exposure shortcuts", () => {
  test("an unlistened catalogue service answers no login and no echo reply (naive evaluator, every device address)", () => {
    let unlistened = 0;
    fc.assert(
      fc.property(fc.integer(), (seed) => {
        const { model, sources } = validated(seed);
        const device = compileModel(model);
        // A few slices spread over the week and a few sources: the naive evaluator is slow.
        const slices = device.week.slices.length;
        const instants = [...new Set([0, 1, 2, 3].map((k) => Math.floor((k * slices) / 4)))].map((slice) => Date.parse(instantInSlice(device, slice)));
        const naive = new NaiveEvaluator(model);
        for (const [iface, entry] of model.interfaces.entries()) {
          for (const [cls, service] of device.catalogue.entries()) {
            if (service.kind !== "login" && service.kind !== "echo") continue;
            if (new FindingContext(device).listens(iface, cls)) continue;
            expect(entry.listeners).not.toContain(service.name);
            unlistened++;
            for (const from of sources.slice(0, 6)) {
              const family = from.includes(":") ? ":" : ".";
              for (const to of device.addresses.filter((a) => a.text.includes(family))) {
                for (const atMs of instants) {
                  const outcome = naive.trace({ from, interface: entry.name, service: service.name, to: to.text, atMs }).outcome;
                  if (service.kind === "login") expect(LOGIN_OUTCOMES.has(outcome), `${service.name} from ${from} to ${to.text} on ${entry.name}`).toBe(false);
                  else expect(outcome, `${service.name} from ${from} to ${to.text} on ${entry.name}`).not.toBe("answered");
                }
              }
            }
          }
        }
      }),
      propertyParameters(BUDGETS.unlistened),
    );
    // The property looked at some unlistened services at all.
    expect(unlistened).toBeGreaterThan(0);
  }, BUDGETS.unlistened.timeoutMs);

  test("the findings are those of a context that computed every interface × service's exposure first", () => {
    fc.assert(
      fc.property(fc.integer(), fc.boolean(), (seed, medium) => {
        const { model } = validated(seed, medium ? MEDIUM : SMALL_SIZE);
        const lazy = new FindingContext(compileModel(model));
        const eager = new FindingContext(compileModel(model));
        for (let iface = 0; iface < model.interfaces.length; iface++) {
          for (const [cls, service] of eager.engine.catalogue.entries()) {
            const seen = eager.exposure(iface, cls);
            if (eager.listens(iface, cls) || seen === undefined) continue;
            // What the login and ping checks would have read for an unlistened service: nothing they report.
            if (service.kind === "login") expect([ANSWER.password, ANSWER.mfa, ANSWER.denied].some((outcome) => seen.outcomes.has(outcome))).toBe(false);
            if (service.kind === "echo") expect(seen.outcomes.has(ANSWER.answered)).toBe(false);
          }
        }
        const run = (context: FindingContext) => JSON.stringify(FINDING_CHECKS.flatMap((check) => check.check(context)));
        expect(run(lazy)).toBe(run(eager));
      }),
      propertyParameters(BUDGETS.everyService),
    );
  }, BUDGETS.everyService.timeoutMs);
});
