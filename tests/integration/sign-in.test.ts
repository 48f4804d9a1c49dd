import { describe, expect, test } from "vitest";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient } from "../support/client";

const [ownerEmail, ownerPassword] = DEMO_PASSWORDS.owner;

describe("Sign-in", () => {
  test("A user signs in with the right password and reaches the organisation", async () => {
    const client = new TestClient();
    const response = await client.signIn(ownerEmail, ownerPassword);
    expect(response.status).toBe(302);
    expect(response.location).toBe("/");
    const home = await client.get("/");
    expect(home.location).toBe("/o/lanternfield");
    const sites = await client.get("/o/lanternfield/sites");
    expect(sites.status).toBe(200);
    expect(sites.text).toContain("Brightwater Clinic");
  });

  test("A wrong password is refused with a clear message and no session", async () => {
    const client = new TestClient();
    const response = await client.signIn(ownerEmail, "not the right password at all");
    expect(response.status).toBe(401);
    expect(response.text).toContain("The e-mail address or password is not right.");
    expect([...client.cookies.keys()].some((name) => name.includes("session"))).toBe(false);
  });

  test("An unknown e-mail gets the same answer as a wrong password", async () => {
    const client = new TestClient();
    const response = await client.signIn("nobody-here@test.example", "whatever password 123");
    expect(response.status).toBe(401);
    expect(response.text).toContain("The e-mail address or password is not right.");
  });

  // OWASP ASVS 4.0.3 3.4.1 Secure, 3.4.2 HttpOnly, 3.4.3 SameSite, 3.4.4 __Host- prefix.
  test("The session cookie is HttpOnly, SameSite=Lax, Secure and __Host- prefixed in production", async () => {
    const client = new TestClient();
    const response = await client.signIn(ownerEmail, ownerPassword);
    const cookie = response.setCookies.find((line) => line.includes("session="));
    expect(cookie).toBeDefined();
    expect(cookie).toMatch(/^__Host-sallyport-session=/);
    expect(cookie).toMatch(/;\s*HttpOnly/i);
    expect(cookie).toMatch(/;\s*SameSite=Lax/i);
    expect(cookie).toMatch(/;\s*Secure/i);
    expect(cookie).toMatch(/;\s*Path=\//i);
    expect(cookie).not.toMatch(/Domain=/i);
  });

  // OWASP ASVS 4.0.3 3.2.1: a new session token at authentication.
  test("Signing in again issues a new session id and ends the old one", async () => {
    const client = new TestClient();
    await client.signIn(ownerEmail, ownerPassword);
    const first = client.cookies.get("__Host-sallyport-session");
    const stale = new TestClient();
    stale.cookies.set("__Host-sallyport-session", first!);
    expect((await stale.get("/o/lanternfield/sites")).status).toBe(200);
    await client.signIn(ownerEmail, ownerPassword);
    const second = client.cookies.get("__Host-sallyport-session");
    expect(second).toBeDefined();
    expect(second).not.toBe(first);
    expect((await stale.get("/o/lanternfield/sites")).status).toBe(302);
  });

  test("Signing out ends the session on the server, not only in the browser", async () => {
    const client = new TestClient();
    await client.signIn(ownerEmail, ownerPassword);
    const token = client.cookies.get("__Host-sallyport-session")!;
    const response = await client.post("/logout", {});
    expect(response.status).toBe(302);
    expect(response.location).toBe("/login");
    expect(client.cookies.has("__Host-sallyport-session")).toBe(false);
    const replay = new TestClient();
    replay.cookies.set("__Host-sallyport-session", token);
    const after = await replay.get("/o/lanternfield/sites");
    expect(after.status).toBe(302);
    expect(after.location).toContain("/login?redirectTo=");
  });

  test("Sign out everywhere ends every session of the user", async () => {
    const { client, email } = await signUpNewOrganisation("everywhere");
    const laptop = new TestClient();
    await laptop.signIn(email, "quiet harbour lantern 42");
    expect((await laptop.get("/account")).status).toBe(200);
    await client.post("/logout", { scope: "everywhere" });
    expect((await laptop.get("/account")).status).toBe(302);
  });

  test("Sign-out by GET does nothing (a link on another page cannot sign anyone out)", async () => {
    const client = new TestClient();
    await client.signIn(ownerEmail, ownerPassword);
    await client.get("/logout");
    expect((await client.get("/account")).status).toBe(200);
  });

  test("A protected page without a session redirects to sign-in and back", async () => {
    const client = new TestClient();
    const response = await client.get("/o/lanternfield/sites?x=1");
    expect(response.status).toBe(302);
    expect(response.location).toBe(`/login?redirectTo=${encodeURIComponent("/o/lanternfield/sites?x=1")}`);
  });

  test("After sign-in only same-site paths are followed (no open redirect)", async () => {
    const client = new TestClient();
    const response = await client.post("/login", { email: ownerEmail, password: ownerPassword, redirectTo: "//evil.example/x" });
    expect(response.location).toBe("/");
  });
});
