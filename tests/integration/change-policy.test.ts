// The organisation's change policy on the two ways a device changed outside the editor and
// proposals (docs/decisions/017): "import as a new revision" is a direct save (the change policy
// and the gate judge it, as in the live editor), and a shared-object change that moves sources on
// a device is, under "changes go through proposals", an admin's break-glass step with a written
// reason — audited beside each revision it writes and e-mailed to the reviewers. Each test makes
// its own organisation (tests/support/proposal-team.ts).

import { afterAll, describe, expect, inject, test } from "vitest";
import { AuditEvent, Organisation, SharedAddressObject, Site } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { createDevice } from "#server/services/devices.server";
import { previewSharedObjectChange, saveSharedObject } from "#server/services/shared-objects.server";
import type { TestClient } from "../support/client";
import { plain, wordsOf } from "../support/html";
import { readCaughtMail, waitForMail } from "../support/outbox";
import { makeTeam, MOLE, revisionCount, type Team } from "../support/proposal-team";
import { reviewConfirmFields } from "../support/shared-objects";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

const REASON = "The partner's link is down and the NOC needs the new range tonight.";

async function requireProposals(team: Team, on: boolean): Promise<void> {
  await Organisation.update({ changesThroughProposals: on }, { where: { id: team.organisationId } });
}

/** MOLE with a note on r2: a change that moves no source. */
const NOTED = { ...MOLE, inboundRules: MOLE.inboundRules.map((rule) => (rule.id === "r2" ? { ...rule, note: "partner console" } : rule)) };
/** MOLE with the catch-all deny first: the NOC (the operator network) loses every login path. */
const LOCKED_OUT = { ...MOLE, inboundRules: [MOLE.inboundRules[3], ...MOLE.inboundRules.slice(0, 3)] };

/** The import page's last step for a new revision of the team's device, the effect read. */
function importRevision(client: TestClient, team: Team, document: unknown, extra: Record<string, string> = {}) {
  return client.post(`/o/${team.slug}/devices/import`, { intent: "import", target: `device:${team.deviceId}`, fileName: "mole.json", documentText: JSON.stringify(document), baseRevision: "1", effectRead: "yes", ...extra });
}

function previewRevision(client: TestClient, team: Team, document: unknown) {
  return client.post(`/o/${team.slug}/devices/import`, { intent: "preview", target: `device:${team.deviceId}`, fileName: "mole.json", documentText: JSON.stringify(document) });
}

async function auditOf(team: Team, action: string) {
  return AuditEvent.findAll({ where: { organisationId: team.organisationId, action }, order: [["id", "ASC"]] });
}

