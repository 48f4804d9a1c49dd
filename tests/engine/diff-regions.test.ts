// The diff evaluates only what an edit can change (server/engine/diff-regions.ts). These
// properties check it against the straightforward diff it replaced (tests/engine/reference-diff.ts:
// every cell, every stretch, both revisions' complete login reachability) on random small
// models and random one-element edits, with the region path, the whole-cell path and the
// fallback for lists too far apart for the edit search each forced in turn.

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { compileModel, diffModels, parseModel } from "#server/engine/index.ts";
import type { DeviceModel, DeviceModelInput } from "#server/engine/index.ts";
import { listEdits } from "#server/engine/diff-regions.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { referenceDiff } from "./reference-diff.ts";

// Fixed so a failure reproduces; fast-check prints the seed and the shrunk path with the counterexample.
const SEED = 20250302;

function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

const EDITS = [
  "move-rule",
  "toggle-rule",
  "flip-action",
  "change-entry",
  "remove-listener",
  "change-login-sources",
  "shift-schedule",
  // Edits prone to locking the operators out, so the lockout guard is exercised often.
  "deny-operators",
  "disable-account",
] as const;
type Edit = (typeof EDITS)[number];

/** One random element of the model changed; the result is validated again. */
function edited(model: DeviceModel, sources: readonly string[], edit: Edit, seed: number): DeviceModel {
  const rnd = prng(seed);
  const int = (n: number): number => Math.floor(rnd() * n);
  const pick = <T,>(xs: readonly T[]): T => xs[int(xs.length)];
  const next = structuredClone(model);
  const rules = next.inboundRules;
  switch (edit) {
    case "move-rule": {
      const [rule] = rules.splice(int(rules.length), 1);
      rules.splice(int(rules.length + 1), 0, rule);
      break;
    }
    case "toggle-rule": {
      const r = pick(rules);
      r.enabled = !r.enabled;
      break;
    }
    case "flip-action": {
      const r = pick(rules);
      r.action = r.action === "allow" ? "deny" : "allow";
      break;
    }
    case "change-entry": {
      const object = pick(next.addresses);
      const others = next.addresses.flatMap((a) => a.entries);
      object.entries[int(object.entries.length)] = rnd() < 0.5 ? pick(sources) : pick(others);
      break;
    }
    case "remove-listener": {
      const withListeners = next.interfaces.filter((f) => f.listeners.length > 0);
      if (withListeners.length === 0) break;
      const f = pick(withListeners);
      f.listeners.splice(int(f.listeners.length), 1);
      break;
    }
    case "change-login-sources": {
      if (next.accounts.length === 0) break;
      const a = pick(next.accounts);
      const names = next.addresses.map((x) => x.name);
      const count = int(3);
      a.loginSources = Array.from({ length: count }, () => (rnd() < 0.5 ? pick(sources) : pick(names)));
      break;
    }
    case "deny-operators": {
      rules.splice(int(Math.min(rules.length, 2) + 1), 0, {
        id: "lock-test",
        interface: rnd() < 0.7 ? "any" : pick(next.interfaces).name,
        sources: [...next.operatorNetworks],
        destinations: ["any"],
        services: [rnd() < 0.6 ? "any" : pick(["ssh", "https", "webconsole", "admin-web"])],
        schedule: "all-week",
        action: "deny",
        enabled: true,
        note: "",
      });
      break;
    }
    case "disable-account": {
      const enabled = next.accounts.filter((a) => a.enabled);
      if (enabled.length > 0) pick(enabled).enabled = false;
      break;
    }
    case "shift-schedule": {
      if (next.schedules.length === 0) break;
      const s = pick(next.schedules);
      if (s.windows.length === 0) break;
      const w = s.windows[int(s.windows.length)];
      const hour = String(int(24)).padStart(2, "0");
      s.windows[s.windows.indexOf(w)] = { ...w, start: `${hour}:${pick(["00", "15", "30", "45"])}` };
      break;
    }
  }
  return validated(next);
}

/** The diff as plain data (its findings lists are computed when read). */
function plain(d: ReturnType<typeof diffModels>) {
  return { changes: d.changes, lockout: d.lockout, findingsAdded: d.findingsAdded, findingsResolved: d.findingsResolved };
}

