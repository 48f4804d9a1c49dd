// Issue 14: links from the configured origin only, the same-origin guard against it, the outbox
// behind its secret, cookies, the tab redirect, sign-out without a body and session timeouts
// (docs/decisions/013).
import { request as httpRequest } from "node:http";
import { afterAll, describe, expect, inject, test } from "vitest";
import { getDatabase } from "#server/db/database.server";
import { Session, User } from "#models/index";
import { readCaughtMail, waitForLink } from "../support/outbox";
import { DEMO_PASSWORDS, GOOD_PASSWORD, signUpNewOrganisation, TestClient, uniqueEmail } from "../support/client";
import { plain } from "../support/html";

const outboxDir = inject("outboxDir");
const baseUrl = inject("baseUrl");
const sequelize = getDatabase();
afterAll(() => sequelize.close());

/** A form POST with the Host header of our choosing (fetch will not set Host); resolves with status and body. */
function postWithHost(path: string, fields: Record<string, string>, headers: Record<string, string>): Promise<{ status: number; body: string }> {
  const url = new URL(path, baseUrl);
  const body = new URLSearchParams(fields).toString();
  return new Promise((resolve, reject) => {
    const request = httpRequest(
      { host: url.hostname, port: url.port, path: url.pathname, method: "POST", headers: { "Content-Type": "application/x-www-form-urlencoded", "Content-Length": Buffer.byteLength(body), "X-Forwarded-For": "2001:db8:14::7", ...headers } },
      (response) => {
        let text = "";
        response.on("data", (chunk: Buffer) => (text += chunk.toString()));
        response.on("end", () => resolve({ status: response.statusCode ?? 0, body: text }));
      },
    );
    request.on("error", reject);
    request.end(body);
  });
}

const RESET_LINK = /https?:\/\/\S+\/reset-password\/[A-Za-z0-9_-]+/;

describe("E-mailed links come from APP_ORIGIN only, never from the request's Host", () => {
  test("A reset requested with a foreign Host and a matching Origin is refused; with our Origin the link is ours", async () => {
    const { email } = await signUpNewOrganisation("host-reset");
    // Issue 14: this request mailed http://attacker.example/reset-password/<live token>.
    const forged = await postWithHost("/forgot-password", { email }, { Host: "attacker.example", Origin: "http://attacker.example" });
    expect(forged.status).toBe(403);
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect((await readCaughtMail(outboxDir)).filter((mail) => mail.to.includes(email))).toEqual([]);

    const ours = await postWithHost("/forgot-password", { email }, { Host: "attacker.example", Origin: baseUrl, "X-Forwarded-Host": "attacker.example", "X-Forwarded-Proto": "https" });
    expect(ours.status).toBe(200);
    const link = await waitForLink(outboxDir, email, RESET_LINK);
    expect(new URL(link).origin).toBe(baseUrl);
    expect(link).not.toContain("attacker.example");
  });

  test("An invitation sent with a forwarded host names this site", async () => {
    const { client, slug } = await signUpNewOrganisation("host-invite");
    const invitee = uniqueEmail("host-invitee");
    const sent = await client.request(`/o/${slug}/settings/members`, { method: "POST", body: new URLSearchParams({ intent: "invite", email: invitee, role: "trainee" }), headers: { "X-Forwarded-Host": "attacker.example" } });
    expect(sent.status).toBe(302);
    const link = await waitForLink(outboxDir, invitee, /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/);
    expect(new URL(link).origin).toBe(baseUrl);
  });

  test("The same-origin guard compares scheme, host and port with APP_ORIGIN (RFC 6454 §5)", async () => {
    const client = new TestClient();
    const url = new URL(baseUrl);
    for (const origin of [`https://${url.host}`, `http://${url.hostname}:${Number(url.port) + 1}`, `http://localhost:${url.port}`, "null", "http://attacker.example"]) {
      const response = await client.post("/forgot-password", { email: "someone@test.example" }, { origin });
      expect(response.status, origin).toBe(403);
    }
    expect((await client.post("/forgot-password", { email: "someone@test.example" }, { origin: baseUrl })).status).toBe(200);
  });
});