describe("Import as a new revision follows the change policy, like a save in the editor", () => {
  test("Under 'changes go through proposals' an engineer is offered only the proposal and refused a direct import; an admin imports directly with a written reason, audited and e-mailed", async () => {
    const team = await makeTeam("import-policy");
    await requireProposals(team, true);
    const engineer = await team.members.engineer.client();

    const preview = wordsOf((await previewRevision(engineer, team, NOTED)).text);
    expect(preview).toContain("In this organisation changes go through proposals: import it as a proposal");
    expect(preview).toContain("Import as a proposal");
    expect(preview).not.toContain("Import mole-edge");

    const refused = await importRevision(engineer, team, NOTED);
    expect(refused.status).toBe(403);
    expect(wordsOf(refused.text)).toContain("Not saved: in this organisation changes go through proposals.");
    expect(await revisionCount(team.deviceId)).toBe(1);

    // The way it offers: the same document as a proposal.
    const window = { windowStart: "2031-05-06T20:00", windowEnd: "2031-05-06T22:00" };
    const proposed = await importRevision(engineer, team, NOTED, { as: "proposal", title: "Note the partner rule", ...window });
    expect(proposed.status, plain(proposed.text).slice(0, 300)).toBe(302);
    expect(proposed.location).toMatch(new RegExp(`^/o/${team.slug}/devices/${team.deviceId}/proposals/[0-9a-f-]{36}$`));
    expect(await revisionCount(team.deviceId)).toBe(1);

    // An admin: a reason is asked for, a short one refused, a written one saves.
    const admin = await team.members.admin.client();
    const adminPreview = wordsOf((await previewRevision(admin, team, NOTED)).text);
    expect(adminPreview).toContain("Why this cannot wait for a proposal (break-glass)");
    const noReason = await importRevision(admin, team, NOTED);
    expect(noReason.status).toBe(403);
    const short = await importRevision(admin, team, NOTED, { overrideReason: "urgent" });
    expect(short.status).toBe(400);
    expect(wordsOf(short.text)).toContain("needs a written reason of at least 20 characters");
    expect(await revisionCount(team.deviceId)).toBe(1);
    const saved = await importRevision(admin, team, NOTED, { overrideReason: REASON });
    expect(saved.status, plain(saved.text).slice(0, 300)).toBe(302);
    expect(await revisionCount(team.deviceId)).toBe(2);
    const [breakGlass] = await auditOf(team, "device.break-glass-saved");
    expect(breakGlass.changes).toMatchObject({ revision: 2, reason: REASON, message: "Imported mole.json" });
    // The reviewers learn of it (everyone reviewer or higher but its author).
    const mail = await waitForMail(inject("outboxDir"), team.members.reviewer.email, /^Break-glass change: mole-edge r2/);
    expect(mail.text).toContain(REASON);
  });

  test("Without the policy, an import the lockout guard blocks is not offered to an engineer and refused with the reasons; an admin imports it anyway with a reason; a harmless one imports", async () => {
    const team = await makeTeam("import-guard");
    const engineer = await team.members.engineer.client();

    const preview = wordsOf((await previewRevision(engineer, team, LOCKED_OUT)).text);
    expect(preview).toContain("The lockout guard blocks importing this directly: import it as a proposal");
    expect(preview).not.toContain("Import mole-edge");

    const refused = await importRevision(engineer, team, LOCKED_OUT);
    expect(refused.status).toBe(409);
    const words = wordsOf(refused.text);
    expect(words).toContain("Not saved: the lockout guard blocks this change.");
    expect(await revisionCount(team.deviceId)).toBe(1);

    const admin = await team.members.admin.client();
    expect(wordsOf((await previewRevision(admin, team, LOCKED_OUT)).text)).toContain("Why import it anyway");
    expect((await importRevision(admin, team, LOCKED_OUT)).status).toBe(409);
    expect(await revisionCount(team.deviceId)).toBe(1);
    const saved = await importRevision(admin, team, LOCKED_OUT, { overrideReason: REASON });
    expect(saved.status, plain(saved.text).slice(0, 300)).toBe(302);
    expect(await revisionCount(team.deviceId)).toBe(2);
    const [past] = await auditOf(team, "device.saved-past-guard");
    expect(past.changes).toMatchObject({ revision: 2, reason: REASON });

    // A change the gate lets through imports as before.
    const harmless = await importRevision(engineer, team, { ...LOCKED_OUT, inboundRules: MOLE.inboundRules }, { baseRevision: "2" });
    expect(harmless.status, plain(harmless.text).slice(0, 300)).toBe(302);
    expect(await revisionCount(team.deviceId)).toBe(3);
  });
});

