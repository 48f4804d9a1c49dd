import { afterAll, describe, expect, test } from "vitest";
import { inject } from "vitest";
import { Op } from "sequelize";
import { AuditEvent, Membership, Organisation, RecoveryCode, Session, SignInAttempt, User } from "#models/index";
import { totpCode } from "#server/auth/totp";
import { getDatabase } from "#server/db/database.server";
import { Refusal } from "#server/errors";
import { LOCKOUT_FAILURES, LOCKOUT_MINUTES, LOCKOUT_WINDOW_MINUTES, verifySecondFactor } from "#server/services/second-factor.server";
import { nextClientAddress, TestClient } from "../support/client";
import { fieldError, formAlert, wordsOf } from "../support/html";
import { waitForMail } from "../support/outbox";
import { EVERYONE, makeTeam, PASSWORD, type Team, type Who } from "../support/proposal-team";
import { enrol, giveSecondFactor, passwordStep, SECOND_FACTOR_PAGE, userOf, wrongCode } from "../support/second-factor";

const sequelize = getDatabase();
afterAll(() => sequelize.close());
const outboxDir = inject("outboxDir");
const baseUrl = inject("baseUrl");

const membersPage = (team: Team) => `/o/${team.slug}/settings/members`;
const membershipOf = async (team: Team, who: Who) => (await Membership.findOne({ where: { organisationId: team.organisationId, userId: team.members[who].userId } }))!.id;
const hasFactor = async (userId: string) => (await User.findByPk(userId))!.secondFactorEnabledAt !== null;

