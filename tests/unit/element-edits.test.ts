// Element edits as data (server/workspace/element-edits.ts): every form of the device editor
// plans a JSON-serialisable edit; applying it equals the edit functions it stands for; what it
// touches is named for conflict detection; two documents give the edits between them.
// Semantics: PRODUCT.md §3–§4; rule order is the meaning (common practice, no source: first match wins).

import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { generateModel, type ModelSize } from "#server/engine/testing/generate-model.ts";
import { planDeviceEdit, PlannedAttempt } from "#server/http/device-forms.server.ts";
import {
  applyElementEdit,
  applyElementEdits,
  deleteNamed,
  describeElementEdit,
  diffDocuments,
  duplicateRule,
  editsBetween,
  ElementEditSchema,
  elementKeyWords,
  elementsChangedIn,
  elementsTouchedBy,
  EMPTY_LIBRARY,
  moveRule,
  parseElementEdits,
  resolveElementEdit,
  setRuleEnabled,
  upsertNamed,
  validateDocument,
  type ElementEdit,
  type ModelDocument,
} from "#server/workspace/index.ts";
import { propertyParameters } from "../support/property-runs";

function normalised(input: unknown): ModelDocument {
  const validated = validateDocument(input, EMPTY_LIBRARY);
  if (!validated.ok) throw new Error(`fixture invalid: ${JSON.stringify(validated.errors)}`);
  return validated.document;
}

