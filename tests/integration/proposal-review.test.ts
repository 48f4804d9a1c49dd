// The reviewer's side of change proposals against the real test database and the built app:
// expectations in the gate (submission, approval, direct saves), the effect a reviewer reads
// and its JSON, the change record (page and JSON), importing a document as a proposal, and
// deleting a device under the change policy. Each test makes its own organisation.
// Semantics: docs/decisions/010-change-proposals.md and 011-expectations.md.

import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, ChangeProposal } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { deviceRevisions } from "#server/devices/index";
import { changeEffect, compileModel, parseModel, trace } from "#server/engine/index";
import { addExpectation } from "#server/services/expectations.server";
import { applyProposal, createProposal, reviewProposal } from "#server/services/proposals.server";
import { applyElementEdit } from "#server/workspace/index";
import { visibleText } from "../support/html";
import { attemptOf, details, mailbox, makeTeam, NOTE_R2, postJson, ref, revisionCount, type Team } from "../support/proposal-team";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

/** The partner's console on the outside: today a login page that refuses every account of theirs (no account may log in from there). */
const PARTNER_CONSOLE = { kind: "probe", id: "partner-console", from: "198.51.100.10", interface: "outside", service: "https", expect: "login-denied", note: "The partner reaches the console page." };
/** The partner rule switched off: the console goes dark for them; nobody loses a login (no lockout). */
const DISABLE_R2 = { ...NOTE_R2, rule: { ...NOTE_R2.rule, enabled: false } };
const disableR2Form = { intent: "save-rule", original: "r2", id: "r2", interface: "outside", sources: "partner-hq", destinations: "any", services: "https", schedule: "all-week", action: "allow", note: "" };

async function withPartnerExpectation(label: string): Promise<Team> {
  const team = await makeTeam(label);
  await addExpectation(team.organisationId, team.deviceId, PARTNER_CONSOLE, team.members.owner.actor);
  return team;
}