/** A second device of the team that uses the shared object ops-desk (198.51.100.0/28): https from it on outside, all else dropped. */
async function withSharedObject(team: Team): Promise<{ deviceId: string; path: string }> {
  const owner = team.members.owner.actor;
  const input = { kind: "address" as const, name: "ops-desk", items: ["198.51.100.0/28"], description: "" };
  const preview = await previewSharedObjectChange(team.organisationId, null, input);
  await saveSharedObject(team.organisationId, null, input, owner, preview.confirmation);
  const site = await Site.findOne({ where: { organisationId: team.organisationId } });
  const quay = {
    schemaVersion: 2,
    device: { name: "quay-edge", timezone: "Europe/Lisbon" },
    interfaces: [{ name: "outside", role: "wan", addresses: ["203.0.113.10/24"], listeners: ["https"] }],
    inboundRules: [
      { id: "ops-in", interface: "outside", sources: ["ops-desk"], destinations: ["any"], services: ["https"], action: "allow" },
      { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
    ],
    accounts: [{ name: "ops-lena", secondFactor: "totp" }],
  };
  const device = await createDevice(team.organisationId, site!.id, quay, owner, "created");
  return { deviceId: device.id, path: `/o/${team.slug}/devices/${device.id}` };
}

const SHARED = (team: Team) => `/o/${team.slug}/settings/shared-objects`;

function saveOpsDesk(client: TestClient, team: Team, items: string) {
  return client.post(SHARED(team), { intent: "save", original: "ops-desk", kind: "address", name: "ops-desk", items, description: "" });
}

describe("A shared-object change that moves sources follows the change policy", () => {
  test("Under 'changes go through proposals' the review says why it cannot be proposed, offers the new value as a new object, and saves only with an admin's written reason — audited per device and e-mailed", async () => {
    const team = await makeTeam("shared-policy");
    const quay = await withSharedObject(team);
    await requireProposals(team, true);
    const admin = await team.members.admin.client();

    const review = await saveOpsDesk(admin, team, "198.51.100.16/28");
    expect(review.status).toBe(200);
    const words = wordsOf(review.text);
    expect(words).toContain("Changes go through proposals in this organisation");
    expect(words).toContain("This change moves sources on quay-edge.");
    expect(words).toContain("Save as a new object");
    expect(words).toContain("Why this cannot wait for proposals (break-glass)");

    // Confirmed without a reason, or with a short one: refused, nothing written.
    const fields = reviewConfirmFields(review.text);
    const noReason = await admin.post(SHARED(team), fields);
    expect(noReason.status).toBe(403);
    expect(wordsOf(noReason.text)).toContain("A shared object has one value on every device, so it cannot be proposed per device");
    expect((await admin.post(SHARED(team), { ...fields, breakGlassReason: "tonight" })).status).toBe(400);
    expect(await revisionCount(quay.deviceId)).toBe(1);
    expect((await SharedAddressObject.findOne({ where: { organisationId: team.organisationId, name: "ops-desk" } }))?.items).toEqual(["198.51.100.0/28"]);

    // The reviewed way: the new value under a new name changes no device and saves at once.
    const next = await admin.post(SHARED(team), { intent: "save", original: "", kind: "address", name: "ops-desk-next", items: "198.51.100.16/28", description: "" });
    expect(next.status).toBe(302);
    expect(plain((await admin.get(next.location!)).text)).toContain("Shared address object ops-desk-next saved. Propose on each device that should use it.");
    expect(await revisionCount(quay.deviceId)).toBe(1);

    // Break-glass: the admin's reason saves it, beside each revision and in the library's entry
    // (reviewed again: the library changed since the first review, by the new object).
    expect((await admin.post(SHARED(team), { ...fields, breakGlassReason: REASON })).status).toBe(409);
    const again = await saveOpsDesk(admin, team, "198.51.100.16/28");
    const saved = await admin.post(SHARED(team), { ...reviewConfirmFields(again.text), breakGlassReason: REASON });
    expect(saved.status, plain(saved.text).slice(0, 300)).toBe(302);
    expect(await revisionCount(quay.deviceId)).toBe(2);
    const [library] = await auditOf(team, "shared-object.updated");
    expect(library.changes).toMatchObject({ breakGlass: REASON, deviceRevisions: [{ device: "quay-edge", revision: 2 }] });
    const [device] = await auditOf(team, "device.break-glass-saved");
    expect(device.targetId).toBe(quay.deviceId);
    expect(device.changes).toMatchObject({ revision: 2, reason: REASON, sharedObjects: ["ops-desk"] });
    const mail = await waitForMail(inject("outboxDir"), team.members.reviewer.email, /^Break-glass change: shared address object ops-desk/);
    expect(mail.text).toContain("quay-edge r2");
    expect(mail.text).toContain(REASON);
    // The audit log reads it in words.
    expect(wordsOf((await admin.get(`/o/${team.slug}/settings/audit`)).text)).toContain(`directly though changes go through proposals (break-glass): “${REASON}”`);
  });

  test("A change that revises a device without moving any source, and any change without the policy, saves as before with no reason", async () => {
    const team = await makeTeam("shared-quiet");
    const quay = await withSharedObject(team);
    await requireProposals(team, true);
    const admin = await team.members.admin.client();

    // The same 16 addresses written as two /29s: the model changes, no source's outcome does.
    const same = await saveOpsDesk(admin, team, "198.51.100.0/29 198.51.100.8/29");
    expect(same.status).toBe(200);
    expect(wordsOf(same.text)).not.toContain("Changes go through proposals in this organisation");
    expect((await admin.post(SHARED(team), reviewConfirmFields(same.text))).status).toBe(302);
    expect(await revisionCount(quay.deviceId)).toBe(2);

    await requireProposals(team, false);
    const moved = await saveOpsDesk(admin, team, "198.51.100.32/28");
    expect(wordsOf(moved.text)).not.toContain("break-glass");
    expect((await admin.post(SHARED(team), reviewConfirmFields(moved.text))).status).toBe(302);
    expect(await revisionCount(quay.deviceId)).toBe(3);
    expect(await auditOf(team, "device.break-glass-saved")).toHaveLength(0);
    // Nobody was e-mailed about a break-glass change.
    expect((await readCaughtMail(inject("outboxDir"))).filter((mail) => mail.subject.startsWith("Break-glass change: shared") && mail.to.includes(team.members.reviewer.email))).toHaveLength(0);
  });

  test("A policy switched on between the review and the confirmation is applied at the confirmation", async () => {
    const team = await makeTeam("shared-switch");
    const quay = await withSharedObject(team);
    const admin = await team.members.admin.client();
    const review = await saveOpsDesk(admin, team, "198.51.100.16/28");
    expect(wordsOf(review.text)).not.toContain("break-glass");
    await requireProposals(team, true);
    const refused = await admin.post(SHARED(team), reviewConfirmFields(review.text));
    expect(refused.status).toBe(403);
    expect(await revisionCount(quay.deviceId)).toBe(1);
  });
});
