// The reviewer's side of change proposals against the real test database and the built app:
// expectations in the gate (submission, approval, direct saves), the effect a reviewer reads
// and its JSON, the change record (page and JSON), importing a document as a proposal, and
// deleting a device under the change policy. Each test makes its own organisation.
// Semantics: docs/decisions/010-change-proposals.md and 011-expectations.md.

import { DateTime } from "luxon";
import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, ChangeProposal, Device, Site } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { deviceRevisions } from "#server/devices/index";
import { changeEffect, compileModel, parseModel, trace } from "#server/engine/index";
import { addExpectation } from "#server/services/expectations.server";
import { applyProposal, createProposal, reviewProposal } from "#server/services/proposals.server";
import { applyElementEdit } from "#server/workspace/index";
import { postMultipart } from "../support/client";
import { fieldError, plain, UUID, visibleText } from "../support/html";
import { localText } from "#server/proposals/change-window";
import { attemptOf, details, mailbox, makeTeam, MOLE, NOTE_R2, postJson, ref, revisionCount, TIMEZONE, type Team } from "../support/proposal-team";

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

/** The catch-all deny first: the NOC loses its logins (a lockout), everything else goes quiet too. */
const DENY_FIRST = { kind: "rule.move", ruleId: "r4", to: 1 } as const;

type EffectJson = {
  proposal: { id: string; baseRevision: number; draftVersion: number; appliedRevision: number | null };
  timezone: string;
  ok: boolean;
  effect: {
    headline: string;
    blocked: boolean;
    totals: { gains: string; loses: string };
    groups: Array<{ key: string; before: string; after: string; count: string; sources: { items: string[]; offset: number; limit: number; total: number }; witness: { from: string; interface: string; service: string; to: string; at: string } }>;
    rules: { moved: Array<{ id: string; from: number; to: number }> };
    blocking: Array<{ kind: string; subject: string }>;
    picture: { cells: Array<{ interface: string; service: string; before: string; after: string; changed: boolean }> };
  };
};