describe("An admin or owner resets a member's second factor (docs/decisions/019)", () => {
  test("Who may reset whose: admins and owners only, an owner's only by an owner, never one's own, never across organisations, and only once confirmed", async () => {
    const team = await makeTeam("reset-roles");
    // Everyone signs in first (with the password alone), then everyone gets a second factor.
    for (const who of EVERYONE) await team.members[who].client();
    for (const who of EVERYONE) await giveSecondFactor(team.members[who].userId);
    const engineer = await membershipOf(team, "engineer");
    // Members below admin are refused, and the engineer keeps the second factor.
    for (const who of ["trainee", "reviewer", "author"] as const) {
      const client = await team.members[who].client();
      const refused = await client.post(membersPage(team), { intent: "reset-second-factor", membershipId: engineer, confirmed: "on" });
      expect(refused.status, who).toBe(403);
    }
    expect(await hasFactor(team.members.engineer.userId)).toBe(true);

    const admin = await team.members.admin.client();
    // The confirmation step: without the box ticked nothing happens.
    const unconfirmed = await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: engineer });
    expect(unconfirmed.status).toBe(400);
    expect(wordsOf(unconfirmed.text)).toContain("Tick the box once you have made sure");
    expect(await hasFactor(team.members.engineer.userId)).toBe(true);
    // Bad ids are a clear 400, not a 500.
    expect((await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: "not-a-uuid", confirmed: "on" })).status).toBe(400);
    // One's own, through this path: refused (the account page is the way).
    const own = await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: await membershipOf(team, "admin"), confirmed: "on" });
    expect(own.status).toBe(409);
    expect(formAlert(own.text)).toContain("This is your own account");
    expect(await hasFactor(team.members.admin.userId)).toBe(true);
    // An owner's, by an admin: refused.
    expect((await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: await membershipOf(team, "owner"), confirmed: "on" })).status).toBe(403);
    expect(await hasFactor(team.members.owner.userId)).toBe(true);
    // Another organisation's member: as if there were none.
    const other = await makeTeam("reset-other");
    const otherAdmin = await other.members.admin.client();
    await giveSecondFactor(other.members.engineer.userId);
    const across = await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: await membershipOf(other, "engineer"), confirmed: "on" });
    expect(across.status).toBe(404);
    expect(await hasFactor(other.members.engineer.userId)).toBe(true);
    // …nor may the other organisation's admin reach into this one.
    expect((await otherAdmin.post(membersPage(other), { intent: "reset-second-factor", membershipId: engineer, confirmed: "on" })).status).toBe(404);
    expect(await hasFactor(team.members.engineer.userId)).toBe(true);

    // The admin resets the engineer's; the owner resets the admin's.
    expect((await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: engineer, confirmed: "on" })).status).toBe(302);
    expect(await hasFactor(team.members.engineer.userId)).toBe(false);
    // A second reset finds nothing to reset.
    const again = await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: engineer, confirmed: "on" });
    expect(again.status).toBe(409);
    expect(formAlert(again.text)).toContain("has no second factor to reset");
    const owner = await team.members.owner.client();
    expect((await owner.post(membersPage(team), { intent: "reset-second-factor", membershipId: await membershipOf(team, "admin"), confirmed: "on" })).status).toBe(302);
    expect(await hasFactor(team.members.admin.userId)).toBe(false);
    // Only the two resets were written, by whom they were made.
    const entries = await AuditEvent.findAll({ where: { organisationId: { [Op.in]: [team.organisationId, other.organisationId] }, action: "member.second-factor-reset" }, order: [["id", "ASC"]] });
    expect(entries.map((entry) => [entry.actorUserId, entry.changes.email])).toEqual([
      [team.members.admin.userId, team.members.engineer.email],
      [team.members.owner.userId, team.members.admin.email],
    ]);
  });

  test("A reset removes the authenticator and the recovery codes, ends every session, is audited and e-mailed; where a second factor is required the member enrols again at the next sign-in", async () => {
    const team = await makeTeam("reset-flow");
    await Organisation.update({ requireSecondFactor: true }, { where: { id: team.organisationId } });
    const admin = await team.members.admin.client();
    const owner = await team.members.owner.client();
    await giveSecondFactor(team.members.admin.userId);
    await giveSecondFactor(team.members.owner.userId);
    const member = team.members.engineer;
    // The member enrols through the page, as a person would, and signs in on a second browser too.
    const first = new TestClient();
    const signedIn = await first.signIn(member.email, PASSWORD);
    expect(signedIn.status).toBe(302);
    const { next } = await enrol(first);
    const second = await passwordStep(member.email, PASSWORD);
    expect((await second.post("/login/code", { code: next() })).status).toBe(302);
    expect((await second.get(`/o/${team.slug}/devices`)).status).toBe(200);
    expect(await Session.count({ where: { userId: member.userId } })).toBe(2);
    expect(await RecoveryCode.count({ where: { userId: member.userId } })).toBe(10);

    const page = await admin.get(membersPage(team));
    expect(page.text).toContain(`aria-label="Reset the second factor of ${member.name}"`);
    const reset = await admin.post(membersPage(team), { intent: "reset-second-factor", membershipId: await membershipOf(team, "engineer"), confirmed: "on" });
    expect(reset.status).toBe(302);
    const flash = await admin.get(membersPage(team));
    expect(wordsOf(flash.text)).toContain(`Second factor of ${member.name} reset: signed out everywhere and told by e-mail. They set up a new one at their next sign-in.`);

    const user = await userOf(member.email);
    expect(user.secondFactorSecret).toBeNull();
    expect(user.secondFactorEnabledAt).toBeNull();
    expect(await RecoveryCode.count({ where: { userId: member.userId } })).toBe(0);
    expect(await Session.count({ where: { userId: member.userId } })).toBe(0);
    // Both browsers are signed out.
    for (const browser of [first, second]) expect((await browser.get(`/o/${team.slug}/devices`)).location).toContain("/login?redirectTo=");

    const [entry] = await AuditEvent.findAll({ where: { organisationId: team.organisationId, action: "member.second-factor-reset" } });
    expect(entry.actorUserId).toBe(team.members.admin.userId);
    expect(entry.targetType).toBe("membership");
    expect(entry.changes).toEqual({ email: member.email, recoveryCodesRemoved: 10, sessionsEnded: 2 });
    const audit = await owner.get(`/o/${team.slug}/settings/audit`);
    expect(wordsOf(audit.text)).toContain(`Reset the second factor of ${member.name}: the authenticator and 10 recovery codes removed, 2 sessions ended`);

    const mail = await waitForMail(outboxDir, member.email, /second factor was reset/);
    expect(mail.text).toContain(`${team.members.admin.name}, an administrator of ${"Proposals reset-flow"}`);
    expect(mail.text).toContain("requires a second factor");
    // The link is built from APP_ORIGIN, never from the request.
    expect(mail.text).toContain(`${baseUrl}${SECOND_FACTOR_PAGE}`);

    // The password alone now signs in, straight to enrolment, which the organisation requires.
    const again = new TestClient();
    const signIn = await again.signIn(member.email, PASSWORD);
    expect(signIn.status).toBe(302);
    expect(signIn.location).not.toBe("/login/code");
    const held = await again.get(`/o/${team.slug}/devices`);
    expect(held.status).toBe(302);
    expect(held.location).toBe(SECOND_FACTOR_PAGE);
    await enrol(again);
    expect((await again.get(`/o/${team.slug}/devices`)).status).toBe(200);
  });
});

