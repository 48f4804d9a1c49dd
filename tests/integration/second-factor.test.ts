import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, Organisation, RecoveryCode, Session } from "#models/index";
import { totpCode } from "#server/auth/totp";
import { MAX_FAILURES_PER_ACCOUNT } from "#server/auth/throttle.server";
import { getDatabase } from "#server/db/database.server";
import { ApiClient, makeToken } from "../support/api";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient } from "../support/client";
import { fieldError, plain, wordsOf } from "../support/html";
import { makeTeam, PASSWORD } from "../support/proposal-team";
import { enrol, passwordStep, RECOVERY_CODE, SECOND_FACTOR_PAGE, userOf, wrongCode } from "../support/second-factor";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

const PAGE = SECOND_FACTOR_PAGE;

describe("Sallyport's own second factor", () => {
  test("A user turns on a second factor; from then on the password alone signs nobody in and the code completes the sign-in", async () => {
    const { client, email, slug } = await signUpNewOrganisation("totp-on");
    const { next } = await enrol(client);
    const user = await userOf(email);
    // Kept sealed at rest, not as Base32 text (docs/decisions/019).
    expect(user.secondFactorSecret).toMatch(/^v1\./);
    expect(await RecoveryCode.count({ where: { userId: user.id } })).toBe(10);
    expect((await RecoveryCode.findAll({ where: { userId: user.id } })).every((row) => row.codeHash.startsWith("$argon2id$"))).toBe(true);

    const browser = await passwordStep(email);
    // Not signed in yet: organisation pages send the browser to sign in.
    const early = await browser.get(`/o/${slug}/sites`);
    expect(early.status).toBe(302);
    expect(early.location).toContain("/login?redirectTo=");
    const step = await browser.get("/login/code");
    expect(step.status).toBe(200);
    expect(wordsOf(step.text)).toContain(`Your password for ${email} is right.`);
    const pendingToken = browser.cookies.get("__Host-sallyport-session");

    const done = await browser.post("/login/code", { code: next(), redirectTo: `/o/${slug}/sites` });
    expect(done.status).toBe(302);
    expect(done.location).toBe(`/o/${slug}/sites`);
    // OWASP ASVS 4.0.3 3.2.1: a new session token once authentication completes.
    expect(browser.cookies.get("__Host-sallyport-session")).not.toBe(pendingToken);
    expect((await browser.get(`/o/${slug}/sites`)).status).toBe(200);
    const signIn = await AuditEvent.findOne({ where: { actorUserId: user.id, action: "user.signed-in" }, order: [["id", "DESC"]] });
    expect(signIn?.changes).toEqual({ secondFactor: "authenticator" });
    const account = await browser.get("/account");
    expect(wordsOf(account.text)).toContain("Recovery codes left: 10");
  });

  test("A code counts once: the same code from a second sign-in is refused (RFC 6238 §5.2)", async () => {
    const { client, email } = await signUpNewOrganisation("totp-once");
    const { secret } = await enrol(client);
    // Enrolment took the step one back; this code is now's, used twice.
    const code = totpCode(secret, Date.now() + 30_000);
    const first = await passwordStep(email);
    expect((await first.post("/login/code", { code })).status).toBe(302);
    const second = await passwordStep(email);
    const replay = await second.post("/login/code", { code });
    expect(replay.status).toBe(400);
    expect(fieldError(replay.text, "Code")).toContain("That code is not right");
    expect((await second.get("/account")).status).toBe(302);
  });

  test("Wrong codes are throttled after ten per account, and then even the right code waits (PCI DSS v4.0 8.3.4)", async () => {
    const { client, email } = await signUpNewOrganisation("totp-throttle");
    const { secret, next } = await enrol(client);
    const browser = await passwordStep(email);
    const right = next();
    const wrong = wrongCode(secret);
    // Parallel guesses cannot outrun the count: the throttle reserves before it checks, so at most ten are evaluated.
    const guesses = await Promise.all(Array.from({ length: MAX_FAILURES_PER_ACCOUNT + 5 }, () => browser.post("/login/code", { code: wrong })));
    let evaluated = guesses.filter((guess) => guess.status === 400).length;
    expect(evaluated).toBeLessThanOrEqual(MAX_FAILURES_PER_ACCOUNT);
    expect(guesses.every((guess) => guess.status === 400 || guess.status === 429)).toBe(true);
    // One by one, the rest of the ten are evaluated and then the step holds: the tenth wrong code
    // locks it (429, the lockout of docs/decisions/019), so nine are answered "not right".
    for (let guess = 0; guess < MAX_FAILURES_PER_ACCOUNT + 1; guess += 1) {
      const answer = await browser.post("/login/code", { code: wrong });
      if (answer.status === 429) break;
      expect(answer.status).toBe(400);
      evaluated += 1;
    }
    expect(evaluated).toBe(MAX_FAILURES_PER_ACCOUNT - 1);
    const user = await userOf(email);
    expect((await AuditEvent.findAll({ where: { actorUserId: user.id, action: "user.second-factor-locked" } })).map((entry) => entry.changes.failures)).toEqual([MAX_FAILURES_PER_ACCOUNT]);
    const held = await browser.post("/login/code", { code: right });
    expect(held.status).toBe(429);
    expect(Number(held.headers.get("retry-after"))).toBeGreaterThan(0);
    expect(fieldError(held.text, "Code")).toMatch(/Too many wrong codes for this account/);
    expect((await browser.get("/account")).status).toBe(302);
  });

  test("A recovery code signs in once, the count left goes down, and the same code is refused the second time", async () => {
    const { client, email } = await signUpNewOrganisation("totp-recovery");
    const { recoveryCodes } = await enrol(client);
    const [code] = recoveryCodes;
    const first = await passwordStep(email);
    const used = await first.post("/login/code", { code: code.toUpperCase().replace("-", " ") });
    expect(used.status).toBe(302);
    const account = await first.get("/account");
    expect(wordsOf(account.text)).toContain("Recovery codes left: 9");
    const user = await userOf(email);
    const signIn = await AuditEvent.findOne({ where: { actorUserId: user.id, action: "user.signed-in" }, order: [["id", "DESC"]] });
    expect(signIn?.changes).toEqual({ secondFactor: "recovery code" });
    const second = await passwordStep(email);
    const again = await second.post("/login/code", { code });
    expect(again.status).toBe(400);
    // Another of the codes still works.
    expect((await second.post("/login/code", { code: recoveryCodes[1] })).status).toBe(302);
  });

  test("The second step waits five minutes at most; after that the password step starts over", async () => {
    const { client, email } = await signUpNewOrganisation("totp-expiry");
    const { next } = await enrol(client);
    const browser = await passwordStep(email);
    const pending = await Session.findOne({ where: { userId: (await userOf(email)).id, secondFactorPending: true } });
    expect(pending!.expiresAt.getTime() - pending!.createdAt.getTime()).toBeLessThanOrEqual(5 * 60_000);
    await pending!.update({ expiresAt: new Date(Date.now() - 1000) });
    const late = await browser.post("/login/code", { code: next() });
    expect(late.status).toBe(302);
    expect(late.location).toBe("/login");
    expect((await browser.get("/login/code")).location).toBe("/login");
  });

  test("New recovery codes need a current code, and the earlier codes stop working", async () => {
    const { client, email } = await signUpNewOrganisation("totp-regenerate");
    const { secret, next, recoveryCodes } = await enrol(client);
    const refused = await client.post(PAGE, { intent: "regenerate", code: wrongCode(secret) });
    expect(refused.status).toBe(400);
    const made = await client.post(PAGE, { intent: "regenerate", code: next() });
    expect(made.status).toBe(200);
    const fresh = [...new Set(plain(made.text.replace(/<script[\s\S]*?<\/script>/g, "")).match(RECOVERY_CODE) ?? [])];
    expect(fresh).toHaveLength(10);
    expect(fresh.some((code) => recoveryCodes.includes(code))).toBe(false);
    const browser = await passwordStep(email);
    expect((await browser.post("/login/code", { code: recoveryCodes[2] })).status).toBe(400);
    expect((await browser.post("/login/code", { code: fresh[0] })).status).toBe(302);
    const user = await userOf(email);
    expect(await AuditEvent.count({ where: { actorUserId: user.id, action: "user.recovery-codes-regenerated" } })).toBe(1);
  });

  test("Turning the second factor off takes the password and a current code; then the password alone signs in", async () => {
    const { client, email } = await signUpNewOrganisation("totp-off");
    const { next } = await enrol(client);
    const noPassword = await client.post(PAGE, { intent: "disable", currentPassword: "not my password at all", code: next() });
    expect(noPassword.status).toBe(400);
    expect(fieldError(noPassword.text, "Current password")).toBe("That is not your current password.");
    const noCode = await client.post(PAGE, { intent: "disable", currentPassword: GOOD_PASSWORD, code: "12345" });
    expect(noCode.status).toBe(400);
    expect(fieldError(noCode.text, "Code from the app, or a recovery code")).toContain("That code is not right");
    expect((await userOf(email)).secondFactorEnabledAt).not.toBeNull();
    const off = await client.post(PAGE, { intent: "disable", currentPassword: GOOD_PASSWORD, code: next() });
    expect(off.status).toBe(302);
    const user = await userOf(email);
    expect(user.secondFactorSecret).toBeNull();
    expect(await RecoveryCode.count({ where: { userId: user.id } })).toBe(0);
    expect(await AuditEvent.count({ where: { actorUserId: user.id, action: "user.second-factor-disabled" } })).toBe(1);
    const browser = new TestClient();
    const signIn = await browser.signIn(email, GOOD_PASSWORD);
    expect(signIn.location).toBe("/");
  });

  test("Enrolment is confirmed only by a code from the secret shown; a wrong code keeps it off", async () => {
    const { client, email } = await signUpNewOrganisation("totp-confirm");
    await client.post(PAGE, { intent: "start" });
    const wrong = await client.post(PAGE, { intent: "confirm", code: "12a456" });
    expect(wrong.status).toBe(400);
    expect(fieldError(wrong.text, "Code from the app")).toBe("Enter the six digits your authenticator app shows now.");
    const page = await client.get(PAGE);
    const secret = /data-secret="([A-Z2-7]+)"/.exec(page.text)![1];
    const other = await client.post(PAGE, { intent: "confirm", code: wrongCode(secret) });
    expect(other.status).toBe(400);
    expect((await userOf(email)).secondFactorEnabledAt).toBeNull();
    expect((await client.post(PAGE, { intent: "sideways" })).status).toBe(400);
    expect((await client.post(PAGE, { intent: "confirm", code: "12\u0000456" })).status).toBe(400);
  });

  test("An organisation that requires a second factor sends members without one to enrol, and they can use nothing else until they have", async () => {
    const team = await makeTeam("twofactor");
    const owner = await team.members.owner.client();
    const settings = `/o/${team.slug}/settings/organisation`;
    // The owner has none yet: turning it on would send them to enrol, so it is refused.
    const early = await owner.post(settings, { intent: "second-factor-requirement", requireSecondFactor: "on" });
    expect(early.status).toBe(409);
    expect(wordsOf(early.text)).toContain("Turn on a second factor for your own account first");
    expect((await Organisation.findByPk(team.organisationId))!.requireSecondFactor).toBe(false);
    // An engineer may not change it at all.
    const engineer = await team.members.engineer.client();
    expect((await engineer.post(settings, { intent: "second-factor-requirement", requireSecondFactor: "on" })).status).toBe(403);

    await enrol(owner);
    const page = await owner.get(settings);
    expect(wordsOf(page.text)).toContain(`${team.members.admin.name} (admin)`);
    const on = await owner.post(settings, { intent: "second-factor-requirement", requireSecondFactor: "on" });
    expect(on.status).toBe(302);
    expect((await Organisation.findByPk(team.organisationId))!.requireSecondFactor).toBe(true);
    const audit = await AuditEvent.findAll({ where: { organisationId: team.organisationId, action: "organisation.second-factor-requirement-changed" } });
    expect(audit).toHaveLength(1);
    expect(audit[0].changes).toEqual({ requireSecondFactor: { from: false, to: true }, membersWithout: 5 });

    // The engineer, signed in before, is sent to enrol on their next request, for pages and data requests alike.
    for (const path of [`/o/${team.slug}/devices`, `${team.path}/reach`, "/account", `/o/${team.slug}/devices.data`]) {
      const sent = await engineer.get(path);
      if (path.endsWith(".data")) {
        // React Router's data requests carry the redirect in the body (202), not in Location.
        expect(sent.status, path).toBe(202);
        expect(sent.text, path).toContain(PAGE);
        expect(sent.text, path).not.toContain("mole-edge");
      } else {
        expect(sent.status, path).toBe(302);
        expect(sent.location, path).toBe(PAGE);
      }
    }
    const post = await engineer.post(`/o/${team.slug}/sites`, { name: "Sneaked in" });
    expect(post.status).toBe(302);
    expect(post.location).toBe(PAGE);
    const enrolPage = await engineer.get(PAGE);
    expect(enrolPage.status).toBe(200);
    expect(wordsOf(enrolPage.text)).toContain(`Proposals twofactor requires a second factor of every member.`);
    // API tokens are unaffected (docs/decisions/019): a bearer token works without the second factor.
    const token = await makeToken(team.organisationId, { userId: team.members.engineer.userId, email: team.members.engineer.email, role: "engineer" }, { name: "pipeline" });
    expect((await new ApiClient(token.secret).get("/devices")).status).toBe(200);

    // A fresh sign-in with the password lands on enrolment too, and enrolling opens everything.
    const fresh = new TestClient();
    expect((await fresh.signIn(team.members.reviewer.email, PASSWORD)).status).toBe(302);
    expect((await fresh.get(`/o/${team.slug}`)).location).toBe(PAGE);
    await enrol(fresh);
    expect((await fresh.get(`/o/${team.slug}/devices`)).status).toBe(200);

    // Turning it off lets members without one back in.
    expect((await owner.post(settings, { intent: "second-factor-requirement" })).status).toBe(302);
    expect((await engineer.get(`/o/${team.slug}/devices`)).status).toBe(200);
  });
});
