// Change proposals against the real test database and the built app: drafting, review by a
// second person, the lockout guard, the change window (with an injected clock), bringing a
// stale draft up to date, applying once, the change policy for direct saves, and who may do
// what. Each test makes its own organisation. Semantics: docs/decisions/010-change-proposals.md.

import { randomUUID } from "node:crypto";
import ICAL from "ical.js";
import { afterAll, describe, expect, inject, test } from "vitest";
import { AuditEvent, ChangeProposal, DeviceRevision, Organisation, ProposalReview } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { deviceRevisions } from "#server/devices/index";
import { localText } from "#server/proposals/change-window";
import { saveEdit } from "#server/services/devices.server";
import { applyProposal, createProposal, editDraft, proposalView, reviewProposal, submitProposal } from "#server/services/proposals.server";
import { applyElementEdit, EMPTY_LIBRARY, moveRule, validateDocument } from "#server/workspace/index";
import type { FetchResult } from "../support/client";
import { plain, visibleText } from "../support/html";
import { waitForMail } from "../support/outbox";
import { attemptOf, details, EVERYONE, HOUR, mailbox, makeTeam, MOLE, NOTE_R2, openWindow, postJson, ref, revisionCount, submittedProposal, TIMEZONE, type Who } from "../support/proposal-team";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