describe("The local outbox opens only with the secret npm start prints", () => {
  test("Signed out, signed in as an organisation's owner or with a wrong key it does not exist (404); the key opens it", async () => {
    const { email } = await signUpNewOrganisation("outbox");
    await new TestClient().post("/forgot-password", { email });
    await waitForLink(outboxDir, email, RESET_LINK);

    const stranger = new TestClient();
    const signedOut = await stranger.get("/outbox");
    expect(signedOut.status).toBe(404);
    expect(signedOut.text).not.toContain("/reset-password/");

    const owner = new TestClient();
    await owner.signIn(...DEMO_PASSWORDS.owner);
    expect((await owner.get("/outbox")).status).toBe(404);
    expect((await stranger.get("/outbox?key=not-the-secret")).status).toBe(404);

    // The key is swapped for a cookie scoped to /outbox, and leaves the address bar.
    const opened = await stranger.get(`/outbox?key=${encodeURIComponent(inject("outboxSecret"))}`);
    expect(opened.status).toBe(302);
    expect(opened.location).toBe("/outbox");
    const cookie = opened.setCookies.find((line) => line.startsWith("sallyport-outbox="));
    expect(cookie).toMatch(/Path=\/outbox/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    expect(cookie).not.toContain(inject("outboxSecret"));
    const page = await stranger.get("/outbox");
    expect(page.status).toBe(200);
    expect(plain(page.text)).toContain(email);
  });
});

describe("Cookies, redirects and signing out", () => {
  test("The theme cookie is Secure like the session cookie when served in production (OWASP ASVS 3.4.1)", async () => {
    const response = await new TestClient().post("/theme", { theme: "dark", returnTo: "/login" });
    expect(response.status).toBe(302);
    const theme = response.setCookies.find((line) => line.startsWith("sallyport-theme="));
    expect(theme).toMatch(/;\s*Secure/i);
    expect(theme).toMatch(/HttpOnly/i);
  });

  test("/login?redirectTo=/%09/evil.example leads to this site only (issue 14: browsers drop the tab)", async () => {
    const client = new TestClient();
    const signedIn = await client.post("/login", { email: DEMO_PASSWORDS.engineer[0], password: DEMO_PASSWORDS.engineer[1], redirectTo: "/\t/evil.example" });
    expect(signedIn.status).toBe(302);
    expect(new URL(signedIn.location!, baseUrl).origin).toBe(baseUrl);
    expect(signedIn.location).toBe("/");
    const again = await client.get("/login?redirectTo=/%09/evil.example");
    expect(again.status).toBe(302);
    expect(again.location).toBe("/");
    for (const target of ["/%5C/evil.example", "/%0A/evil.example", "//evil.example"]) {
      const response = await client.get(`/login?redirectTo=${target}`);
      expect(new URL(response.location!, baseUrl).origin, target).toBe(baseUrl);
    }
  });

  test("POST /logout without a body signs out (issue 14: it answered 400 and stayed signed in)", async () => {
    const client = new TestClient();
    await client.signIn(...DEMO_PASSWORDS.trainee);
    expect((await client.get("/account")).status).toBe(200);
    const response = await client.request("/logout", { method: "POST" });
    expect(response.status).toBe(302);
    expect(response.location).toBe("/login");
    expect((await client.get("/account")).status).toBe(302);
  });
});

describe("Sessions end after 30 minutes idle and 12 hours in all (NIST SP 800-63B §4.2.3, AAL2)", () => {
  async function signedInSession(label: string) {
    const { email } = await signUpNewOrganisation(label);
    const client = new TestClient();
    const response = await client.signIn(email, GOOD_PASSWORD);
    expect(response.status).toBe(302);
    const user = await User.findOne({ where: { email } });
    const sessions = await Session.findAll({ where: { userId: user!.id }, order: [["createdAt", "DESC"]] });
    return { client, session: sessions[0], cookie: response.setCookies.join("\n") };
  }

  test("The cookie lives 12 hours at most", async () => {
    const { cookie } = await signedInSession("session-cookie");
    const maxAge = Number(/Max-Age=(\d+)/i.exec(cookie)?.[1]);
    expect(maxAge).toBeGreaterThan(0);
    expect(maxAge).toBeLessThanOrEqual(12 * 3600);
  });

  test("31 minutes without a request end the session", async () => {
    const { client, session } = await signedInSession("session-idle");
    expect((await client.get("/account")).status).toBe(200);
    await Session.update({ lastSeenAt: new Date(Date.now() - 31 * 60_000) }, { where: { id: session.id } });
    expect((await client.get("/account")).status).toBe(302);
    expect(await Session.count({ where: { id: session.id } })).toBe(0);
  });

  test("29 minutes idle keep it; 12 hours after sign-in it ends however active", async () => {
    const { client, session } = await signedInSession("session-absolute");
    await Session.update({ lastSeenAt: new Date(Date.now() - 29 * 60_000) }, { where: { id: session.id } });
    expect((await client.get("/account")).status).toBe(200);
    await sequelize.query("UPDATE sessions SET created_at = now() - interval '12 hours 1 minute', last_seen_at = now() WHERE id = :id", { replacements: { id: session.id } });
    expect((await client.get("/account")).status).toBe(302);
  });
});