describe("The second step locks after repeated wrong codes (docs/decisions/019)", () => {
  test("Wrong codes are counted per account across requests and browsers; a right code starts the count over; the tenth in a row locks the step, says until when, and is audited", async () => {
    const team = await makeTeam("lockout");
    const member = team.members.engineer;
    const secret = await giveSecondFactor(member.userId);
    const wrong = wrongCode(secret);
    // Nine wrong codes from two browsers at two addresses: counted together, not locked.
    const browsers = [await passwordStep(member.email, PASSWORD, nextClientAddress()), await passwordStep(member.email, PASSWORD, nextClientAddress())];
    for (let guess = 0; guess < LOCKOUT_FAILURES - 1; guess += 1) {
      const answer = await browsers[guess % 2].post("/login/code", { code: wrong });
      expect(answer.status, `guess ${guess + 1}`).toBe(400);
      expect(fieldError(answer.text, "Code")).toContain("That code is not right");
    }
    expect((await User.findByPk(member.userId))!.secondFactorFailures).toBe(LOCKOUT_FAILURES - 1);
    // A right code signs in and clears the count.
    expect((await browsers[0].post("/login/code", { code: totpCode(secret, Date.now()) })).status).toBe(302);
    expect((await User.findByPk(member.userId))!.secondFactorFailures).toBe(0);

    const browser = await passwordStep(member.email, PASSWORD, nextClientAddress());
    for (let guess = 0; guess < LOCKOUT_FAILURES - 1; guess += 1) expect((await browser.post("/login/code", { code: wrong })).status).toBe(400);
    const tenth = await browser.post("/login/code", { code: wrong });
    expect(tenth.status).toBe(429);
    expect(fieldError(tenth.text, "Code")).toMatch(/its second step is locked until .+ UTC \(in 15 minutes\)/);
    const retryAfter = Number(tenth.headers.get("retry-after"));
    expect(retryAfter).toBeGreaterThan(LOCKOUT_MINUTES * 60 - 30);
    expect(retryAfter).toBeLessThanOrEqual(LOCKOUT_MINUTES * 60);
    // Locked: even the right code waits, from any browser, and the step's page says so.
    const right = totpCode(secret, Date.now() + 30_000);
    const held = await browser.post("/login/code", { code: right });
    expect(held.status).toBe(429);
    expect(fieldError(held.text, "Code")).toContain("its second step is locked until");
    const elsewhere = await passwordStep(member.email, PASSWORD, nextClientAddress());
    expect(wordsOf((await elsewhere.get("/login/code")).text)).toContain("its second step is locked until");
    expect((await elsewhere.post("/login/code", { code: right })).status).toBe(429);
    const locked = await User.findByPk(member.userId);
    expect(locked!.secondFactorLockedUntil!.getTime()).toBeGreaterThan(Date.now() + (LOCKOUT_MINUTES - 1) * 60_000);
    const entries = await AuditEvent.findAll({ where: { actorUserId: member.userId, action: "user.second-factor-locked" } });
    expect(entries).toHaveLength(1);
    expect(entries[0].changes).toMatchObject({ failures: LOCKOUT_FAILURES, minutes: LOCKOUT_MINUTES });
    // The member's own account activity names it. (The lock and the throttle's window are cleared
    // by hand here to sign in at once; the clock test below lets them pass.)
    await User.update({ secondFactorLockedUntil: null }, { where: { id: member.userId } });
    await SignInAttempt.destroy({ where: { scope: "code-account", subject: member.userId } });
    const signedIn = await passwordStep(member.email, PASSWORD, nextClientAddress());
    expect((await signedIn.post("/login/code", { code: totpCode(secret, Date.now() + 30_000) })).status).toBe(302);
    expect(wordsOf((await signedIn.get("/account")).text)).toContain("The second step was locked after 10 wrong codes in a row, until");
  });

  test("With an injected clock: the lock ends after its term and the right code then works; failures older than the window do not count", async () => {
    const team = await makeTeam("lockout-clock");
    const member = team.members.reviewer;
    const secret = await giveSecondFactor(member.userId);
    const user = async () => (await User.findByPk(member.userId))!;
    const refusal = async (promise: Promise<unknown>) => {
      const error = await promise.then(
        () => null,
        (thrown: unknown) => thrown,
      );
      expect(error).toBeInstanceOf(Refusal);
      return error as Refusal;
    };
    // Addresses of their own, so the per-address throttle of earlier runs does not count.
    const [here, there] = [nextClientAddress(), nextClientAddress()];
    const start = Date.now();
    const minute = 60_000;
    // Nine wrong codes, then one past the window: the count starts over at one.
    for (let guess = 0; guess < LOCKOUT_FAILURES - 1; guess += 1) expect((await refusal(verifySecondFactor(await user(), wrongCode(secret, start), here, "code", start))).status).toBe(400);
    const later = start + (LOCKOUT_WINDOW_MINUTES + 1) * minute;
    expect((await refusal(verifySecondFactor(await user(), wrongCode(secret, later), here, "code", later))).status).toBe(400);
    expect((await user()).secondFactorFailures).toBe(1);
    // Nine more in the new window lock it.
    for (let guess = 0; guess < LOCKOUT_FAILURES - 2; guess += 1) expect((await refusal(verifySecondFactor(await user(), wrongCode(secret, later), here, "code", later))).status).toBe(400);
    const lockedAt = later + minute;
    const lock = await refusal(verifySecondFactor(await user(), wrongCode(secret, lockedAt), here, "code", lockedAt));
    expect(lock.status).toBe(429);
    expect((await user()).secondFactorLockedUntil!.getTime()).toBe(lockedAt + LOCKOUT_MINUTES * minute);
    // A minute before the end the right code is still refused, saying one minute is left.
    const almost = lockedAt + (LOCKOUT_MINUTES - 1) * minute;
    const early = await refusal(verifySecondFactor(await user(), totpCode(secret, almost), there, "code", almost));
    expect(early.status).toBe(429);
    expect(early.message).toContain("(in 1 minute)");
    // After the term the right code works and clears the lock.
    const after = lockedAt + LOCKOUT_MINUTES * minute + 1000;
    expect(await verifySecondFactor(await user(), totpCode(secret, after), there, "code", after)).toBe("authenticator");
    const cleared = await user();
    expect([cleared.secondFactorFailures, cleared.secondFactorFailedSince, cleared.secondFactorLockedUntil]).toEqual([0, null, null]);
    expect(await AuditEvent.count({ where: { actorUserId: member.userId, action: "user.second-factor-locked" } })).toBe(1);
  });
});