describe("A change from draft to revision, as the team works it in the browser's forms and JSON", () => {
  test("An engineer drafts a move that locks out the NOC and cannot submit it; fixed, a reviewer is e-mailed, comments on a rule, approves with the window as a calendar event; the author applies it as one revision titled like the proposal", async () => {
    const team = await makeTeam("flow");
    const author = await team.members.author.client();
    const now = new Date();
    const window = openWindow(now);

    // Propose a change: the window is typed in the device's zone (Europe/Oslo).
    const created = await author.post(`${team.path}/proposals/new`, {
      intent: "create",
      title: "Open the partner console on the inside too",
      reason: "The partner's engineers visit on site next week.",
      ticket: "CHG-4711",
      windowStart: localText(window.start, TIMEZONE),
      windowEnd: localText(window.end, TIMEZONE),
      workFrom: "10.20.30.41",
    });
    expect(created.status, plain(created.text).slice(0, 300)).toBe(302);
    const proposalPath = created.location ?? "";
    expect(proposalPath).toMatch(new RegExp(`^${team.path}/proposals/[0-9a-f-]{36}$`));
    const proposalId = proposalPath.split("/").at(-1) ?? "";
    const stored = await ChangeProposal.findByPk(proposalId);
    // The wall-clock minutes typed in Oslo are the instants of the window.
    expect(stored?.windowStart.toISOString()).toBe(new Date(Math.floor(window.start.getTime() / 60_000) * 60_000).toISOString());
    expect(stored?.state).toBe("draft");

    // Draft edit through the editor's own form: the catch-all deny to the top. Only the draft changes.
    const before = await revisionCount(team.deviceId);
    const moved = await author.post(`${proposalPath}/draft/rules`, { intent: "move-rule", ruleId: "r4", to: "1", baseRevision: "1" });
    expect(moved.status).toBe(302);
    expect(await revisionCount(team.deviceId)).toBe(before);
    const page = visibleText((await author.get(proposalPath)).text);
    expect(page).toContain("Operator network “noc-net” would lose every login path");

    // Submitting is refused while the lockout guard blocks: 409 with the reasons.
    const refused = await postJson(author, `${proposalPath}/submit`, {});
    expect(refused.status).toBe(409);
    expect(refused.json.error).toMatch(/^Not submitted: the lockout guard blocks this change/);
    // Both: the operator network, and the address the author said they work from (inside it).
    expect(refused.json.reasons).toEqual([
      expect.objectContaining({ kind: "lockout", details: ["no login any more from 10.20.30.0/24"] }),
      { kind: "work-from", words: "10.20.30.41, where you said you work from, would lose every login it has.", details: ["it logs in today on inside ssh", "it logs in today on inside https"] },
    ]);
    expect((await ChangeProposal.findByPk(proposalId))?.state).toBe("draft");

    // Fixed: the deny goes back last, and the partner may use ssh on the inside instead.
    expect((await author.post(`${proposalPath}/draft/rules`, { intent: "move-rule", ruleId: "r4", to: "4", baseRevision: "2" })).status).toBe(302);
    const widened = await author.post(`${proposalPath}/draft/rules`, {
      intent: "save-rule",
      original: "r2",
      id: "r2",
      interface: "outside",
      sources: "partner-hq",
      destinations: "any",
      services: "https ssh",
      schedule: "all-week",
      action: "allow",
      enabled: "on",
      note: "",
      baseRevision: "3",
    });
    expect(widened.status).toBe(302);
    const submitted = await postJson(author, `${proposalPath}/submit`, {});
    expect(submitted.status, JSON.stringify(submitted.json)).toBe(200);
    expect(submitted.json.state).toBe("in_review");

    // The reviewer finds the e-mail in the outbox.
    const outbox = inject("outboxDir");
    const review = await waitForMail(outbox, team.members.reviewer.email, /^Review requested: Open the partner console/);
    expect(review.text).toContain(proposalPath);
    // …with the effect headline the proposal's page opens with, in words, and the two totals (walk report).
    const proposalPage = await author.get(proposalPath);
    const headline = plain(/data-testid="effect-headline"[^>]*>([\s\S]*?)<\/p>/.exec(proposalPage.text)?.[1] ?? "").trim();
    expect(headline).toMatch(/^\S/);
    const reviewWords = review.text.replace(/\s+/g, " ");
    expect(reviewWords).toContain(`Effect: ${headline}.`);
    // The totals come with a change of outcome only, as on the page.
    if (/^No source's outcome changes/.test(headline)) expect(reviewWords).not.toContain("More exposed:");
    else expect(reviewWords).toMatch(/More exposed: \S+ sources?\. Less exposed: \S+ sources?\./);

    // A comment on one rule, then the approval.
    const reviewer = await team.members.reviewer.client();
    const commented = await postJson(reviewer, `${proposalPath}/comment`, { body: "ssh from the partner: keep the login sources as they are.", ruleId: "r2" });
    expect(commented.status).toBe(200);
    expect(commented.json.comment).toMatchObject({ ruleId: "r2" });
    const approved = await postJson(reviewer, `${proposalPath}/approve`, { reason: "Checked against the partner contract." });
    expect(approved.status).toBe(200);
    expect(approved.json).toMatchObject({ state: "approved", approvals: 1, required: 1 });

    // The approval e-mail carries the window as an iCalendar event (RFC 5545), read with a general-purpose parser.
    const approval = await waitForMail(outbox, team.members.author.email, /^Approved: Open the partner console/);
    const calendar = approval.attachments.find((file) => file.filename.endsWith(".ics"));
    expect(calendar?.contentType).toBe("text/calendar");
    const event = new ICAL.Event(new ICAL.Component(ICAL.parse(calendar?.content ?? "")).getFirstSubcomponent("vevent") ?? undefined);
    // RFC 5545 §3.8.2.4 DTSTART and §3.8.2.2 DTEND: the window's instants.
    expect(event.startDate.toJSDate().toISOString()).toBe(stored?.windowStart.toISOString());
    expect(event.endDate.toJSDate().toISOString()).toBe(stored?.windowEnd.toISOString());
    expect(event.summary).toContain("Open the partner console on the inside too");

    // Applied inside the window: one revision, the proposal's title its message.
    const applied = await postJson(author, `${proposalPath}/apply`, {});
    expect(applied.status, JSON.stringify(applied.json)).toBe(200);
    expect(applied.json).toMatchObject({ revision: 2, alreadyApplied: false });
    const revision = await DeviceRevision.findOne({ where: { deviceId: team.deviceId, number: 2 } });
    expect(revision?.message).toBe("Open the partner console on the inside too");
    expect(revision?.authorEmail).toBe(team.members.author.email);
    const current = await deviceRevisions.find(team.organisationId, team.deviceId);
    expect(current?.document.inboundRules.find((rule) => rule.id === "r2")?.services).toEqual(["https", "ssh"]);
    const final = await ChangeProposal.findByPk(proposalId);
    expect(final).toMatchObject({ state: "applied", appliedRevisionNumber: 2, appliedByEmail: team.members.author.email });

    // Every step is in the audit log, in order.
    const actions = (await AuditEvent.findAll({ where: { organisationId: team.organisationId, targetType: "proposal", targetId: proposalId }, order: [["id", "ASC"]] })).map((event) => event.action);
    expect(actions).toEqual(["proposal.created", "proposal.draft-edited", "proposal.draft-edited", "proposal.draft-edited", "proposal.submitted", "proposal.commented", "proposal.approved", "proposal.applied"]);
    // The applier is told too.
    await waitForMail(outbox, team.members.reviewer.email, /^Applied: Open the partner console/);
  });
});

describe("Who may take which step", () => {
  type Step = "view" | "comment" | "approve" | "request-changes" | "reject" | "submit" | "withdraw" | "bring-up-to-date" | "apply" | "propose";
  // 200/302 allowed; 403 with the reason otherwise. The author is an engineer; "engineer" is another one.
  const EXPECTED: Record<Step, Record<Who, number>> = {
    view: { trainee: 200, reviewer: 200, author: 200, engineer: 200, admin: 200, owner: 200 },
    propose: { trainee: 403, reviewer: 403, author: 200, engineer: 200, admin: 200, owner: 200 },
    comment: { trainee: 403, reviewer: 200, author: 200, engineer: 200, admin: 200, owner: 200 },
    approve: { trainee: 403, reviewer: 200, author: 403, engineer: 200, admin: 200, owner: 200 },
    "request-changes": { trainee: 403, reviewer: 200, author: 403, engineer: 200, admin: 200, owner: 200 },
    reject: { trainee: 403, reviewer: 200, author: 403, engineer: 200, admin: 200, owner: 200 },
    submit: { trainee: 403, reviewer: 403, author: 200, engineer: 403, admin: 403, owner: 403 },
    withdraw: { trainee: 403, reviewer: 403, author: 200, engineer: 403, admin: 200, owner: 200 },
    "bring-up-to-date": { trainee: 403, reviewer: 403, author: 409, engineer: 403, admin: 403, owner: 403 },
    apply: { trainee: 403, reviewer: 403, author: 200, engineer: 200, admin: 200, owner: 200 },
  };

  test("The role matrix of every proposal action, author and others, trainee to owner", async () => {
    const team = await makeTeam("matrix");
    // Five approvals needed, so the approvals of the matrix never complete one.
    await Organisation.update({ approvalsRequired: 5 }, { where: { id: team.organisationId } });
    const inReview = await submittedProposal(team, "Matrix: in review");
    const results: string[] = [];
    for (const who of EVERYONE) {
      const client = await team.members[who].client();
      const check = async (step: Step, response: FetchResult) => {
        results.push(`${step} ${who}: ${response.status}`);
        if (response.status === 403) expect(plain(response.text), `${step} as ${who}`).toMatch(/role or higher|author|someone else reviews|wrote this proposal|Only the author/);
      };
      await check("view", await client.get(`${team.path}/proposals/${inReview}`));
      await check("propose", await client.get(`${team.path}/proposals/new`));
      await check("comment", await postJson(client, `${team.path}/proposals/${inReview}/comment`, { body: `A note from the ${who}.` }));
      await check("approve", await postJson(client, `${team.path}/proposals/${inReview}/approve`, {}));
      // Steps that close or send back a proposal get one of their own per member.
      for (const step of ["request-changes", "reject"] as const) {
        const own = await submittedProposal(team, `Matrix: ${step} by ${who}`);
        await check(step, await postJson(client, `${team.path}/proposals/${own}/${step}`, { reason: "Needs another look." }));
      }
      const draft = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details(`Matrix: submit by ${who}`), { kind: "edit", attempt: attemptOf(NOTE_R2), message: "note" }, team.members.author.actor, mailbox().environment);
      await check("submit", await postJson(client, `${team.path}/proposals/${draft.id}/submit`, {}));
      const withdrawn = await submittedProposal(team, `Matrix: withdraw by ${who}`);
      await check("withdraw", await postJson(client, `${team.path}/proposals/${withdrawn}/withdraw`, {}));
      // Up to date already: the author gets as far as the 409 that says so; everyone else is refused first.
      await check("bring-up-to-date", await postJson(client, `${team.path}/proposals/${inReview}/bring-up-to-date`, { draftVersion: 1 }));
    }
    // Applying: one approved proposal per member who may; the device moves on with each, so each is made on the revision of its turn.
    await Organisation.update({ approvalsRequired: 1 }, { where: { id: team.organisationId } });
    for (const who of EVERYONE) {
      const own = await submittedProposal(team, `Matrix: apply by ${who}`, { ...NOTE_R2, rule: { ...NOTE_R2.rule, note: `applied by ${who}` } });
      await reviewProposal(ref(team, own), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mailbox().environment);
      const response = await postJson(await team.members[who].client(), `${team.path}/proposals/${own}/apply`, {});
      results.push(`apply ${who}: ${response.status}`);
      if (response.status === 200) continue;
      await ChangeProposal.update({ state: "withdrawn" }, { where: { id: own } });
    }
    const expected = EVERYONE.flatMap((who) => (["view", "propose", "comment", "approve", "request-changes", "reject", "submit", "withdraw", "bring-up-to-date"] as const).map((step) => `${step} ${who}: ${EXPECTED[step][who]}`));
    expect(results.filter((line) => !line.startsWith("apply"))).toEqual(expected);
    expect(results.filter((line) => line.startsWith("apply"))).toEqual(EVERYONE.map((who) => `apply ${who}: ${EXPECTED.apply[who]}`));
  });

  test("Approving your own proposal is refused with the reason (403), even as the owner", async () => {
    const team = await makeTeam("own");
    const { environment } = mailbox();
    const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details("Owner's own change"), { kind: "edit", attempt: attemptOf(NOTE_R2), message: "note" }, team.members.owner.actor, environment);
    await submitProposal(ref(team, proposal.id), {}, team.members.owner.actor, environment);
    const response = await postJson(await team.members.owner.client(), `${team.path}/proposals/${proposal.id}/approve`, {});
    expect(response.status).toBe(403);
    expect(response.json.error).toBe("You wrote this proposal, so someone else reviews it: every change is seen by a second person before it lands.");
  });
});