/** Invented scenario: a ferry terminal's edge device. Outside RFC 5737, inside RFC 1918. */
const TERMINAL = normalised({
  schemaVersion: 2,
  device: { name: "ferry-edge", timezone: "Europe/Oslo" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["192.0.2.2/24"], listeners: ["https", "ping"] },
    { name: "inside", role: "lan", addresses: ["10.30.0.1/24"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "noc-net", entries: ["10.30.8.0/24"] },
    { name: "vendor-hq", entries: ["198.51.100.0/28"] },
  ],
  addressGroups: [{ name: "operators", members: ["noc-net"] }],
  inboundRules: [
    { id: "r1", interface: "inside", sources: ["operators"], destinations: ["any"], services: ["ssh", "https"], action: "allow" },
    { id: "r2", interface: "outside", sources: ["vendor-hq"], destinations: ["any"], services: ["https"], action: "allow" },
    { id: "r3", interface: "outside", sources: ["any"], destinations: ["any"], services: ["ping"], action: "deny" },
    { id: "r4", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny", note: "final drop" },
  ],
  accounts: [{ name: "ops-ida", loginSources: ["operators"], secondFactor: "totp" }],
  operatorNetworks: ["operators"],
});

const ids = (document: ModelDocument) => document.inboundRules.map((rule) => rule.id);

/** The edit a form post plans, or the test fails. */
function planned(intent: string, values: Record<string, string>): ElementEdit {
  const result = planDeviceEdit(intent, values);
  if (!result?.ok) throw new Error(`the ${intent} form should be valid: ${JSON.stringify(result)}`);
  return result.plan.edit;
}

/** One form post of each kind the editor has, valid on TERMINAL. */
const FORM_POSTS: Array<[string, Record<string, string>]> = [
  ["save-interface", { original: "", name: "dmz", role: "dmz", addresses: "10.30.9.1/24", listeners: "https" }],
  ["save-interface", { original: "outside", name: "uplink", role: "wan", addresses: "192.0.2.2/24", listeners: "https\nping" }],
  ["delete-interface", { name: "outside" }],
  ["save-address", { original: "", name: "audit-desk", entries: "10.30.7.5" }],
  ["save-address", { original: "noc-net", name: "noc-lan", entries: "10.30.8.0/24" }],
  ["delete-address", { name: "vendor-hq" }],
  ["save-address-group", { original: "operators", name: "operators", members: "noc-net vendor-hq" }],
  ["delete-address-group", { name: "operators" }],
  ["save-service", { original: "", name: "console-alt", protocol: "tcp", port: "8443", kind: "login" }],
  ["save-service-group", { original: "", name: "admin-web", members: "https" }],
  ["save-schedule", { original: "", name: "office", windows: "mon tue wed 08:00-17:00" }],
  ["save-account", { original: "ops-ida", name: "ops-ida", loginSources: "noc-net", secondFactor: "totp", services: "https", accessLevel: "full", enabled: "on" }],
  ["delete-account", { name: "ops-ida" }],
  ["save-rule", { original: "", id: "", position: "1", interface: "outside", sources: "vendor-hq", destinations: "any", services: "ssh", schedule: "all-week", action: "allow", enabled: "on", note: "" }],
  ["save-rule", { original: "r2", id: "r2", position: "", interface: "outside", sources: "vendor-hq", destinations: "any", services: "https ping", schedule: "all-week", action: "allow", enabled: "on", note: "wider" }],
  ["move-rule", { ruleId: "r4", to: "1" }],
  ["duplicate-rule", { ruleId: "r2" }],
  ["disable-rule", { ruleId: "r3" }],
  ["enable-rule", { ruleId: "r3" }],
  ["delete-rule", { ruleId: "r3" }],
  ["save-operator-networks", { operatorNetworks: "operators noc-net" }],
  ["save-settings", { name: "ferry-edge-2", siteId: "7b0c1c52-4f7d-4c52-9d0e-2b8f6b1d2a10", timezone: "Europe/Oslo", defaultInbound: "deny", unlistenedPort: "reset" }],
];

describe("Every form of the device editor plans an edit that is data", () => {
  test.each(FORM_POSTS)("%s survives JSON and its schema, and applies alike before and after", (intent, values) => {
    const edit = planned(intent, values);
    const stored = JSON.parse(JSON.stringify(edit)) as unknown;
    const read = ElementEditSchema.parse(stored);
    expect(read).toEqual(edit);
    const run = (candidate: ElementEdit) => {
      try {
        return { document: applyElementEdit(TERMINAL, candidate) };
      } catch (error) {
        return { refused: error instanceof Error ? error.message : String(error) };
      }
    };
    expect(run(read)).toEqual(run(edit));
  });

  test("Applying a planned edit equals calling the edit function it stands for", () => {
    // The functions of edits.ts are the meaning; the data only names which one and with what.
    expect(applyElementEdit(TERMINAL, planned("move-rule", { ruleId: "r4", to: "1" }))).toEqual(moveRule(TERMINAL, "r4", 1));
    expect(applyElementEdit(TERMINAL, planned("disable-rule", { ruleId: "r3" }))).toEqual(setRuleEnabled(TERMINAL, "r3", false));
    expect(applyElementEdit(TERMINAL, planned("duplicate-rule", { ruleId: "r2" }))).toEqual(duplicateRule(TERMINAL, "r2"));
    expect(applyElementEdit(TERMINAL, planned("delete-account", { name: "ops-ida" }))).toEqual(deleteNamed(TERMINAL, "accounts", "ops-ida"));
    const renamed = applyElementEdit(TERMINAL, planned("save-address", { original: "noc-net", name: "noc-lan", entries: "10.30.8.0/24" }));
    expect(renamed).toEqual(upsertNamed(TERMINAL, "addresses", "noc-net", { name: "noc-lan", entries: ["10.30.8.0/24"] }));
    // A rename follows every reference (the group that named it).
    expect(renamed.addressGroups[0].members).toEqual(["noc-lan"]);
  });

  test("Refusals are those of the edit functions: a missing rule is 404, an element in use 409, nothing changed", () => {
    const before = structuredClone(TERMINAL);
    expect(() => applyElementEdit(TERMINAL, { kind: "rule.move", ruleId: "r9", to: 1 })).toThrow(expect.objectContaining({ status: 404 }));
    expect(() => applyElementEdit(TERMINAL, { kind: "delete", collection: "addresses", name: "noc-net" })).toThrow(expect.objectContaining({ status: 409 }));
    expect(TERMINAL).toEqual(before);
  });

  test("The toast of each plan is the edit's own description", () => {
    for (const [intent, values] of FORM_POSTS) {
      const result = planDeviceEdit(intent, values);
      if (!result?.ok) throw new Error("valid");
      expect(result.plan.message).toBe(describeElementEdit(result.plan.edit));
    }
    expect(describeElementEdit(planned("move-rule", { ruleId: "r4", to: "1" }))).toBe("Moved inbound rule r4 to position 1");
    expect(describeElementEdit(planned("save-address", { original: "noc-net", name: "noc-lan", entries: "10.30.8.0/24" }))).toBe("Renamed address object noc-net to noc-lan");
  });
});

describe("Resolving an edit makes its choices once, so a re-application means the same", () => {
  test("A new rule without an id gets the next free one, and the form's target learns it", () => {
    const plan = planDeviceEdit("save-rule", FORM_POSTS[13][1]);
    if (!plan?.ok) throw new Error("valid");
    const attempt = new PlannedAttempt(plan.plan);
    const after = attempt.apply(TERMINAL);
    expect(ids(after)).toEqual(["r5", "r1", "r2", "r3", "r4"]);
    expect(attempt.target).toEqual({ collection: "inboundRules", name: "r5" });
    expect(attempt.resolved).toMatchObject({ kind: "rule.insert", rule: { id: "r5" }, after: null });
    expect(elementsTouchedBy(attempt.resolved)).toEqual(["inboundRules:r5"]);
  });

  test("A moved rule is re-applied after the same neighbour on a revision with more rules", () => {
    // The user dragged r3 (ping deny) to just below r1; on a later revision two rules were added on top.
    const resolved = resolveElementEdit(TERMINAL, { kind: "rule.move", ruleId: "r3", to: 2 });
    expect(resolved).toEqual({ kind: "rule.move", ruleId: "r3", to: 2, after: "r1" });
    const later = { ...TERMINAL, inboundRules: [{ ...TERMINAL.inboundRules[1], id: "r8" }, { ...TERMINAL.inboundRules[1], id: "r9" }, ...TERMINAL.inboundRules] };
    expect(ids(applyElementEdit(later, resolved))).toEqual(["r8", "r9", "r1", "r3", "r2", "r4"]);
    // Without its neighbour the position is the fallback.
    const withoutNeighbour = { ...TERMINAL, inboundRules: TERMINAL.inboundRules.filter((rule) => rule.id !== "r1") };
    expect(ids(applyElementEdit(withoutNeighbour, resolved))).toEqual(["r2", "r3", "r4"]);
  });

  test("A duplicate's copy keeps the id it was given when first applied", () => {
    const resolved = resolveElementEdit(TERMINAL, { kind: "rule.duplicate", ruleId: "r2" });
    expect(resolved).toEqual({ kind: "rule.duplicate", ruleId: "r2", copyId: "r5" });
    const withR5 = applyElementEdit(TERMINAL, { kind: "rule.insert", rule: { ...TERMINAL.inboundRules[0], id: "r5" } });
    // Elsewhere the same id is asked for, and refused when taken (a conflict to settle), never silently renamed.
    expect(() => applyElementEdit(withR5, resolved)).toThrow(expect.objectContaining({ status: 409 }));
  });
});

describe("What an edit touches, and what a diff reports changed, name the same elements", () => {
  test.each<[ElementEdit, string[]]>([
    [{ kind: "upsert", collection: "addresses", original: "noc-net", item: { name: "noc-lan", entries: ["10.30.8.0/24"] } }, ["addresses:noc-net", "addresses:noc-lan"]],
    [{ kind: "upsert", collection: "addresses", original: null, item: { name: "desk", entries: ["10.30.7.5"] } }, ["addresses:desk"]],
    [{ kind: "delete", collection: "accounts", name: "ops-ida" }, ["accounts:ops-ida"]],
    [{ kind: "rule.move", ruleId: "r4", to: 1 }, ["inboundRules:r4"]],
    [{ kind: "rule.enable", ruleId: "r3", enabled: false }, ["inboundRules:r3"]],
    [{ kind: "rule.duplicate", ruleId: "r2", copyId: "r5" }, ["inboundRules:r5"]],
    [{ kind: "settings", device: TERMINAL.device }, ["device"]],
    [{ kind: "operator-networks", names: [] }, ["operatorNetworks"]],
  ])("%j touches %j", (edit, keys) => {
    expect(elementsTouchedBy(edit)).toEqual(keys);
  });

  test("An edit's touched elements are among those the readable diff reports for it", () => {
    for (const [intent, values] of FORM_POSTS) {
      const edit = resolveElementEdit(TERMINAL, planned(intent, values));
      let after: ModelDocument;
      try {
        after = applyElementEdit(TERMINAL, edit);
      } catch {
        continue;
      }
      const changed = new Set(elementsChangedIn(diffDocuments(TERMINAL, after)));
      for (const key of elementsTouchedBy(edit)) if (after !== TERMINAL && changed.size > 0) expect([...changed], `${intent}: ${key}`).toContain(key);
    }
  });

  test("Keys read as words", () => {
    expect(elementKeyWords("addresses:noc-net")).toBe("address object noc-net");
    expect(elementKeyWords("inboundRules:r3")).toBe("inbound rule r3");
    expect(elementKeyWords("device")).toBe("device settings");
    expect(elementKeyWords("operatorNetworks")).toBe("operator networks");
  });
});

const TINY: ModelSize = { interfaces: 2, rules: 6, addressObjects: 4, entries: 6, groups: 2, accounts: 2, schedules: 1, spread: "narrow", scheduledShare: 0.3, scheduleStyle: "random" };

describe("The edits between two documents lead from one to the other", () => {
  test("Any two generated documents: the edits between them lead to the second, element by element (property)", () => {
    const budget = { numRuns: 80, timeoutMs: 30_000 };
    const sizes = fc.record({ rules: fc.integer({ min: 1, max: 9 }), addressObjects: fc.integer({ min: 1, max: 6 }), accounts: fc.integer({ min: 1, max: 3 }), groups: fc.integer({ min: 0, max: 3 }) });
    fc.assert(
      fc.property(fc.integer(), fc.integer(), sizes, sizes, fc.array(fc.nat(), { maxLength: 9 }), (first, second, one, other, swaps) => {
        const before = normalised(generateModel(first, { ...TINY, ...one }).model);
        const generated = normalised(generateModel(second, { ...TINY, ...other }).model);
        // The second document's rules in another order: moves as well as additions, changes and removals.
        const rules = [...generated.inboundRules];
        swaps.forEach((swap, index) => {
          const a = index % rules.length;
          const b = swap % rules.length;
          [rules[a], rules[b]] = [rules[b], rules[a]];
        });
        const after = { ...generated, inboundRules: rules };
        const edits = editsBetween(before, after);
        // The generator never gives one name to two kinds, so the edits go element by element.
        expect(edits.filter((edit) => edit.kind === "replace")).toEqual([]);
        const result = applyElementEdits(before, edits);
        // Equal but for the order of named elements, which means nothing: rules keep theirs exactly.
        expect(diffDocuments(result, after)).toEqual([]);
        expect(ids(result)).toEqual(ids(after));
        // Stored and read back, they mean the same.
        expect(applyElementEdits(before, parseElementEdits(JSON.parse(JSON.stringify(edits))))).toEqual(result);
      }),
      propertyParameters(budget),
    );
  }, 30_000);

  test("A document against itself needs no edit, whatever order its objects' keys come in", () => {
    expect(editsBetween(TERMINAL, structuredClone(TERMINAL))).toEqual([]);
    // PostgreSQL's jsonb gives objects back with its own key order (shorter keys first): the same document.
    const reordered = JSON.parse(JSON.stringify(TERMINAL, (_key, value: unknown) => (value && typeof value === "object" && !Array.isArray(value) ? Object.fromEntries(Object.entries(value).reverse()) : value))) as ModelDocument;
    expect(Object.keys(reordered.accounts[0])).not.toEqual(Object.keys(TERMINAL.accounts[0]));
    expect(editsBetween(TERMINAL, reordered)).toEqual([]);
    expect(diffDocuments(TERMINAL, reordered)).toEqual([]);
  });

  test("Moving one rule is one move of that rule, placed after its new neighbour", () => {
    const moved = moveRule(TERMINAL, "r2", 4);
    expect(editsBetween(TERMINAL, moved)).toEqual([{ kind: "rule.move", ruleId: "r2", to: 4, after: "r4" }]);
    const toTop = moveRule(TERMINAL, "r4", 1);
    expect(editsBetween(TERMINAL, toTop)).toEqual([{ kind: "rule.move", ruleId: "r4", to: 1, after: null }]);
  });

  test("A rename through the editor comes back as an addition, the references changed, and the old name deleted", () => {
    const renamed = upsertNamed(TERMINAL, "addresses", "vendor-hq", { name: "vendor-office", entries: ["198.51.100.0/28"] });
    const edits = editsBetween(TERMINAL, renamed);
    expect(edits.map((edit) => edit.kind)).toEqual(["upsert", "rule.update", "delete"]);
    expect(applyElementEdits(TERMINAL, edits)).toEqual(renamed);
  });

  test("A name that moves from an address object to a group cannot go element by element: one replace edit names what differs", () => {
    const swapped: ModelDocument = {
      ...TERMINAL,
      addresses: TERMINAL.addresses.filter((object) => object.name !== "vendor-hq").concat({ name: "vendor-net", entries: ["198.51.100.0/28"] }),
      addressGroups: [...TERMINAL.addressGroups, { name: "vendor-hq", members: ["vendor-net"] }],
    };
    const edits = editsBetween(TERMINAL, swapped);
    expect(edits).toHaveLength(1);
    expect(edits[0]).toMatchObject({ kind: "replace" });
    expect(elementsTouchedBy(edits[0]).sort()).toEqual(["addressGroups:vendor-hq", "addresses:vendor-hq", "addresses:vendor-net"]);
    expect(applyElementEdits(TERMINAL, edits)).toEqual(swapped);
  });
});
