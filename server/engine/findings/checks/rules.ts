// Rule checks: never active, never the first match, redundant. Each carries a witness probe
// that `trace` replays; for the "never" findings the probe is one instance of the partition
// that proves it.
import { redundantRules } from "../../analysis.ts";
import { plural } from "../../format.ts";
import { elementRef } from "../../vocabulary.ts";
import type { FindingContext } from "../context.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

/** Enabled rules whose schedule is active in no slice: made once per context (three checks ask). */
const neverActive = (context: FindingContext) =>
  context.kept("rules|never-active", () => {
    const slices = context.engine.week.slices;
    const ever = context.model.schedules.map((_, schedule) => slices.some((slice) => slice.active[schedule]));
    return context.engine.rules.filter((rule) => rule.enabled && rule.schedule >= 0 && !ever[rule.schedule]);
  });

export const ruleNeverActive: FindingCheck = {
  code: "rule-never-active",
  severityRule: "low",
  source: SOURCES.hygiene,
  check: (context) =>
    neverActive(context).map((rule): Finding => {
      const schedule = context.model.schedules[rule.schedule].name;
      const witness = context.witnessOf(
        context.ruleMatchWitness(rule.position),
        ({ ruleId }) => `A probe that rule "${rule.id}" would match is decided by ${ruleId === null ? "the device default" : `rule "${ruleId}"`}: the rule is never active.`,
        `The week splits into ${plural(context.engine.week.slices.length, { one: "slice", other: "slices" })}; schedule "${schedule}" is active in none of them.`,
      );
      return {
        code: "rule-never-active",
        severity: "low",
        title: `Rule "${rule.id}" is never active`,
        detail: `Its schedule "${schedule}" has no active time in the week.`,
        elements: [elementRef("rule", rule.id), elementRef("schedule", schedule)],
        source: SOURCES.hygiene,
        ...(witness ? { witness } : {}),
      };
    }),
};

/** Enabled, sometimes-active rules: the ones the first-match checks judge. */
const judged = (context: FindingContext) => {
  const never = new Set(neverActive(context).map((rule) => rule.position));
  return context.engine.rules.filter((rule) => rule.enabled && !never.has(rule.position));
};

export const shadowedRule: FindingCheck = {
  code: "shadowed-rule",
  severityRule: "medium",
  source: SOURCES.ruleOrder,
  check: (context) =>
    judged(context)
      .filter((rule) => !context.firstMatchRules.has(rule.position))
      .map((rule): Finding =>
        context.ruleFinding("shadowed-rule", rule.position, () => {
          const witness = context.witnessOf(
            context.ruleMatchWitness(rule.position),
            ({ ruleId }) => `Rule "${rule.id}" matches this probe, but ${ruleId === null ? "the probe never reaches the rules" : `rule "${ruleId}" matches it first`}.`,
            "Over every interface, destination, service and slice, the first-match partition of the sources gives this rule no element.",
          );
          // The rule that takes the example probe names the shadowing concretely (finding every shadowing rule costs a walk per rule).
          const by =
            witness === undefined
              ? "The rule can match no probe at all (no interface, destination, service and time it names has an address of its sources' family); it has no effect."
              : witness.ruleId === null
                ? "Wherever it would match, the probe is decided before the rules; it has no effect."
                : `Wherever it would match, an earlier rule matches first (rule "${witness.ruleId}" at the example probe); it has no effect.`;
          return {
            code: "shadowed-rule",
            severity: "medium",
            title: `Rule "${rule.id}" is never the first match`,
            detail: by,
            // The shadowing rules are named in the detail, not the elements: the elements are the finding's identity (dismissals).
            elements: [elementRef("rule", rule.id)],
            source: SOURCES.ruleOrder,
            ...(witness ? { witness } : {}),
          };
        }),
      ),
};

export const redundantRule: FindingCheck = {
  code: "redundant-rule",
  severityRule: "low",
  source: SOURCES.ruleOrder,
  check: (context) => {
    const redundant = redundantRules(context.engine);
    return judged(context)
      .filter((rule) => redundant.has(rule.position))
      // Its witness is the first place the rule decides in the walk, which an edit elsewhere can move: kept only where that place is the basis's.
      .map((rule): Finding =>
        context.redundantFinding(rule.position, () => {
          const witness = context.witnessOf(
            context.ruleDecidesWitness(rule.position),
            `Rule "${rule.id}" decides this probe; without it the next matching rule (or the default) gives the same answer.`,
          );
          return {
            code: "redundant-rule",
            severity: "low",
            title: `Rule "${rule.id}" is redundant`,
            detail: "Removing this rule alone changes no outcome: wherever it decides, the next matching rule or the default acts the same way.",
            elements: [elementRef("rule", rule.id)],
            source: SOURCES.ruleOrder,
            ...(witness ? { witness } : {}),
          };
        }),
      );
  },
};