describe("Approvals the organisation needs", () => {
  test("With two approvals needed the second reviewer's approval approves it; when the organisation needs fewer, approving again completes one", async () => {
    const team = await makeTeam("two");
    await Organisation.update({ approvalsRequired: 2 }, { where: { id: team.organisationId } });
    const first = await submittedProposal(team, "Two approvals");
    const mail = mailbox();
    expect(await reviewProposal(ref(team, first), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment)).toEqual({ state: "in_review", approvals: 1, required: 2 });
    expect(mail.sent.map((message) => message.subject)).toEqual(["Approval 1 of 2: Two approvals"]);
    // The same reviewer again: still one.
    expect(await reviewProposal(ref(team, first), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment)).toEqual({ state: "in_review", approvals: 1, required: 2 });
    expect(await reviewProposal(ref(team, first), { verdict: "approved", reason: "" }, team.members.engineer.actor, mail.environment)).toEqual({ state: "approved", approvals: 2, required: 2 });
    // Both approvers and the author get the window.
    const approved = mail.sent.filter((message) => message.subject.startsWith("Approved: Two approvals"));
    expect(approved.map((message) => message.to).sort()).toEqual([team.members.author.email, team.members.engineer.email, team.members.reviewer.email].sort());
    expect(approved.every((message) => message.attachments?.[0]?.contentType.startsWith("text/calendar"))).toBe(true);

    const second = await submittedProposal(team, "Fewer needed later");
    await reviewProposal(ref(team, second), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment);
    await Organisation.update({ approvalsRequired: 1 }, { where: { id: team.organisationId } });
    expect(await reviewProposal(ref(team, second), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment)).toEqual({ state: "approved", approvals: 1, required: 1 });
  });
});

