// The audit log's words (app/utils/audit-words.ts) and the one wording of outcomes and layers.

import { describe, expect, test } from "vitest";
import { AUDIT_ACTIONS, AUDIT_TARGET_TYPES } from "#models/audit-actions";
import { AUDIT_ACTION_LABELS, AUDIT_TARGET_LABELS, auditActionLabel, auditDetails, auditSentence, fieldLabel, valueText } from "#app/utils/audit-words";
import { OUTCOME_LABELS as SHOWN_OUTCOME_LABELS } from "#app/components/outcome";
import { LAYER_TITLES } from "#app/utils/trace-words";
import { LAYER_LABELS, LAYERS, OUTCOME_LABELS, OUTCOMES } from "#server/engine/vocabulary";

describe("Audit words", () => {
  test("Every action and target type has its own label", () => {
    expect(Object.keys(AUDIT_ACTION_LABELS)).toEqual([...AUDIT_ACTIONS]);
    expect(new Set(Object.values(AUDIT_ACTION_LABELS)).size).toBe(AUDIT_ACTIONS.length);
    expect(Object.keys(AUDIT_TARGET_LABELS)).toEqual([...AUDIT_TARGET_TYPES]);
  });

  test("Every action reads as a sentence that names its target and its values, never as JSON", () => {
    const changes = { name: { from: "Pier 3", to: "Pier 4" }, email: "ines@example.com", role: { from: "trainee", to: "engineer" }, revision: 7, message: "tighten ssh", changes: ["rules: changed r1", "accounts: added ops"], code: "no-second-factor", device: "quay-gw-01", reason: "contract", items: ["192.0.2.0/24"], kind: "address", newEmail: "new@example.com", lastRevision: 3 };
    for (const action of AUDIT_ACTIONS) {
      const sentence = auditSentence({ action, targetName: "Target Name", changes });
      expect(sentence, action).not.toMatch(/[{}]|\[object|undefined|null/);
      expect(sentence.length, action).toBeGreaterThan(5);
    }
    expect(auditSentence({ action: "device.revised", targetName: "quay-gw-01", changes })).toBe("Saved r7 of “quay-gw-01”: “tighten ssh” (2 changes)");
    expect(auditSentence({ action: "member.role-changed", targetName: "Ines Quayside", changes })).toBe("Changed the role of Ines Quayside from trainee to engineer");
    expect(auditSentence({ action: "site.updated", targetName: "Pier 4", changes: { location: { from: "", to: "Dock 2" } } })).toBe("Changed site “Pier 4”: location “—” → “Dock 2”");
    expect(auditSentence({ action: "user.password-changed", targetName: null, changes: { otherSessionsEnded: 1 } })).toBe("Changed their password and signed out 1 other session");
    expect(auditSentence({ action: "user.renamed", targetName: null, changes })).toBe("Changed their name from “Pier 3” to “Pier 4”");
    expect(auditSentence({ action: "organisation.renamed", targetName: null, changes: { name: { from: "Harbour Ltd", to: "Harbour plc" } } })).toBe("Renamed the organisation from “Harbour Ltd” to “Harbour plc”");
  });

  test("A stored action this version does not know still reads, with its values", () => {
    expect(auditActionLabel("drill.scored")).toBe("drill.scored");
    expect(auditSentence({ action: "drill.scored", targetName: null, changes: { lastRevision: 4 } })).toBe("drill.scored a deleted item (last revision: 4)");
  });

  test("Recorded values become readable lines", () => {
    expect(valueText({ from: ["a", "b"], to: ["c"] })).toBe("a, b → c");
    expect(valueText([])).toBe("none");
    expect(valueText("")).toBe("—");
    expect(fieldLabel("otherSessionsEnded")).toBe("other sessions ended");
    expect(auditDetails({ changes: ["rules: changed r1", "accounts: added ops"], revision: 2 })).toEqual([
      { field: "changes", lines: ["rules: changed r1", "accounts: added ops"] },
      { field: "revision", lines: ["2"] },
    ]);
  });
});

describe("One wording for the codes", () => {
  test("The pages show the vocabulary's own labels for outcomes and layers", () => {
    expect(SHOWN_OUTCOME_LABELS).toBe(OUTCOME_LABELS);
    expect(LAYER_TITLES).toBe(LAYER_LABELS);
    expect(Object.keys(OUTCOME_LABELS)).toEqual([...OUTCOMES]);
    expect(Object.keys(LAYER_LABELS)).toEqual([...LAYERS]);
    expect(new Set(Object.values(LAYER_LABELS)).size).toBe(LAYERS.length);
  });
});