describe("Expectations join the gate", () => {
  test("A failing expectation blocks a direct save (the effect shown) and a proposal's submission; an admin approves past it with a written reason, and it applies", async () => {
    const team = await withPartnerExpectation("expect");
    // The partner console's expectation holds today (the engine's trace agrees).
    const live = await deviceRevisions.find(team.organisationId, team.deviceId);
    expect(trace(live!.analysis.compiled, { from: "198.51.100.10", interface: "outside", service: "https" }).outcome).toBe("login-denied");

    // A direct save that breaks it is refused with the reason and the effect in words; nothing is saved.
    const engineer = await team.members.engineer.client();
    const refused = await engineer.post(`${team.path}/model/rules`, { ...disableR2Form, baseRevision: "1" });
    expect(refused.status).toBe(409);
    const refusedText = visibleText(refused.text);
    expect(refusedText).toContain("Not saved: a failing expectation blocks this change.");
    expect(refusedText).toContain("Expectation “partner-console” held before this change and fails after it");
    expect(refusedText).toContain("The effect of this change");
    expect(refusedText).toContain("changed r2: enabled");
    // The headline is the engine's own for exactly this change.
    const disabled = parseModel(applyElementEdit(live!.effective, DISABLE_R2));
    if (!disabled.ok) throw new Error("the edit is valid");
    const headline = changeEffect(live!.analysis.compiled, compileModel(disabled.model)).headline;
    expect(refusedText).toContain(headline);
    expect(refusedText).toContain("Make it a proposal");
    expect(await revisionCount(team.deviceId)).toBe(1);
    // An admin is offered to save it anyway, with a reason.
    const admin = await team.members.admin.client();
    const adminRefused = await admin.post(`${team.path}/model/rules`, { ...disableR2Form, baseRevision: "1" });
    expect(adminRefused.status).toBe(409);
    expect(visibleText(adminRefused.text)).toContain("Why save it anyway");

    // As a proposal: submitting is refused (409) with the expectation's reason.
    const { environment } = mailbox();
    const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details("Close the partner console"), { kind: "edit", attempt: attemptOf(DISABLE_R2), message: "Changed inbound rule r2" }, team.members.author.actor, environment);
    const proposalPath = `${team.path}/proposals/${proposal.id}`;
    const author = await team.members.author.client();
    const blocked = await postJson(author, `${proposalPath}/submit`, {});
    expect(blocked.status).toBe(409);
    expect(blocked.json.error).toMatch(/^Not submitted: a failing expectation blocks this change\. Change the draft so every expectation that holds today still holds/);
    expect(blocked.json.reasons).toEqual([
      {
        kind: "expectation",
        words: expect.stringMatching(/^Expectation “partner-console” held before this change and fails after it: /),
        details: ["expected: 198.51.100.10 → outside https: Login shown, refused, all week", "before: 198.51.100.10 → outside https gets Login shown, refused all week, as expected.", expect.stringMatching(/^witness: 198\.51\.100\.10 → outside https/)],
      },
    ]);
    // The witness replays: `trace` on the draft gives what the reason says.
    const witness = /^witness: (\S+) → outside https \(to (\S+)\) at (\S+) gets No answer$/.exec(String((blocked.json.reasons as Array<{ details: string[] }>)[0].details[2]));
    expect(trace(compileModel(disabled.model), { from: witness?.[1] ?? "", interface: "outside", service: "https", to: witness?.[2], at: witness?.[3] }).outcome).toBe("silent");
    const page = visibleText((await author.get(proposalPath)).text);
    expect(page).toContain("Expectation no longer holds");
    expect(page).toContain("Acknowledge a failing expectation (only if the change is meant)");

    // Meant: the author acknowledges it in writing and submits.
    const submitted = await postJson(author, `${proposalPath}/submit`, { acknowledgement: "The partner contract ends on Friday; the console closes." });
    expect(submitted.status, JSON.stringify(submitted.json)).toBe(200);
    // A reviewer may not approve past it (403); an admin needs a written reason (400), then approves.
    const reviewerRefused = await postJson(await team.members.reviewer.client(), `${proposalPath}/approve`, { reason: "" });
    expect(reviewerRefused.status).toBe(403);
    expect(reviewerRefused.json.error).toMatch(/^A failing expectation blocks this change: only an admin or owner can approve it/);
    expect((await postJson(admin, `${proposalPath}/approve`, { reason: "" })).status).toBe(400);
    const approved = await postJson(admin, `${proposalPath}/approve`, { reason: "", guardOverride: "Agreed with the partner's account manager in CHG-881." });
    expect(approved.status, JSON.stringify(approved.json)).toBe(200);
    expect(approved.json.state).toBe("approved");
    const event = await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "proposal.approved", targetId: proposal.id } });
    expect(event?.changes).toMatchObject({ guardOverride: "Agreed with the partner's account manager in CHG-881." });
    // Applying checks the gate again: the admin's approval past it lets it through.
    const applied = await applyProposal(ref(team, proposal.id), {}, team.members.author.actor, environment);
    expect(applied.revision).toBe(2);
  });

  test("Applying is refused while an expectation the live revision meets would break and nobody approved past it", async () => {
    const team = await makeTeam("expect-late");
    const { environment } = mailbox();
    // Drafted and approved before the team recorded the expectation: nothing blocked then.
    const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details("Close the partner console"), { kind: "edit", attempt: attemptOf(DISABLE_R2), message: "Changed inbound rule r2" }, team.members.author.actor, environment);
    const proposalPath = `${team.path}/proposals/${proposal.id}`;
    expect((await postJson(await team.members.author.client(), `${proposalPath}/submit`, {})).status).toBe(200);
    await reviewProposal(ref(team, proposal.id), { verdict: "approved", reason: "" }, team.members.reviewer.actor, environment);
    await addExpectation(team.organisationId, team.deviceId, PARTNER_CONSOLE, team.members.owner.actor);
    const refused = await postJson(await team.members.author.client(), `${proposalPath}/apply`, {});
    expect(refused.status).toBe(409);
    expect(refused.json.error).toMatch(/^Not applied: a failing expectation blocks this change and no admin or owner approved it past it\./);
    expect(await revisionCount(team.deviceId)).toBe(1);
    expect((await ChangeProposal.findByPk(proposal.id))?.state).toBe("approved");
  });
});