describe("Applying happens once, in the window, on an up-to-date draft, or not at all", () => {
  test("Two applies at once make one revision; approving twice counts once", async () => {
    const team = await makeTeam("twice");
    const proposalId = await submittedProposal(team);
    const reviewer = await team.members.reviewer.client();
    const [first, second] = await Promise.all([postJson(reviewer, `${team.path}/proposals/${proposalId}/approve`, {}), postJson(reviewer, `${team.path}/proposals/${proposalId}/approve`, {})]);
    expect([first.status, second.status]).toEqual([200, 200]);
    expect(await ProposalReview.count({ where: { proposalId, verdict: "approved" } })).toBe(1);
    const before = await revisionCount(team.deviceId);
    const author = await team.members.author.client();
    const applies = await Promise.all([postJson(author, `${team.path}/proposals/${proposalId}/apply`, {}), postJson(author, `${team.path}/proposals/${proposalId}/apply`, {}), postJson(author, `${team.path}/proposals/${proposalId}/apply`, {})]);
    expect(applies.map((response) => response.status)).toEqual([200, 200, 200]);
    expect(new Set(applies.map((response) => response.json.revision))).toEqual(new Set([before + 1]));
    expect(applies.filter((response) => response.json.alreadyApplied === false)).toHaveLength(1);
    expect(await revisionCount(team.deviceId)).toBe(before + 1);
    expect(await AuditEvent.count({ where: { organisationId: team.organisationId, action: "proposal.applied" } })).toBe(1);
  });

  test("The change window is enforced with an injected clock: before it 409 naming the window, an admin may apply outside it with a written reason, inside it anyone who may apply", async () => {
    const team = await makeTeam("window");
    const monday = new Date("2026-12-07T12:00:00Z");
    // Tuesday 22:00–23:30 in Oslo (UTC+1 in December, from memory: CET) — 21:00–22:30 UTC.
    const window = { start: new Date("2026-12-08T21:00:00Z"), end: new Date("2026-12-08T22:30:00Z") };
    const make = async (title: string) => {
      const mail = mailbox(monday);
      const proposal = await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details(title, window), { kind: "edit", attempt: attemptOf({ ...NOTE_R2, rule: { ...NOTE_R2.rule, note: title } }), message: "note" }, team.members.author.actor, mail.environment);
      await submitProposal(ref(team, proposal.id), {}, team.members.author.actor, mail.environment);
      await reviewProposal(ref(team, proposal.id), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment);
      return proposal.id;
    };
    const early = await make("Window: early");
    const before = await revisionCount(team.deviceId);
    await expect(applyProposal(ref(team, early), {}, team.members.author.actor, mailbox(monday).environment)).rejects.toMatchObject({
      status: 409,
      message: "Not applied: it is Mon 7 Dec 2026, 13:00 Europe/Oslo (12:00 UTC), outside the change window (Tue 8 Dec 2026, 22:00 Europe/Oslo (21:00 UTC) to Tue 8 Dec 2026, 23:30 Europe/Oslo (22:30 UTC)). Apply it inside the window, or ask an admin or owner to apply it now with a written reason.",
    });
    // One minute after the end, still outside (the end is exclusive).
    await expect(applyProposal(ref(team, early), {}, team.members.author.actor, mailbox(window.end).environment)).rejects.toMatchObject({ status: 409 });
    // An admin without a reason is told they may give one; with a short one, told how long.
    await expect(applyProposal(ref(team, early), {}, team.members.admin.actor, mailbox(monday).environment)).rejects.toMatchObject({ status: 409, field: "outsideWindowReason" });
    await expect(applyProposal(ref(team, early), { outsideWindowReason: "urgent" }, team.members.admin.actor, mailbox(monday).environment)).rejects.toMatchObject({ status: 400, field: "outsideWindowReason" });
    expect(await revisionCount(team.deviceId)).toBe(before);
    const outside = await applyProposal(ref(team, early), { outsideWindowReason: "The partner visit moved to Monday afternoon." }, team.members.admin.actor, mailbox(monday).environment);
    expect(outside.revision).toBe(before + 1);
    expect((await ChangeProposal.findByPk(early))?.outsideWindowReason).toBe("The partner visit moved to Monday afternoon.");

    // Inside the window (its first minute): the author applies.
    const onTime = await make("Window: on time");
    const applied = await applyProposal(ref(team, onTime), {}, team.members.author.actor, mailbox(window.start).environment);
    expect(applied).toEqual({ revision: before + 2, alreadyApplied: false });
  });

  test("A draft edit after approval resets the approvals: applying is refused until it is approved again", async () => {
    const team = await makeTeam("reset");
    const proposalId = await submittedProposal(team);
    const mail = mailbox();
    await reviewProposal(ref(team, proposalId), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment);
    expect((await ChangeProposal.findByPk(proposalId))?.state).toBe("approved");
    await editDraft(ref(team, proposalId), 1, attemptOf({ kind: "rule.enable", ruleId: "r3", enabled: false }), "Disabled inbound rule r3", team.members.author.actor, mail.environment);
    const view = await proposalView(ref(team, proposalId), { userId: team.members.author.userId, role: "engineer" });
    expect(view.proposal.state).toBe("in_review");
    expect(view.approvals).toBe(0);
    expect(view.reviews[0]).toMatchObject({ verdict: "approved", counts: false });
    // The approver is told their approval no longer counts.
    expect(mail.sent.some((message) => message.to === team.members.reviewer.email && message.subject.startsWith("Changed after your approval"))).toBe(true);
    const response = await postJson(await team.members.author.client(), `${team.path}/proposals/${proposalId}/apply`, {});
    expect(response.status).toBe(409);
    expect(response.json.error).toBe("Not applied: this proposal needs 1 approval of its current draft and has 0.");
    // Approved again, it applies.
    await reviewProposal(ref(team, proposalId), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mail.environment);
    expect((await postJson(await team.members.author.client(), `${team.path}/proposals/${proposalId}/apply`, {})).status).toBe(200);
  });

  test("A stale proposal is refused (409) listing what changed on the device; brought up to date, it is reviewed and applied", async () => {
    const team = await makeTeam("stale");
    const proposalId = await submittedProposal(team);
    await reviewProposal(ref(team, proposalId), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mailbox().environment);
    // Meanwhile someone saves a direct change to another rule.
    await saveEdit(team.organisationId, team.deviceId, 1, (document) => applyElementEdit(document, { kind: "rule.enable", ruleId: "r3", enabled: false }), team.members.admin.actor, "Disabled inbound rule r3");
    const author = await team.members.author.client();
    const refused = await postJson(author, `${team.path}/proposals/${proposalId}/apply`, {});
    expect(refused.status).toBe(409);
    expect(refused.json.error).toBe("Not applied: the device moved on since this proposal was made (r1 → r2: Inbound rules: changed r3). Bring the draft up to date, have it approved again, then apply it.");
    expect(refused.json.conflict).toMatchObject({ currentNumber: 2, changes: [{ section: "Inbound rules", change: "changed", element: "r3", details: ["enabled: true → false"] }] });
    const page = visibleText((await author.get(`${team.path}/proposals/${proposalId}`)).text);
    expect(page).toContain("The device moved on: r1 → r2");
    // No conflict: the draft's edit lands on r2, the approvals start again.
    const updated = await postJson(author, `${team.path}/proposals/${proposalId}/bring-up-to-date`, { draftVersion: 1 });
    expect(updated.status, JSON.stringify(updated.json)).toBe(200);
    expect(updated.json).toMatchObject({ ok: true, baseRevision: 2 });
    const stored = await ChangeProposal.findByPk(proposalId);
    expect(stored).toMatchObject({ baseRevisionNumber: 2, state: "in_review", draftVersion: 2 });
    expect(stored?.draftDocument.inboundRules.map((rule) => [rule.id, rule.enabled, rule.note])).toEqual([
      ["r1", true, ""],
      ["r2", true, "partner console"],
      ["r3", false, ""],
      ["r4", true, "final drop"],
    ]);
    await reviewProposal(ref(team, proposalId), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mailbox().environment);
    const applied = await postJson(author, `${team.path}/proposals/${proposalId}/apply`, {});
    expect(applied.json).toMatchObject({ revision: 3 });
  });

  test("Bringing a draft up to date lists the rule both sides changed; the author keeps the draft's change, and the live revision's other changes stay", async () => {
    const team = await makeTeam("conflict");
    const proposalId = await submittedProposal(team);
    // Live: r2 changed too (another note), and r1 narrowed to https.
    await saveEdit(team.organisationId, team.deviceId, 1, (document) => applyElementEdit(document, { ...NOTE_R2, rule: { ...NOTE_R2.rule, note: "changed live" } }), team.members.admin.actor, "Changed inbound rule r2");
    await saveEdit(team.organisationId, team.deviceId, 2, (document) => applyElementEdit(document, { kind: "rule.update", ruleId: "r1", rule: { ...(document.inboundRules[0]), services: ["https"] } }), team.members.admin.actor, "Changed inbound rule r1");
    const author = await team.members.author.client();
    const listed = await postJson(author, `${team.path}/proposals/${proposalId}/bring-up-to-date`, { draftVersion: 1 });
    expect(listed.status).toBe(409);
    expect(listed.json).toMatchObject({ ok: false, liveRevision: 3 });
    expect(listed.json.conflicts).toEqual([{ key: "inboundRules:r2", words: "inbound rule r2", live: ["changed: note: \"\" → changed live"], draft: ["Changed inbound rule r2"], problem: null }]);
    // Nothing changed yet.
    expect((await ChangeProposal.findByPk(proposalId))?.baseRevisionNumber).toBe(1);
    // A choice that is neither is malformed: 400 with the path.
    const malformed = await postJson(author, `${team.path}/proposals/${proposalId}/bring-up-to-date`, { draftVersion: 1, choices: { "inboundRules:r2": "mine" } });
    expect(malformed.status).toBe(400);
    expect(malformed.json.issues).toEqual([{ path: "choices.inboundRules:r2", message: "Choose the draft's change or the live one." }]);
    // Settled through the page's form: keep the draft's.
    const settled = await author.post(`${team.path}/proposals/${proposalId}`, { intent: "bring-up-to-date", draftVersion: "1", "choice:inboundRules:r2": "draft" });
    expect(settled.status, plain(settled.text).slice(0, 400)).toBe(302);
    const stored = await ChangeProposal.findByPk(proposalId);
    expect(stored?.baseRevisionNumber).toBe(3);
    expect(stored?.draftDocument.inboundRules.find((rule) => rule.id === "r2")?.note).toBe("partner console");
    expect(stored?.draftDocument.inboundRules.find((rule) => rule.id === "r1")?.services).toEqual(["https"]);
    const audit = await AuditEvent.findOne({ where: { targetId: proposalId, action: "proposal.brought-up-to-date" } });
    expect(audit?.changes).toMatchObject({ baseRevision: { from: 1, to: 3 }, settled: ["inboundRules:r2: draft"] });
  });

  test("Nothing is half-applied after an error: a failure after the revision was written rolls the revision, the state and the audit back", async () => {
    const team = await makeTeam("rollback");
    const proposalId = await submittedProposal(team);
    await reviewProposal(ref(team, proposalId), { verdict: "approved", reason: "" }, team.members.reviewer.actor, mailbox().environment);
    // Another (invented) record already claims revision 2 as its applied revision: the proposal's update fails after the revision insert.
    const squatter = await ChangeProposal.create({
      organisationId: team.organisationId,
      deviceId: team.deviceId,
      baseRevisionNumber: 1,
      draftDocument: (await deviceRevisions.find(team.organisationId, team.deviceId))!.document,
      title: "A record in the way",
      reason: "",
      ticket: "",
      windowStart: new Date(Date.now() - HOUR),
      windowEnd: new Date(Date.now() + HOUR),
      workFrom: "",
      authorUserId: team.members.admin.userId,
      authorEmail: team.members.admin.email,
      state: "applied",
      submittedAt: null,
      appliedRevisionNumber: 2,
      appliedByUserId: team.members.admin.userId,
      appliedByEmail: team.members.admin.email,
      appliedAt: new Date(),
    });
    const auditBefore = await AuditEvent.count({ where: { organisationId: team.organisationId } });
    await expect(applyProposal(ref(team, proposalId), {}, team.members.author.actor, mailbox().environment)).rejects.toThrow();
    expect(await revisionCount(team.deviceId)).toBe(1);
    expect((await ChangeProposal.findByPk(proposalId))?.state).toBe("approved");
    expect(await AuditEvent.count({ where: { organisationId: team.organisationId } })).toBe(auditBefore);
    expect((await deviceRevisions.find(team.organisationId, team.deviceId))?.revision.number).toBe(1);
    await squatter.destroy();
    expect((await applyProposal(ref(team, proposalId), {}, team.members.author.actor, mailbox().environment)).revision).toBe(2);
  });
});