describe("The effect a reviewer reads", () => {
  test("The effect JSON says what the page says, and every group's witness replays with trace on the base and on the draft; a draft edit refreshes it", async () => {
    const team = await makeTeam("effect");
    const { environment } = mailbox();
    const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details("Deny first", undefined, "10.20.30.41"), { kind: "edit", attempt: attemptOf(DENY_FIRST), message: "Moved inbound rule r4 to position 1" }, team.members.author.actor, environment);
    const proposalPath = `${team.path}/proposals/${proposal.id}`;
    // Anyone in the organisation reads it, a trainee too.
    const trainee = await team.members.trainee.client();
    const answer = await trainee.get(`${proposalPath}/effect`);
    expect(answer.status).toBe(200);
    expect(answer.headers.get("content-type")).toMatch(/^application\/json/);
    const json = JSON.parse(answer.text) as EffectJson;
    expect(json.proposal).toEqual({ id: proposal.id, baseRevision: 1, draftVersion: 1, appliedRevision: null });
    expect(json.ok).toBe(true);

    // The engine's effect of exactly these two documents.
    const base = await deviceRevisions.find(team.organisationId, team.deviceId);
    const draftDocument = parseModel((await ChangeProposal.findByPk(proposal.id))!.draftDocument);
    if (!base || !draftDocument.ok) throw new Error("the base and the draft read");
    const draft = compileModel(draftDocument.model);
    const engine = changeEffect(base.analysis.compiled, draft, { workFrom: ["10.20.30.41"] });
    expect(json.effect.headline).toBe(engine.headline);
    expect(json.effect.headline).toMatch(/^Locks out operator network “noc-net”/);
    expect(json.effect.blocked).toBe(true);
    expect(json.effect.blocking.map((entry) => entry.kind)).toEqual(["lockout", "work-from"]);
    expect(json.effect.rules.moved).toEqual([expect.objectContaining({ id: "r4", from: 4, to: 1 })]);
    // A claim needs a witness: each group's probe gets 'before' on the base and 'after' on the draft.
    expect(json.effect.groups.length).toBeGreaterThan(0);
    for (const group of json.effect.groups) {
      expect(trace(base.analysis.compiled, group.witness).outcome, group.key).toBe(group.before);
      expect(trace(draft, group.witness).outcome, group.key).toBe(group.after);
    }
    const nocSsh = json.effect.picture.cells.find((cell) => cell.interface === "inside" && cell.service === "ssh");
    expect(nocSsh).toMatchObject({ before: "login-mfa", after: "silent", changed: true });

    // The page shows the same headline, the moved rule with a way to comment on it, and the picture.
    const reviewer = await team.members.reviewer.client();
    const page = await reviewer.get(proposalPath);
    const text = visibleText(page.text).replace(/\s+/g, " ");
    expect(text).toContain(engine.headline);
    expect(text).toMatch(/Moved r4 comment ?: position 4 → 1/);
    expect(page.text).toContain('data-testid="effect-picture"');
    // "comment" beside a rule opens the comment form about it.
    const about = await reviewer.get(`${proposalPath}?comment=r4`);
    expect(plain(about.text)).toMatch(/<option value="r4" selected="">inbound rule r4<\/option>/);

    // One page of a group's sources at a time.
    const big = json.effect.groups.find((group) => group.sources.total >= 2);
    if (big) {
      const paged = JSON.parse((await trainee.get(`${proposalPath}/effect?group=${encodeURIComponent(big.key)}&offset=1&limit=1`)).text) as EffectJson;
      expect(paged.effect.groups.find((group) => group.key === big.key)?.sources).toEqual({ items: [big.sources.items[1]], offset: 1, limit: 1, total: big.sources.total });
    }
    // The summary the draft editor refreshes: the headline and what blocks, nothing more.
    const summary = JSON.parse((await trainee.get(`${proposalPath}/effect?summary=1`)).text) as { effect: Record<string, unknown> };
    expect(Object.keys(summary.effect).sort()).toEqual(["blocked", "blocking", "changed", "headline", "totals"]);

    // A draft edit (the deny back last): the effect follows the new draft version.
    const author = await team.members.author.client();
    expect((await author.post(`${proposalPath}/draft/rules`, { intent: "move-rule", ruleId: "r4", to: "4", baseRevision: "1" })).status).toBe(302);
    const after = JSON.parse((await author.get(`${proposalPath}/effect?summary=1`)).text) as EffectJson;
    expect(after.proposal.draftVersion).toBe(2);
    expect(after.effect.headline).toBe("No source's outcome changes");
    expect(after.effect.blocked).toBe(false);

    // Bad input: a malformed offset is 400 with its path; another organisation's proposal is 404.
    const bad = await trainee.get(`${proposalPath}/effect?offset=-3`);
    expect(bad.status).toBe(400);
    expect(JSON.parse(bad.text)).toEqual({ error: "The request is not valid.", issues: [{ path: "offset", message: "must be a whole number, 0 or more" }] });
    const other = await makeTeam("effect-other");
    expect((await (await other.members.owner.client()).get(`${other.path}/proposals/${proposal.id}/effect`)).status).toBe(404);
    expect((await trainee.get(`${team.path}/proposals/not-an-id/effect`)).status).toBe(400);
  });
});

/** Every key path of a JSON value, arrays read through their first item ("reviews[].by.email"). */
function keyPaths(value: unknown, prefix = ""): string[] {
  if (Array.isArray(value)) return value.length === 0 ? [`${prefix}[]`] : keyPaths(value[0], `${prefix}[]`);
  if (value === null || typeof value !== "object") return [prefix];
  return Object.entries(value).flatMap(([key, inner]) => keyPaths(inner, prefix ? `${prefix}.${key}` : key));
}

