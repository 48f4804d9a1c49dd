import { inject, describe, expect, test } from "vitest";
import { readCaughtMail, waitForLink } from "../support/outbox";
import { GOOD_PASSWORD, signUpNewOrganisation, TestClient } from "../support/client";

const outboxDir = inject("outboxDir");

describe("Password reset by e-mailed link", () => {
  test("A user resets the password end to end from the e-mail", async () => {
    const { email, client: oldSession } = await signUpNewOrganisation("reset");
    const client = new TestClient();
    const asked = await client.post("/forgot-password", { email });
    expect(asked.status).toBe(200);
    expect(asked.text).toContain("Check your e-mail");

    const link = await waitForLink(outboxDir, email, /https?:\/\/\S+\/reset-password\/[A-Za-z0-9_-]+/);
    const path = new URL(link).pathname;
    const page = await client.get(path);
    expect(page.status).toBe(200);
    expect(page.text).toContain("Choose a new password");

    const newPassword = "a brand new passphrase for me";
    const done = await client.post(path, { password: newPassword });
    expect(done.status).toBe(302);
    expect(done.location).toBe("/login");

    // Old password no longer works, new one does, and earlier sessions were ended.
    expect((await new TestClient().signIn(email, GOOD_PASSWORD)).status).toBe(401);
    expect((await new TestClient().signIn(email, newPassword)).status).toBe(302);
    expect((await oldSession.get("/account")).status).toBe(302);

    // Single use: the same link is spent.
    expect((await client.get(path)).status).toBe(404);
    expect((await client.post(path, { password: "yet another long passphrase" })).status).toBe(404);
  });

  test("The token in the link is stored only as a hash and the e-mail says when it expires", async () => {
    const { email } = await signUpNewOrganisation("reset-mail");
    await new TestClient().post("/forgot-password", { email });
    const link = await waitForLink(outboxDir, email, /https?:\/\/\S+\/reset-password\/[A-Za-z0-9_-]+/);
    const token = link.split("/").at(-1)!;
    expect(token.length).toBeGreaterThanOrEqual(43); // 32 random bytes in base64url
    const mail = (await readCaughtMail(outboxDir)).filter((message) => message.to.includes(email)).at(-1)!;
    expect(mail.subject).toBe("Reset your Sallyport password");
    expect(mail.text).toContain("expires in 30 minutes");
  });

  test("An unknown address gets the same answer and no e-mail", async () => {
    const email = `nobody-${Date.now()}@test.example`;
    const response = await new TestClient().post("/forgot-password", { email });
    expect(response.status).toBe(200);
    expect(response.text).toContain("Check your e-mail");
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect((await readCaughtMail(outboxDir)).some((message) => message.to.includes(email))).toBe(false);
  });

  // NIST SP 800-63B rev 4 §3.1.1.2: at least 15 characters for a single-factor password.
  test("A too-short new password is refused with the reason and the link stays usable", async () => {
    const { email } = await signUpNewOrganisation("reset-weak");
    const client = new TestClient();
    await client.post("/forgot-password", { email });
    const path = new URL(await waitForLink(outboxDir, email, /https?:\/\/\S+\/reset-password\/[A-Za-z0-9_-]+/)).pathname;
    const refused = await client.post(path, { password: "short one" });
    expect(refused.status).toBe(400);
    expect(refused.text).toContain("Use at least 15 characters");
    expect((await client.get(path)).status).toBe(200);
  });

  test("A made-up token is answered 404, not 500", async () => {
    const client = new TestClient();
    expect((await client.get("/reset-password/not-a-real-token-at-all-xxxxxxxxxxxx")).status).toBe(404);
    expect((await client.get("/reset-password/%00%ff")).status).toBe(400);
  });
});