describe("Bad input is a clear 4xx", () => {
  test("Another organisation's proposal is 404, exactly like a missing one; a malformed id is 400; malformed input is 400 with paths", async () => {
    const team = await makeTeam("bad");
    const other = await makeTeam("other");
    const theirs = await submittedProposal(other);
    const admin = await team.members.admin.client();
    // Their proposal under our device, and under theirs (which is not ours).
    expect((await admin.get(`${team.path}/proposals/${theirs}`)).status).toBe(404);
    expect((await postJson(admin, `${team.path}/proposals/${theirs}/comment`, { body: "hello" })).status).toBe(404);
    expect((await admin.get(`/o/${team.slug}/devices/${other.deviceId}/proposals/${theirs}`)).status).toBe(404);
    expect((await admin.get(`${team.path}/proposals/${randomUUID()}`)).status).toBe(404);
    // Not a UUID.
    const notAnId = await postJson(admin, `${team.path}/proposals/not-a-proposal/comment`, { body: "hello" });
    expect(notAnId.status).toBe(400);
    expect(notAnId.json.issues).toEqual([{ path: "proposal", message: "must be a UUID" }]);
    expect((await admin.get(`${team.path}/proposals/not-a-proposal`)).status).toBe(400);
    const ours = await submittedProposal(team);
    // Not JSON; a field missing; an unknown step.
    expect((await postJson(admin, `${team.path}/proposals/${ours}/comment`, "{not json")).status).toBe(400);
    const empty = await postJson(admin, `${team.path}/proposals/${ours}/comment`, { body: "" });
    expect(empty.status).toBe(400);
    expect(empty.json.issues).toEqual([{ path: "body", message: "Write the comment." }]);
    const noReason = await postJson(admin, `${team.path}/proposals/${ours}/reject`, {});
    expect(noReason.status).toBe(400);
    expect(noReason.json.issues).toEqual([{ path: "reason", message: "Invalid input: expected string, received undefined" }]);
    expect((await postJson(admin, `${team.path}/proposals/${ours}/merge`, {})).status).toBe(404);
    // A comment on a rule neither the draft nor its base has.
    const noRule = await postJson(admin, `${team.path}/proposals/${ours}/comment`, { body: "this one", ruleId: "r99" });
    expect(noRule.status).toBe(400);
    expect(noRule.json.error).toBe("Neither the draft nor its base has an inbound rule “r99”.");
    // GET on a step is not a step.
    expect((await admin.get(`${team.path}/proposals/${ours}/approve`)).status).toBe(405);
  });

  test("A proposal from a whole document over the API: 201 with its element edits; a malformed document is 400 with the engine's paths", async () => {
    const team = await makeTeam("api");
    const engineer = await team.members.engineer.client();
    const window = openWindow();
    const validated = validateDocument(MOLE, EMPTY_LIBRARY);
    if (!validated.ok) throw new Error("the fixture is valid");
    const changed = moveRule(validated.document, "r3", 1);
    const created = await postJson(engineer, `${team.path}/api/proposals`, { title: "Ping deny first", windowStart: window.start.toISOString(), windowEnd: window.end.toISOString(), document: changed });
    expect(created.status, JSON.stringify(created.json)).toBe(201);
    expect(created.headers.get("location")).toBe(created.json.url);
    const view = await proposalView(ref(team, String(created.json.id)), { userId: team.members.engineer.userId, role: "engineer" });
    expect(view.edits.map((edit) => edit.message)).toEqual(["Moved inbound rule r3 to position 1"]);
    expect(view.draftChanges).toEqual([{ section: "Inbound rules", change: "moved", element: "r3", details: ["position 3 → 1"] }]);
    const broken = await postJson(engineer, `${team.path}/api/proposals`, { title: "Broken", windowStart: window.start.toISOString(), windowEnd: window.end.toISOString(), document: { ...MOLE, inboundRules: [{ ...MOLE.inboundRules[0], sources: ["no-such-net"] }] } });
    expect(broken.status).toBe(400);
    expect(broken.json.issues).toEqual([expect.objectContaining({ path: "inboundRules[0].sources[0]" })]);
    const badWindow = await postJson(engineer, `${team.path}/api/proposals`, { title: "Bad window", windowStart: "tomorrow", windowEnd: window.end.toISOString(), document: changed });
    expect(badWindow.status).toBe(400);
    expect(badWindow.json.issues).toEqual([{ path: "windowStart", message: "Give the window's start as an ISO 8601 instant with an offset, like 2026-12-08T21:00:00Z." }]);
    const trainee = await postJson(await team.members.trainee.client(), `${team.path}/api/proposals`, { title: "Trainee", windowStart: window.start.toISOString(), windowEnd: window.end.toISOString(), document: changed });
    expect(trainee.status).toBe(403);
  });
});