describe("The change record", () => {
  test("An applied proposal's change record shows the change, its effect, the expectations, the approvals with times and the revision; it downloads as JSON with stable keys; History links to it", async () => {
    const team = await withPartnerExpectation("record");
    const { environment } = mailbox();
    const proposal = await createProposal(
      { organisationId: team.organisationId, deviceId: team.deviceId },
      { ...details("Note the partner rule"), reason: "The partner asked for a note on their rule.", ticket: "CHG-2042" },
      { kind: "edit", attempt: attemptOf(NOTE_R2), message: "Changed inbound rule r2" },
      team.members.author.actor,
      environment,
    );
    const proposalPath = `${team.path}/proposals/${proposal.id}`;
    const author = await team.members.author.client();
    expect((await postJson(author, `${proposalPath}/submit`, {})).status).toBe(200);
    const reviewer = await team.members.reviewer.client();
    expect((await postJson(reviewer, `${proposalPath}/comment`, { body: "Fine by me; the note helps the night shift.", ruleId: "r2" })).status).toBe(200);
    expect((await postJson(reviewer, `${proposalPath}/approve`, { reason: "Read the effect: nothing changes for anyone." })).status).toBe(200);
    expect((await applyProposal(ref(team, proposal.id), {}, team.members.author.actor, environment)).revision).toBe(2);
    const stored = await ChangeProposal.findByPk(proposal.id);
    const approval = await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "proposal.approved", targetId: proposal.id } });

    // The proposal page and History link to it.
    expect((await reviewer.get(proposalPath)).text).toContain(`href="${proposalPath}/record"`);
    const history = await reviewer.get(`${team.path}/history`);
    expect(history.text).toContain(`href="${proposalPath}/record"`);
    expect(history.text).toContain('aria-label="Change record of revision 2"');

    // The page: every part a reviewer files with the change ticket.
    const page = await reviewer.get(`${proposalPath}/record`);
    expect(page.status).toBe(200);
    expect(page.text).toContain("data-change-record");
    const text = visibleText(page.text).replace(/\s+/g, " ");
    for (const part of ["The change", "Effect and expectations", "Review", "Note the partner rule", "The partner asked for a note on their rule.", "CHG-2042", "No source's outcome changes", "changed r2 : note", "partner-console", "Read the effect: nothing changes for anyone.", "Fine by me; the note helps the night shift."]) expect(text).toContain(part);
    expect(text).toMatch(/Approved by Reviewer record \(reviewer-record-[0-9a-f]{8}@test\.example\) \( ?reviewer ?\), \w{3} \d{1,2} \w{3} \d{4}, \d{2}:\d{2} Europe\/Oslo/);
    expect(page.text).toContain(`href="${team.path}/history?to=2"`);
    // Who applied it, by name and e-mail, on the record and on the proposal's page (walk report).
    expect(text).toMatch(new RegExp(`Applied as revision r ?2 by ${team.members.author.name} \\(${team.members.author.email.replace(/\./g, "\\.")}\\)`));
    expect(visibleText((await reviewer.get(proposalPath)).text).replace(/\s+/g, " ")).toMatch(new RegExp(`r ?2 by ${team.members.author.name} \\(${team.members.author.email.replace(/\./g, "\\.")}\\)`));

    // The JSON: the same record, as a download, with stable keys.
    const download = await reviewer.get(`${proposalPath}/record.json`);
    expect(download.status).toBe(200);
    expect(download.headers.get("content-type")).toBe("application/json; charset=utf-8");
    expect(download.headers.get("content-disposition")).toBe(`attachment; filename="mole-edge-change-record-${proposal.id.slice(0, 8)}.json"`);
    const record = JSON.parse(download.text) as Record<string, unknown> & { proposal: Record<string, unknown>; reviews: Array<Record<string, unknown>>; applied: Record<string, unknown>; expectations: Array<Record<string, unknown>>; window: Record<string, unknown> };
    expect(keyPaths(record)).toEqual([
      "format", "version",
      "proposal.id", "proposal.title", "proposal.reason", "proposal.ticket", "proposal.state", "proposal.stateLabel", "proposal.author.name", "proposal.author.email", "proposal.workFrom", "proposal.createdAt", "proposal.submittedAt", "proposal.draftVersion", "proposal.baseRevision", "proposal.blockAcknowledged",
      "device.id", "device.name", "device.timezone",
      "window.start", "window.end", "window.timezone",
      "applied.revision", "applied.at", "applied.by.name", "applied.by.email", "applied.outsideWindowReason",
      "effect.comparedWith", "effect.fromRevision", "effect.headline", "effect.changed", "effect.totals.gains", "effect.totals.loses", "effect.groups[]",
      "effect.rules.added[]", "effect.rules.removed[]", "effect.rules.moved[]", "effect.rules.changed[].id", "effect.rules.changed[].fields[]",
      "effect.rules.becomeShadowed[]", "effect.rules.stopShadowed[]", "effect.rules.becomeRedundant[]", "effect.rules.stopRedundant[]",
      "effect.findings.new[]", "effect.findings.resolved[]", "effect.findings.unchanged", "effect.lockout[]", "effect.workFrom[]", "effect.blocking[]",
      "expectations[].id", "expectations[].kind", "expectations[].expectation", "expectations[].before.status", "expectations[].before.words", "expectations[].after.status", "expectations[].after.words", "expectations[].broken", "expectations[].fixed",
      "reviews[].verdict", "reviews[].by.name", "reviews[].by.email", "reviews[].role", "reviews[].at", "reviews[].draftVersion", "reviews[].countsNow", "reviews[].reason", "reviews[].approvedPastBlock",
      "comments[].by.name", "comments[].by.email", "comments[].at", "comments[].ruleId", "comments[].body", "comments[].draftVersion",
    ]);
    expect(record).toMatchObject({ format: "sallyport-change-record", version: 2, proposal: { id: proposal.id, title: "Note the partner rule", ticket: "CHG-2042", state: "applied", baseRevision: 1 }, device: { id: team.deviceId, name: "mole-edge", timezone: "Europe/Oslo" } });
    expect(record.window).toEqual({ start: stored?.windowStart.toISOString(), end: stored?.windowEnd.toISOString(), timezone: "Europe/Oslo" });
    expect(record.applied).toEqual({ revision: 2, at: stored?.appliedAt?.toISOString(), by: { name: team.members.author.name, email: team.members.author.email }, outsideWindowReason: "" });
    expect(record.expectations).toEqual([expect.objectContaining({ id: "partner-console", before: expect.objectContaining({ status: "holds" }), after: expect.objectContaining({ status: "holds" }), broken: false })]);
    // The approval's time is the one the audit log recorded for it.
    expect(record.reviews).toEqual([expect.objectContaining({ verdict: "approved", role: "reviewer", countsNow: true, by: { name: team.members.reviewer.name, email: team.members.reviewer.email } })]);
    expect(Math.abs(Date.parse(String(record.reviews[0].at)) - (approval?.createdAt.getTime() ?? 0))).toBeLessThan(5_000);

    // Another organisation's proposal answers 404, page and JSON alike.
    const other = await makeTeam("record-other");
    const outsider = await other.members.owner.client();
    expect((await outsider.get(`${other.path}/proposals/${proposal.id}/record`)).status).toBe(404);
    expect((await outsider.get(`${other.path}/proposals/${proposal.id}/record.json`)).status).toBe(404);
  });
});

