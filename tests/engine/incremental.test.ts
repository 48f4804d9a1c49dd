// Incremental analysis: a model compiled on the previous version of itself (compileModel's
// `basis`) re-uses what an edit cannot change — and must answer exactly as a fresh compile
// does. The property compares, after one random edit of each kind, every trace of a probe
// sample, the whole exposure map and the findings (witnesses included); the first-match
// semantics both sides follow are PRODUCT.md §3's. Published incremental verifiers make the
// same promise (an update equals recomputation); the checks here are ours.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, exposure, findings, trace, worstOutcome } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModel, Finding } from "#server/engine/index.ts";
import { RULE_FIELDS_COMPARED } from "#server/engine/compile.ts";
import { BENCH_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { MEDIUM, RULE_EDITS, validated } from "./random-edits.ts";
import type { Edit } from "./random-edits.ts";
import { propertyParameters } from "#tests/support/property-runs.ts";

/**
 * The editor's one-rule edits, and a few of them at once with every rule a fresh object (as a
 * document read back from storage is): the incremental compile then follows several changed
 * rules, compared by content.
 */
const EDITS: Record<string, Edit> = {
  ...RULE_EDITS,
  several: (m, pick) => {
    const kinds = Object.values(RULE_EDITS);
    let model = m;
    for (let k = 2 + (pick() % 3); k > 0; k--) model = validated(kinds[pick() % kinds.length](model, pick));
    return structuredClone(model);
  },
};

/**
 * Every answer the analysis pages and the CLI give, as one comparable value. The revision
 * summary's worst outcome per interface comes first, so its counts-only path reads partitions
 * nothing else has counted yet.
 */
function answers(device: CompiledModel, probes: readonly { from: string; interface: string; service: string; at: number }[]): string {
  const worst = device.model.interfaces.map((face) => worstOutcome(device, [face.name]));
  return JSON.stringify({ worst, findings: findings(device), exposure: exposure(device), traces: probes.map((p) => trace(device, p)) });
}

describe("incremental analysis", () => {
  test("after any one-rule edit, a model compiled on its previous version answers exactly as a fresh compile", { timeout: 90_000 }, () => {
    const used = { reused: 0, updated: 0 };
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 30 }), fc.constantFrom(...Object.keys(EDITS)), fc.integer({ min: 0, max: 2 ** 30 }), (seed, kind, editSeed) => {
        const generated = generateModel(seed, MEDIUM);
        const before = validated(generated.model);
        const random = prng(editSeed);
        const after = validated(EDITS[kind](before, () => Math.floor(random() * 1e9)));
        const previous = compileModel(before);
        findings(previous);
        exposure(previous);
        const probes = generated.sampleSources.slice(0, 40).flatMap((from, i) => {
          const face = after.interfaces[i % after.interfaces.length];
          return [{ from, interface: face.name, service: ["ssh", "https", "ping", "tcp/8443"][i % 4], at: Date.UTC(2026, 0, 5 + (i % 7), (i * 5) % 24) }];
        });
        const incremental = compileModel(after, { basis: previous });
        expect(answers(incremental, probes)).toBe(answers(compileModel(after), probes));
        used.reused += incremental.partitionSources.reused;
        used.updated += incremental.partitionSources.updated;
      }),
      propertyParameters({ numRuns: 60, timeoutMs: 90_000 }),
    );
    // Both ways of carrying a partition over were exercised, not only the fresh sweep.
    expect(used.reused).toBeGreaterThan(0);
    expect(used.updated).toBeGreaterThan(0);
  });

  test("a change of any one field of a rule is seen as an edit of that rule, and a parsed rule has no field the comparison leaves out", () => {
    const model = validated(generateModel(9, MEDIUM).model);
    const previous = compileModel(model);
    const at = model.inboundRules.findIndex((r) => r.schedule !== model.schedules[0].name);
    const rule = model.inboundRules[at];
    expect(Object.keys(rule).sort()).toEqual(Object.keys(RULE_FIELDS_COMPARED).sort());
    const other = <T>(values: readonly T[], not: T): T => values.find((v) => v !== not) as T;
    const changed: Record<keyof typeof RULE_FIELDS_COMPARED, DeviceModel["inboundRules"][number]> = {
      id: { ...rule, id: "renamed-rule" },
      interface: { ...rule, interface: other(model.interfaces.map((f) => f.name), rule.interface) },
      sources: { ...rule, sources: [...rule.sources, other(model.addresses.map((a) => a.name), rule.sources[0])] },
      destinations: { ...rule, destinations: [...rule.destinations, other(model.addresses.map((a) => a.name), rule.destinations[0])] },
      services: { ...rule, services: [...rule.services, other(["ssh", "https", "snmp"], rule.services[0])] },
      schedule: { ...rule, schedule: model.schedules[0].name },
      action: { ...rule, action: rule.action === "allow" ? "deny" : "allow" },
      enabled: { ...rule, enabled: !rule.enabled },
      note: { ...rule, note: `${rule.note} (changed)` },
    };
    for (const [field, edited] of Object.entries(changed)) {
      // A fresh copy of every rule, as a document read back from storage: found by content, not identity.
      const next = compileModel(validated(structuredClone({ ...model, inboundRules: model.inboundRules.map((r, i) => (i === at ? edited : r)) })), { basis: previous });
      expect(next.changedRuleIds, field).not.toBeNull();
      expect([...(next.changedRuleIds ?? [])], field).toContain(edited.id);
      expect(next.changedRuleIds?.size, field).toBe(field === "id" ? 2 : 1);
    }
  });

  test("a rule removed together with another rule's change of action: partitions whose owners did not change still take the new actions", () => {
    const model = validated(generateModel(21, MEDIUM).model);
    const previous = compileModel(model);
    findings(previous);
    exposure(previous);
    const rules = model.inboundRules;
    for (let removed = 0; removed < rules.length; removed++) {
      // The flipped rule: the next one on the same interface, so it shares the removed rule's lists.
      const flipped = rules.findIndex((r, i) => i > removed && r.interface === rules[removed].interface);
      if (flipped < 0) continue;
      const edited = validated({
        ...model,
        inboundRules: rules.flatMap((r, i) => (i === removed ? [] : i === flipped ? [{ ...r, action: r.action === "allow" ? "deny" : "allow" }] : [r])),
      });
      const next = compileModel(edited, { basis: previous });
      expect(answers(next, []), `rule ${removed} removed, ${flipped} flipped`).toBe(answers(compileModel(edited), []));
    }
  });

  test("account findings are the basis's own objects after an edit of rules, and made again after an edit of an account", () => {
    const model = validated(generateModel(13, MEDIUM).model);
    const previous = compileModel(model);
    const before = findings(previous);
    const ofAccounts = (list: readonly Finding[]) => list.filter((f) => f.elements.some((e) => e.startsWith("account:")) && f.code !== "lockout");
    expect(ofAccounts(before).length).toBeGreaterThan(0);
    const ruleEdited = compileModel(validated(RULE_EDITS.switch(model, () => 3)), { basis: previous });
    const kept = ofAccounts(findings(ruleEdited));
    expect(kept.length).toBe(ofAccounts(before).length);
    for (const finding of kept) expect(before).toContain(finding);
    // Every account without a second factor gets one: those findings go, in the incremental compile as in a fresh one.
    const accountEdited = validated({ ...model, accounts: model.accounts.map((a) => ({ ...a, secondFactor: "totp" as const })) });
    const next = compileModel(accountEdited, { basis: previous });
    expect(JSON.stringify(findings(next))).toBe(JSON.stringify(findings(compileModel(accountEdited))));
    expect(findings(next).some((f) => f.code === "no-second-factor")).toBe(false);
  });

  test("a chain of edits, each compiled on the one before, stays exact", { timeout: 60_000 }, () => {
    const generated = generateModel(77, MEDIUM);
    let model = validated(generated.model);
    let previous = compileModel(model);
    findings(previous);
    const random = prng(78);
    const kinds = Object.keys(EDITS);
    for (let step = 0; step < 25; step++) {
      model = validated(EDITS[kinds[step % kinds.length]](model, () => Math.floor(random() * 1e9)));
      const next = compileModel(model, { basis: previous });
      expect(JSON.stringify(findings(next)), `step ${step}`).toBe(JSON.stringify(findings(compileModel(model))));
      previous = next;
    }
  });

  test("a move, a switch and a change of action re-sweep no rule list: partitions are taken or updated from the basis", () => {
    const model = validated(generateModel(5, { ...MEDIUM, rules: 60 }).model);
    const previous = compileModel(model);
    findings(previous);
    const edits = [
      EDITS.move(model, (() => { let k = 0; return () => [3, 40][k++ % 2]; })()),
      EDITS.switch(model, () => 7),
      EDITS.action(model, () => 9),
    ].map(validated);
    for (const edited of edits) {
      const next = compileModel(edited, { basis: previous });
      findings(next);
      expect(next.partitionSources.swept).toBe(0);
      // Cells no changed rule is a candidate for take the basis's partitions whole; the rest re-use or update the basis's lists.
      expect(next.partitionSources.inherited).toBeGreaterThan(0);
      expect(next.partitionSources.reused + next.partitionSources.updated).toBeGreaterThan(0);
    }
    // Without a basis every partition is swept.
    const fresh = compileModel(edits[0]);
    findings(fresh);
    expect(fresh.partitionSources.reused + fresh.partitionSources.updated + fresh.partitionSources.inherited).toBe(0);
    expect(fresh.partitionSources.swept).toBeGreaterThan(0);
  });

  test("on the 2,000-rule benchmark model, every kind of edit (and a chain of them) gives the findings of a fresh compile, in the same order", { timeout: 180_000 }, () => {
    // Real sizes exercise what small random models rarely reach: partitions updated over
    // thousands of elements and whole-word runs, hundreds of changed cells, and names whose
    // reference count crosses zero.
    const model = validated(generateModel(20250301, BENCH_SIZE).model);
    const basis = compileModel(model);
    findings(basis);
    let chain = basis;
    let pick = 0;
    const picks = [100, 900, 500, 700, 400, 1200, 300, 7, 10, 4990];
    const next = () => picks[pick++ % picks.length];
    for (const [kind, edit] of Object.entries(RULE_EDITS)) {
      const edited = validated(edit(model, next));
      const expected = JSON.stringify(findings(compileModel(edited)));
      expect(JSON.stringify(findings(compileModel(edited, { basis }))), kind).toBe(expected);
      const chained = validated(edit(chain.model, next));
      const after = compileModel(chained, { basis: chain });
      expect(JSON.stringify(findings(after)), `chain: ${kind}`).toBe(JSON.stringify(findings(compileModel(chained))));
      chain = after;
    }
  });

  test("unused objects along a long chain of destination edits (the reference counts fold their changes in now and then) match a fresh compile at every step", { timeout: 60_000 }, () => {
    const generated = validated(generateModel(11, MEDIUM).model);
    // Eighty objects nothing names yet; each step points the first rule's destinations at the next one (destinations cut no elements, so the edit is followed by difference).
    const extra = Array.from({ length: 80 }, (_, i) => ({ name: `spare-${i}`, entries: [`192.0.2.${i + 1}/32`] }));
    const withSpares = validated({ ...generated, addresses: [...generated.addresses, ...extra] });
    let previous = compileModel(withSpares);
    findings(previous);
    for (let step = 0; step < extra.length; step++) {
      const model = validated({ ...previous.model, inboundRules: previous.model.inboundRules.map((rule, i) => (i === 0 ? { ...rule, destinations: [extra[step].name] } : rule)) });
      const next = compileModel(model, { basis: previous });
      const unused = (device: CompiledModel) => JSON.stringify(findings(device).filter((finding) => finding.code === "unused-object"));
      expect(unused(next), `step ${step}`).toBe(unused(compileModel(model)));
      previous = next;
    }
  });
});
