// The account page inside the app shell: a user changes their name, their e-mail (only once
// a link sent to the new address is followed) and their password (the current one required).

import { afterAll, inject, describe, expect, test } from "vitest";
import { createDatabase } from "#server/db/database.server";
import { AuditEvent, EmailChange, User } from "#models/index";
import { readCaughtMail, waitForLink } from "../support/outbox";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient, uniqueEmail } from "../support/client";
import { plain } from "../support/html";

const outboxDir = inject("outboxDir");
const CONFIRM_LINK = /https?:\/\/\S+\/confirm-email\/[A-Za-z0-9_-]+/;
const sequelize = createDatabase(process.env.DATABASE_URL!);
afterAll(() => sequelize.close());

/** The user's own account events, newest first. */
async function accountEvents(email: string): Promise<AuditEvent[]> {
  const user = await User.findOne({ where: { email }, rejectOnEmpty: true });
  return AuditEvent.findAll({ where: { actorUserId: user.id, organisationId: null }, order: [["id", "DESC"]] });
}

describe("The account page", () => {
  test("It sits inside the app shell, from the user menu and from /account", async () => {
    const { client, slug } = await signUpNewOrganisation("acct-shell");
    for (const path of [`/o/${slug}/account`, "/account"]) {
      const page = await client.get(path);
      expect(page.status, path).toBe(200);
      const text = plain(page.text);
      expect(text).toContain('aria-label="Main"'); // the shell's navigation
      expect(text).toContain(`href="/o/${slug}/devices"`);
      expect(text).toContain("Your account");
      expect(text).toContain('aria-label="Change your password"');
    }
    // The user menu of every organisation page leads to the account page of that organisation.
    expect((await client.get(`/o/${slug}/sites`)).text).toContain(`href="/o/${slug}/account"`);
  });

  test("A user changes their name; an empty name is refused at the field", async () => {
    const { client, slug, email } = await signUpNewOrganisation("acct-name");
    const refused = await client.post(`/o/${slug}/account`, { intent: "name", name: "   " });
    expect(refused.status).toBe(400);
    expect(plain(refused.text)).toContain("Enter a name.");
    const saved = await client.post(`/o/${slug}/account`, { intent: "name", name: "Marit Quayle" });
    expect(saved.status).toBe(302);
    expect(saved.location).toBe(`/o/${slug}/account`);
    expect(plain((await client.get(`/o/${slug}/settings/members`)).text)).toContain("Marit Quayle");
    const [event] = await accountEvents(email);
    expect(event.action).toBe("user.renamed");
    expect(event.changes).toEqual({ name: { from: "Test acct-name", to: "Marit Quayle" } });
    expect(plain((await client.get(`/o/${slug}/account`)).text)).toContain("Changed their name from “Test acct-name” to “Marit Quayle”");
  });

  test("A new e-mail takes effect only when the link sent to it is followed; the old address is told and the link works once", async () => {
    const { client, slug, email } = await signUpNewOrganisation("acct-email");
    const newEmail = uniqueEmail("acct-email-new");
    const asked = await client.post(`/o/${slug}/account`, { intent: "email", newEmail: newEmail.toUpperCase(), currentPassword: GOOD_PASSWORD });
    expect(asked.status).toBe(302);
    // Nothing has changed yet: the old address still signs in, the page shows the wait.
    expect((await User.findOne({ where: { email } }))?.email).toBe(email);
    const page = plain((await client.get(`/o/${slug}/account`)).text);
    expect(page).toContain(`Waiting for confirmation of <strong>${newEmail}</strong>`);
    expect(page).toContain("Asked to change their e-mail to");

    const link = await waitForLink(outboxDir, newEmail, CONFIRM_LINK);
    const path = new URL(link).pathname;
    const token = path.split("/").at(-1)!;
    expect(token.length).toBeGreaterThanOrEqual(43); // 32 random bytes, base64url
    // Stored only as a hash.
    const stored = await EmailChange.findOne({ where: { newEmail } });
    expect(stored?.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(stored?.tokenHash).not.toContain(token);
    const mail = (await readCaughtMail(outboxDir)).filter((message) => message.to.includes(newEmail)).at(-1)!;
    expect(mail.subject).toBe("Confirm your new Sallyport e-mail address");
    expect(mail.text).toContain("expires in 24 hours");

    // Opening the link only asks (a mail scanner fetching it changes nothing).
    const confirmPage = await new TestClient().get(path);
    expect(confirmPage.status).toBe(200);
    expect(plain(confirmPage.text)).toContain(newEmail);
    expect((await User.findOne({ where: { email } }))?.email).toBe(email);

    const confirmed = await client.post(path, {});
    expect(confirmed.status).toBe(302);
    expect(confirmed.location).toBe("/account");
    expect((await new TestClient().signIn(email, GOOD_PASSWORD)).status).toBe(401);
    expect((await new TestClient().signIn(newEmail, GOOD_PASSWORD)).status).toBe(302);
    expect(plain((await client.get(`/o/${slug}/account`)).text)).toContain(`You sign in with <strong class="text-ink">${newEmail}</strong>`);
    const notice = (await readCaughtMail(outboxDir)).filter((message) => message.to.includes(email)).at(-1);
    expect(notice?.subject).toBe("Your Sallyport e-mail address was changed");
    expect(notice?.text).toContain(newEmail);
    const event = (await accountEvents(newEmail)).find((candidate) => candidate.action === "user.email-changed");
    expect(event?.changes).toEqual({ email: { from: email, to: newEmail } });

    // Single use.
    expect((await client.get(path)).status).toBe(404);
    expect((await client.post(path, {})).status).toBe(404);
  });

  test("An e-mail change needs the current password; a wrong one sends nothing", async () => {
    const { client, slug } = await signUpNewOrganisation("acct-email-wrong");
    const newEmail = uniqueEmail("acct-email-wrong-new");
    for (const currentPassword of ["not my password at all", ""]) {
      const refused = await client.post(`/o/${slug}/account`, { intent: "email", newEmail, currentPassword });
      expect(refused.status, currentPassword).toBe(400);
      const text = plain(refused.text);
      expect(text).toContain(currentPassword ? "That is not your current password." : "Enter your current password to confirm it is you.");
      expect(text).toContain(`value="${newEmail}"`); // what was typed stays
      expect(text).not.toContain("not my password at all"); // passwords are never sent back
    }
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect((await readCaughtMail(outboxDir)).some((message) => message.to.includes(newEmail))).toBe(false);
  });

  test("An address in use by another account, or one's own, is refused at the field", async () => {
    const { client, slug, email } = await signUpNewOrganisation("acct-email-taken");
    const { email: otherEmail } = await signUpNewOrganisation("acct-email-other");
    const taken = await client.post(`/o/${slug}/account`, { intent: "email", newEmail: otherEmail, currentPassword: GOOD_PASSWORD });
    expect(taken.status).toBe(409);
    expect(plain(taken.text)).toContain("Another account uses this e-mail address already.");
    const same = await client.post(`/o/${slug}/account`, { intent: "email", newEmail: email, currentPassword: GOOD_PASSWORD });
    expect(same.status).toBe(400);
    expect(plain(same.text)).toContain("That is already your e-mail address.");
    const malformed = await client.post(`/o/${slug}/account`, { intent: "email", newEmail: "not-an-address", currentPassword: GOOD_PASSWORD });
    expect(malformed.status).toBe(400);
    expect(plain(malformed.text)).toContain("Enter a valid e-mail address");
  });

  test("Expired links, superseded links and an address taken meanwhile change nothing", async () => {
    const { client, slug, email } = await signUpNewOrganisation("acct-email-stale");
    const first = uniqueEmail("acct-stale-first");
    await client.post(`/o/${slug}/account`, { intent: "email", newEmail: first, currentPassword: GOOD_PASSWORD });
    const firstPath = new URL(await waitForLink(outboxDir, first, CONFIRM_LINK)).pathname;
    // A newer request supersedes the first link.
    const second = uniqueEmail("acct-stale-second");
    await client.post(`/o/${slug}/account`, { intent: "email", newEmail: second, currentPassword: GOOD_PASSWORD });
    const secondPath = new URL(await waitForLink(outboxDir, second, CONFIRM_LINK)).pathname;
    expect((await client.get(firstPath)).status).toBe(404);
    expect((await client.post(firstPath, {})).status).toBe(404);

    // Someone else signs up with the address before the link is followed.
    await new TestClient().post("/signup", { name: "Quick Taker", email: second, organisationName: `Takers ${Date.now().toString(36)}`, password: GOOD_PASSWORD });
    const clash = await client.post(secondPath, {});
    expect(clash.status).toBe(409);
    expect(plain(clash.text)).toContain("Another account has started using this e-mail address");
    expect((await User.findOne({ where: { email } }))?.email).toBe(email);

    // An expired link: 404 with a way on, nothing changed.
    const third = uniqueEmail("acct-stale-third");
    await client.post(`/o/${slug}/account`, { intent: "email", newEmail: third, currentPassword: GOOD_PASSWORD });
    const thirdPath = new URL(await waitForLink(outboxDir, third, CONFIRM_LINK)).pathname;
    await EmailChange.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { newEmail: third } });
    const expired = await client.get(thirdPath);
    expect(expired.status).toBe(404);
    expect(plain(expired.text)).toContain("This confirmation link has expired or was used already.");
    expect((await client.post(thirdPath, {})).status).toBe(404);
    expect((await User.findOne({ where: { email } }))?.email).toBe(email);
    // Made-up tokens are 404, never 500; one with U+0000 or broken UTF-8 is refused before routing (400).
    for (const token of ["short", "x".repeat(60)]) expect((await client.get(`/confirm-email/${token}`)).status, token).toBe(404);
    expect((await client.get("/confirm-email/%00%ff")).status).toBe(400);
  });

  test("A password change needs the current password, follows the rules, and signs out every other session", async () => {
    const { client, slug, email } = await signUpNewOrganisation("acct-password");
    const laptop = new TestClient();
    expect((await laptop.signIn(email, GOOD_PASSWORD)).status).toBe(302);
    const newPassword = "tide tables and rope knots";

    const wrong = await client.post(`/o/${slug}/account`, { intent: "password", currentPassword: "a wrong guess entirely", newPassword });
    expect(wrong.status).toBe(400);
    expect(plain(wrong.text)).toContain("That is not your current password.");
    // NIST SP 800-63B rev 4 §3.1.1.2: at least 15 characters.
    const weak = await client.post(`/o/${slug}/account`, { intent: "password", currentPassword: GOOD_PASSWORD, newPassword: "short one" });
    expect(weak.status).toBe(400);
    expect(plain(weak.text)).toContain("Use at least 15 characters");
    // Nothing changed so far; the laptop is still signed in.
    expect((await laptop.get("/account")).status).toBe(200);

    const changed = await client.post(`/o/${slug}/account`, { intent: "password", currentPassword: GOOD_PASSWORD, newPassword });
    expect(changed.status).toBe(302);
    expect(changed.location).toBe(`/o/${slug}/account`);
    // This session stays; the other one is signed out (OWASP ASVS 4.0.3 3.3.3, from memory).
    expect((await client.get(`/o/${slug}/account`)).status).toBe(200);
    expect((await laptop.get("/account")).status).toBe(302);
    expect((await new TestClient().signIn(email, GOOD_PASSWORD)).status).toBe(401);
    expect((await new TestClient().signIn(email, newPassword)).status).toBe(302);
    // Stored as argon2id (OWASP Password Storage Cheat Sheet), never as typed.
    const user = await User.findOne({ where: { email }, rejectOnEmpty: true });
    expect(user.passwordHash).toMatch(/^\$argon2id\$/);
    const events = await accountEvents(email);
    const change = events.find((event) => event.action === "user.password-changed");
    expect(change?.changes).toEqual({ otherSessionsEnded: 1 });
    expect(JSON.stringify(events.map((event) => event.changes))).not.toContain(newPassword);
  });

  test("Wrong current passwords are throttled like sign-ins", async () => {
    const { client, slug } = await signUpNewOrganisation("acct-throttle");
    // PCI DSS v4.0 8.3.4: at most 10 invalid attempts (server/auth/throttle.server.ts).
    for (let attempt = 1; attempt <= 10; attempt += 1) {
      expect((await client.post(`/o/${slug}/account`, { intent: "password", currentPassword: `wrong guess number ${attempt}`, newPassword: "tide tables and rope knots" })).status).toBe(400);
    }
    const throttled = await client.post(`/o/${slug}/account`, { intent: "password", currentPassword: GOOD_PASSWORD, newPassword: "tide tables and rope knots" });
    expect(throttled.status).toBe(429);
    expect(Number(throttled.headers.get("retry-after"))).toBeGreaterThan(0);
  });

  test("Someone in no organisation still has the account page, without the shell", async () => {
    const { client, slug } = await signUpNewOrganisation("acct-bare");
    const invitee = uniqueEmail("acct-bare-member");
    await client.post(`/o/${slug}/settings/members`, { intent: "invite", email: invitee, role: "trainee" });
    const invitation = new URL(await waitForLink(outboxDir, invitee, /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/)).pathname;
    const member = new TestClient();
    await member.post(invitation, { name: "Leaving Soon", password: GOOD_PASSWORD });
    const members = (await client.get(`/o/${slug}/settings/members`)).text;
    const membershipId = [...members.matchAll(/name="membershipId" value="([0-9a-f-]{36})"/g)].map((match) => match[1]).find((id) => members.indexOf(id) > members.indexOf("Leaving Soon"));
    expect((await client.post(`/o/${slug}/settings/members`, { intent: "remove", membershipId: membershipId! })).status).toBe(302);
    const page = await member.get("/account");
    expect(page.status).toBe(200);
    expect(plain(page.text)).not.toContain('aria-label="Main"');
    expect((await member.post("/account", { intent: "name", name: "Left Already" })).status).toBe(302);
    expect(plain((await member.get("/account")).text)).toContain('value="Left Already"');
  });

  test("An unknown intent is a 400, not a 500", async () => {
    const { client, slug } = await signUpNewOrganisation("acct-intent");
    expect((await client.post(`/o/${slug}/account`, { intent: "delete-everything" })).status).toBe(400);
    expect((await client.post(`/o/${slug}/account`, {})).status).toBe(400);
  });
});