describe("Importing a document as a proposal", () => {
  test("The import preview of a new revision offers 'Import as a proposal': a title is asked for (nothing typed is lost when it is refused), and the proposal's draft is the document, the device unchanged", async () => {
    const team = await makeTeam("import");
    const engineer = await team.members.engineer.client();
    const document = { ...MOLE, inboundRules: [MOLE.inboundRules[2], ...MOLE.inboundRules.filter((rule) => rule.id !== "r3")] };
    const fields = { intent: "import", target: `device:${team.deviceId}`, fileName: "mole-ping-first.json", documentText: JSON.stringify(document) };
    const preview = await postMultipart(engineer, "/o/" + team.slug + "/devices/import", { ...fields, intent: "preview" });
    expect(preview.status).toBe(200);
    const previewText = visibleText(preview.text);
    expect(previewText).toContain("Or import it as a proposal");
    const button = /<button([^>]*)>Import as a proposal<\/button>/.exec(preview.text)?.[1] ?? "";
    expect(button).toContain('name="as"');
    expect(button).toContain('value="proposal"');

    // No title: refused beside the field, with the window as typed kept and nothing created.
    const windowStart = localText(new Date(Date.now() + 86_400_000), TIMEZONE);
    const windowEnd = localText(new Date(Date.now() + 90_000_000), TIMEZONE);
    const untitled = await postMultipart(engineer, `/o/${team.slug}/devices/import`, { ...fields, as: "proposal", title: "", windowStart, windowEnd });
    expect(untitled.status).toBe(400);
    expect(fieldError(untitled.text, "Proposal title")).toBe("Give the change a title of at least 3 characters; it becomes the revision's message.");
    expect(plain(untitled.text)).toContain(`value="${windowStart}"`);
    expect(await ChangeProposal.count({ where: { deviceId: team.deviceId } })).toBe(0);
    // A window that ends before it starts: said beside the window, the title kept.
    const backwards = await postMultipart(engineer, `/o/${team.slug}/devices/import`, { ...fields, as: "proposal", title: "Ping deny first", windowStart: windowEnd, windowEnd: windowStart });
    expect(backwards.status).toBe(400);
    expect(fieldError(backwards.text, "Change window ends")).toBe("The window must end after it starts.");
    expect(plain(backwards.text)).toContain('value="Ping deny first"');

    // With a title: a proposal whose draft is the document, recorded as element edits; the device stays at r1.
    const created = await postMultipart(engineer, `/o/${team.slug}/devices/import`, { ...fields, as: "proposal", title: "Ping deny first", windowStart, windowEnd });
    expect(created.status, visibleText(created.text).slice(0, 300)).toBe(302);
    const proposalId = created.location?.match(new RegExp(`^${team.path}/proposals/(${UUID})$`))?.[1] ?? "";
    const proposal = await ChangeProposal.findByPk(proposalId);
    expect(proposal).toMatchObject({ title: "Ping deny first", state: "draft", baseRevisionNumber: 1, authorUserId: team.members.engineer.userId, reason: "Imported from mole-ping-first.json." });
    expect(proposal?.draftDocument.inboundRules.map((rule) => rule.id)).toEqual(["r3", "r1", "r2", "r4"]);
    // The wall-clock time typed is read in the device's zone (IANA tz database, through luxon).
    expect(proposal?.windowStart.toISOString()).toBe(DateTime.fromISO(windowStart, { zone: TIMEZONE }).toUTC().toISO());
    expect(await revisionCount(team.deviceId)).toBe(1);
    const audit = await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "proposal.created", targetId: proposalId } });
    expect(audit?.changes).toMatchObject({ source: "document", edits: 1 });

    // A new device cannot start as a proposal: there is nothing to propose a change to.
    const site = await Site.findOne({ where: { organisationId: team.organisationId } });
    const newDevice = await postMultipart(engineer, `/o/${team.slug}/devices/import`, { ...fields, target: `site:${site?.id ?? ""}`, as: "proposal", title: "New" });
    expect(newDevice.status).toBe(400);
    expect(visibleText(newDevice.text)).toContain("Only a new revision of an existing device can be imported as a proposal.");
    // A document the device already matches has nothing to propose.
    const same = await postMultipart(engineer, `/o/${team.slug}/devices/import`, { ...fields, documentText: JSON.stringify(MOLE), as: "proposal", title: "Nothing", windowStart, windowEnd });
    expect(same.status).toBe(409);
    expect(visibleText(same.text)).toContain("This document matches revision r1 of mole-edge: there is nothing to propose.");
    // A trainee may not import at all.
    expect((await postMultipart(await team.members.trainee.client(), `/o/${team.slug}/devices/import`, { ...fields, as: "proposal", title: "Trainee's", windowStart, windowEnd })).status).toBe(403);
  });
});