describe("Direct saves under the organisation's change policy", () => {
  const moveDenyFirst = { intent: "move-rule", ruleId: "r4", to: "1" };
  const noteR2 = { intent: "save-rule", original: "r2", id: "r2", interface: "outside", sources: "partner-hq", destinations: "any", services: "https", schedule: "all-week", action: "allow", enabled: "on", note: "direct" };

  test("A direct save that locks out the NOC is refused (409) with the reasons; an admin saves it anyway with a written reason, audited", async () => {
    const team = await makeTeam("guard");
    const engineer = await team.members.engineer.client();
    const refused = await engineer.post(`${team.path}/model/rules`, { ...moveDenyFirst, baseRevision: "1" });
    expect(refused.status).toBe(409);
    expect(visibleText(refused.text)).toContain("Not saved: the lockout guard blocks this change.");
    expect(visibleText(refused.text)).toContain("Operator network “noc-net” would lose every login path");
    expect(await revisionCount(team.deviceId)).toBe(1);
    // A harmless change still saves directly.
    expect((await engineer.post(`${team.path}/model/rules`, { ...noteR2, baseRevision: "1" })).status).toBe(302);
    const admin = await team.members.admin.client();
    expect((await admin.post(`${team.path}/model/rules`, { ...moveDenyFirst, baseRevision: "2" })).status).toBe(409);
    expect((await admin.post(`${team.path}/model/rules`, { ...moveDenyFirst, baseRevision: "2", overrideReason: "short" })).status).toBe(400);
    const saved = await admin.post(`${team.path}/model/rules`, { ...moveDenyFirst, baseRevision: "2", overrideReason: "The NOC moves to the new jump host tonight." });
    expect(saved.status).toBe(302);
    const event = await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "device.saved-past-guard" } });
    expect(event?.changes).toMatchObject({ revision: 3, reason: "The NOC moves to the new jump host tonight." });
  });

  test("When changes go through proposals the live editor refuses direct saves (403) except an admin's break-glass save with a reason, which e-mails the reviewers", async () => {
    const team = await makeTeam("policy");
    const admin = await team.members.admin.client();
    // The policy is the admins' to set; a reviewer cannot.
    expect((await (await team.members.reviewer.client()).post(`/o/${team.slug}/settings/organisation`, { intent: "change-policy", approvalsRequired: "2", changesThroughProposals: "on" })).status).toBe(403);
    expect((await admin.post(`/o/${team.slug}/settings/organisation`, { intent: "change-policy", approvalsRequired: "2", changesThroughProposals: "on" })).status).toBe(302);
    expect(await Organisation.findByPk(team.organisationId)).toMatchObject({ approvalsRequired: 2, changesThroughProposals: true });
    expect((await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "organisation.change-policy-changed" } }))?.changes).toEqual({ approvalsRequired: { from: 1, to: 2 }, changesThroughProposals: { from: false, to: true } });

    const engineer = await team.members.engineer.client();
    const editor = await engineer.get(`${team.path}/model/rules`);
    expect(visibleText(editor.text)).toContain("In this organisation changes go through proposals");
    const refused = await engineer.post(`${team.path}/model/rules`, { ...noteR2, baseRevision: "1" });
    expect(refused.status).toBe(403);
    expect(visibleText(refused.text)).toContain("Not saved: in this organisation changes go through proposals.");
    expect((await admin.post(`${team.path}/model/rules`, { ...noteR2, baseRevision: "1" })).status).toBe(403);
    expect(await revisionCount(team.deviceId)).toBe(1);
    const broke = await admin.post(`${team.path}/model/rules`, { ...noteR2, baseRevision: "1", overrideReason: "The partner's console is down during an incident." });
    expect(broke.status).toBe(302);
    expect(await revisionCount(team.deviceId)).toBe(2);
    expect((await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "device.break-glass-saved" } }))?.changes).toMatchObject({ revision: 2, reason: "The partner's console is down during an incident." });
    await waitForMail(inject("outboxDir"), team.members.reviewer.email, /^Break-glass change: mole-edge r2/);
  });

  test("Make it a proposal: a refused direct save carries its change into a new proposal's first draft edit", async () => {
    const team = await makeTeam("carry");
    const engineer = await team.members.engineer.client();
    const carried = await engineer.post(`${team.path}/proposals/new`, { intent: "carry-edit", "edit.intent": "move-rule", "edit.ruleId": "r4", "edit.to": "1" });
    expect(carried.status).toBe(200);
    expect(visibleText(carried.text)).toContain("The draft starts with your change from the editor: Moved inbound rule r4 to position 1.");
    const window = openWindow();
    const created = await engineer.post(`${team.path}/proposals/new`, {
      intent: "create",
      "edit.intent": "move-rule",
      "edit.ruleId": "r4",
      "edit.to": "1",
      title: "Deny first (to be discussed)",
      windowStart: localText(window.start, TIMEZONE),
      windowEnd: localText(window.end, TIMEZONE),
    });
    expect(created.status).toBe(302);
    const proposal = await ChangeProposal.findByPk(created.location?.split("/").at(-1) ?? "");
    expect(proposal?.draftDocument.inboundRules[0].id).toBe("r4");
    expect(await revisionCount(team.deviceId)).toBe(1);
  });
});