describe("the diff against the straightforward reference", () => {
  test(
    "random one-element edits give the same changes, lockout guard and findings, on every evaluation path",
    () => {
      const seen = { changes: 0, lockout: 0 };
      const sizes = [SMALL_SIZE, { ...SMALL_SIZE, interfaces: 4, rules: 40, addressObjects: 24, entries: 60, groups: 6, accounts: 6, schedules: 4 }];
      fc.assert(
        fc.property(fc.integer(), fc.constantFrom(...EDITS), fc.integer(), fc.boolean(), (seed, edit, editSeed, medium) => {
          const generated = generateModel(seed, sizes[medium ? 1 : 0]);
          const model = validated(generated.model);
          const after = edited(model, generated.sampleSources, edit, editSeed);
          const expected = referenceDiff(compileModel(model), compileModel(after));
          // Default tuning (rule sequences compared once, mostly regions); never a region (every
          // differing cell whole); each cell's candidate lists compared; and that comparison's
          // edit search giving up (regions from every rule between the common ends).
          const variants = [
            {},
            { tuning: { elementLimit: -1, ruleEditLimit: 256, editLimit: 64 } },
            { tuning: { elementLimit: Infinity, ruleEditLimit: -1, editLimit: 64 } },
            { tuning: { elementLimit: Infinity, ruleEditLimit: -1, editLimit: 0 } },
          ];
          expect(plain(diffModels(compileModel(model), compileModel(after))), edit).toEqual(plain(expected));
          for (const options of variants.slice(1)) {
            const actual = diffModels(compileModel(model), compileModel(after), options);
            // The findings lists do not depend on the tuning; the effect does.
            expect({ changes: actual.changes, lockout: actual.lockout }, `${edit} with ${JSON.stringify(options)}`).toEqual({ changes: expected.changes, lockout: expected.lockout });
          }
          if (expected.changes.length > 0) seen.changes++;
          if (expected.lockout.length > 0) seen.lockout++;
        }),
        { seed: SEED, numRuns: 200 },
      );
      // The property is not vacuous: edits changed outcomes and locked operators out.
      expect(seen.changes).toBeGreaterThan(20);
      expect(seen.lockout).toBeGreaterThan(10);
    },
    180_000,
  );

  test("a diff given both revisions' findings uses them instead of computing its own", () => {
    const model = validated(generateModel(11, SMALL_SIZE).model);
    const before = compileModel(model);
    const after = compileModel({ ...model, inboundRules: model.inboundRules.slice(1) });
    const marker = { code: "lockout", severity: "critical", title: "t", detail: "d", elements: ["operator-network:x"], source: "s" } as const;
    const d = diffModels(before, after, { findings: { before: [], after: [marker] } });
    expect(d.findingsAdded).toEqual([marker]);
    expect(d.findingsResolved).toEqual([]);
  });
});

describe("list edits (Myers 1986)", () => {
  test("removing the reported positions leaves equal lists, with no more edits than the bound", () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 5 }), { maxLength: 30 }), fc.array(fc.integer({ min: 0, max: 5 }), { maxLength: 30 }), (a, b) => {
        const edits = listEdits(a, b, 64);
        if (edits === null) throw new Error("60 elements are at most 60 edits apart");
        const keptA = a.filter((_, i) => !edits.a.includes(i));
        const keptB = b.filter((_, i) => !edits.b.includes(i));
        expect(keptA).toEqual(keptB);
        // Myers 1986 §2: D = N + M − 2·LCS, the shortest edit script; a cheap lower bound on it is the length difference.
        expect(edits.a.length + edits.b.length).toBeGreaterThanOrEqual(Math.abs(a.length - b.length));
        expect(listEdits(a, b, edits.a.length + edits.b.length - 1)).toBeNull();
      }),
      { seed: SEED, numRuns: 300 },
    );
  });

  test("a rule moved up by many places is two edits", () => {
    const before = Array.from({ length: 500 }, (_, i) => i);
    const after = [...before.slice(0, 100), 400, ...before.slice(100, 400), ...before.slice(401)];
    expect(listEdits(before, after, 8)).toEqual({ a: [400], b: [100] });
  });
});