describe("Deleting a device under the change policy", () => {
  test("When changes go through proposals, deleting a device is refused (403 with words) except an admin's break-glass deletion with a written reason, audited", async () => {
    const team = await makeTeam("delete");
    const admin = await team.members.admin.client();
    expect((await admin.post(`/o/${team.slug}/settings/organisation`, { intent: "change-policy", approvalsRequired: "1", changesThroughProposals: "on" })).status).toBe(302);
    const remove = { intent: "delete-device", baseRevision: "1", confirmName: "mole-edge" };

    // An engineer (who could delete it before) is refused with the reason, the device kept.
    const engineer = await team.members.engineer.client();
    const refused = await engineer.post(`${team.path}/model/settings`, remove);
    expect(refused.status).toBe(403);
    expect(visibleText(refused.text)).toContain("Not deleted: in this organisation changes go through proposals, and deleting a device cannot be proposed.");
    // An admin is asked for a written reason first; a short one is refused.
    const noReason = await admin.post(`${team.path}/model/settings`, remove);
    expect(noReason.status).toBe(403);
    expect(fieldError(noReason.text, "Why delete it now, outside a proposal (break-glass)")).toMatch(/^Not deleted: in this organisation changes go through proposals\. As an admin/);
    const short = await admin.post(`${team.path}/model/settings`, { ...remove, breakGlassReason: "old box" });
    expect(short.status).toBe(400);
    expect(plain(short.text)).toContain('>old box</textarea>');
    expect(await Device.count({ where: { id: team.deviceId } })).toBe(1);
    expect(await AuditEvent.count({ where: { organisationId: team.organisationId, action: ["device.deleted", "device.break-glass-deleted"] } })).toBe(0);

    // With a reason: deleted, and the break-glass recorded beside the deletion.
    const reason = "The mole's edge box was replaced overnight after a flood.";
    const deleted = await admin.post(`${team.path}/model/settings`, { ...remove, breakGlassReason: reason });
    expect(deleted.status).toBe(302);
    expect(deleted.location).toBe(`/o/${team.slug}/devices`);
    expect(await Device.count({ where: { id: team.deviceId } })).toBe(0);
    const breakGlass = await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "device.break-glass-deleted", targetId: team.deviceId } });
    expect(breakGlass?.changes).toEqual({ name: "mole-edge", lastRevision: 1, reason });
    expect(breakGlass?.actorEmail).toBe(team.members.admin.email);
    expect(await AuditEvent.count({ where: { organisationId: team.organisationId, action: "device.deleted", targetId: team.deviceId } })).toBe(1);
    // The audit log says it in words.
    const log = visibleText((await admin.get(`/o/${team.slug}/settings/audit`)).text);
    expect(log).toContain(`Deleted device “mole-edge” (last r1) though changes go through proposals (break-glass): “${reason}”`);
  });

  test("Without the policy an engineer deletes a device as before, with no reason asked", async () => {
    const team = await makeTeam("delete-free");
    const deleted = await (await team.members.engineer.client()).post(`${team.path}/model/settings`, { intent: "delete-device", baseRevision: "1", confirmName: "mole-edge" });
    expect(deleted.status).toBe(302);
    expect(await Device.count({ where: { id: team.deviceId } })).toBe(0);
    expect(await AuditEvent.count({ where: { organisationId: team.organisationId, action: "device.break-glass-deleted" } })).toBe(0);
  });
});