describe("Lists", () => {
  test("The fleet table counts open proposals per device; the changes page filters by state and shows what waits for my review", async () => {
    const team = await makeTeam("lists");
    const waiting = await submittedProposal(team, "Waiting for review");
    const { environment } = mailbox();
    await createProposal({ organisationId: team.organisationId, deviceId: team.deviceId }, details("Still a draft"), { kind: "revision" }, team.members.engineer.actor, environment);
    const reviewer = await team.members.reviewer.client();
    const fleet = await reviewer.get(`/o/${team.slug}/devices`);
    expect(fleet.text).toContain(`aria-label="2 open proposals for mole-edge"`);
    const mine = visibleText((await reviewer.get(`/o/${team.slug}/changes?review=mine`)).text);
    expect(mine).toContain("Waiting for review");
    expect(mine).not.toContain("Still a draft");
    const drafts = visibleText((await reviewer.get(`/o/${team.slug}/changes?state=draft`)).text);
    expect(drafts).toContain("Still a draft");
    expect(drafts).not.toContain("Waiting for review");
    // Approved by me: no longer waiting for my review.
    await reviewProposal(ref(team, waiting), { verdict: "approved", reason: "" }, team.members.reviewer.actor, environment);
    expect(visibleText((await reviewer.get(`/o/${team.slug}/changes?review=mine`)).text)).not.toContain("Waiting for review");
    const tab = visibleText((await reviewer.get(`${team.path}/proposals`)).text);
    expect(tab).toContain("Still a draft");
    expect(tab).toContain("Approved");
  });
});
