import { beforeAll, describe, expect, test } from "vitest";
import { DEMO_PASSWORDS, TestClient } from "../support/client";

let engineer: TestClient;
let owner: TestClient;

beforeAll(async () => {
  engineer = new TestClient();
  await engineer.signIn(...DEMO_PASSWORDS.engineer);
  owner = new TestClient();
  await owner.signIn(...DEMO_PASSWORDS.owner);
});

describe("Bad input gets a clear 4xx, never a 500", () => {
  test("A body that is not a form is refused with 400", async () => {
    const response = await engineer.request("/o/lanternfield/sites", { method: "POST", body: "{not a form", headers: { "Content-Type": "multipart/form-data; boundary=nothing" } });
    expect(response.status).toBe(400);
    expect(response.text).toContain("not a readable form submission");
  });

  test("Over-long fields are refused with the field's message and the typed values kept", async () => {
    const response = await engineer.post("/o/lanternfield/sites", { intent: "create", name: "x".repeat(5000), customer: "Kept customer", location: "" });
    expect(response.status).toBe(400);
    expect(response.text).toContain("Use at most 100 characters.");
    expect(response.text).toContain("Kept customer");
  });

  test("A missing required field names the field", async () => {
    const response = await engineer.post("/o/lanternfield/sites", { intent: "create", name: "   ", customer: "", location: "" });
    expect(response.status).toBe(400);
    expect(response.text).toContain("Enter the site&#x27;s name.");
  });

  test("An unknown intent is a 400", async () => {
    const response = await engineer.post("/o/lanternfield/sites", { intent: "explode" });
    expect(response.status).toBe(400);
    expect(response.text).toContain("Unknown action");
  });

  test("A malformed identifier is a 400 and an unknown one a 404", async () => {
    expect((await engineer.post("/o/lanternfield/sites", { intent: "delete", siteId: "../../etc" })).status).toBe(400);
    expect((await engineer.post("/o/lanternfield/sites", { intent: "delete", siteId: "00000000-0000-4000-8000-000000000000" })).status).toBe(404);
  });

  test("An invalid role in an invitation is a 400 naming the choices", async () => {
    const response = await owner.post("/o/lanternfield/settings/members", { intent: "invite", email: "someone@test.example", role: "superuser" });
    expect(response.status).toBe(400);
    expect(response.text).toContain("Choose one of: trainee, reviewer, engineer, admin, owner.");
  });

  test("A malformed e-mail on sign-up is a 400 with the typed values kept (password excepted)", async () => {
    const client = new TestClient();
    const response = await client.post("/signup", { name: "Kept Name", email: "not-an-address", organisationName: "Kept Org", password: "quiet harbour lantern 42" });
    expect(response.status).toBe(400);
    expect(response.text).toContain("Enter a valid e-mail address");
    expect(response.text).toContain("Kept Name");
    expect(response.text).not.toContain("quiet harbour lantern 42");
  });

  test("A weak password on sign-up is refused with the reason (NIST SP 800-63B: length, no composition rules)", async () => {
    const client = new TestClient();
    const tooShort = await client.post("/signup", { name: "A", email: "short@test.example", organisationName: "Org A", password: "Tr0ub4dor&3" });
    expect(tooShort.status).toBe(400);
    expect(tooShort.text).toContain("Use at least 15 characters");
    const common = await client.post("/signup", { name: "A", email: "common@test.example", organisationName: "Org A", password: "passwordpassword" });
    expect(common.status).toBe(400);
    expect(common.text).toContain("commonly used");
  });

  test("A state-changing request without this site's Origin is refused (CSRF, OWASP ASVS 4.2.2)", async () => {
    const noOrigin = await engineer.post("/o/lanternfield/sites", { intent: "create", name: "Forged" }, { origin: null });
    expect(noOrigin.status).toBe(403);
    const foreign = await engineer.post("/o/lanternfield/sites", { intent: "create", name: "Forged" }, { origin: "https://attacker.example" });
    expect(foreign.status).toBe(403);
    expect(foreign.text).toContain("did not come from a Sallyport page");
  });

  test("A huge body is refused with 413 before it is read", async () => {
    const response = await engineer.request("/o/lanternfield/sites", { method: "POST", body: new URLSearchParams({ intent: "create", name: "x".repeat(3 * 1024 * 1024) }) });
    expect(response.status).toBe(413);
  });

  test("A body without a declared length (chunked) is refused with 411", async () => {
    const stream = new ReadableStream({
      start(controller) {
        controller.enqueue(new TextEncoder().encode("intent=create&name=chunked"));
        controller.close();
      },
    });
    const response = await engineer.request("/o/lanternfield/sites", { method: "POST", body: stream, headers: { "Content-Type": "application/x-www-form-urlencoded" }, duplex: "half" } as RequestInit);
    expect(response.status).toBe(411);
  });

  test("Unknown pages are 404 and the security headers are on every response", async () => {
    const response = await new TestClient().get("/no/such/page");
    expect(response.status).toBe(404);
    const csp = response.headers.get("Content-Security-Policy") ?? "";
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]+'/);
    expect(response.headers.get("X-Content-Type-Options")).toBe("nosniff");
    expect(response.headers.get("Referrer-Policy")).toBe("strict-origin-when-cross-origin");
  });

  test("Every inline script carries the response's CSP nonce", async () => {
    const response = await new TestClient().get("/login");
    const nonce = response.headers.get("Content-Security-Policy")?.match(/'nonce-([^']+)'/)?.[1];
    expect(nonce).toBeDefined();
    const scripts = [...response.text.matchAll(/<script\b([^>]*)>/g)].map((match) => match[1]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const attributes of scripts) expect(attributes).toContain(`nonce="${nonce}"`);
  });

  test("Every font the stylesheet names is a file of this site, which the page's font-src 'self' allows", async () => {
    const client = new TestClient();
    const page = await client.get("/login");
    expect(page.headers.get("Content-Security-Policy")).toContain("font-src 'self'");
    const stylesheets = [...page.text.matchAll(/<link[^>]+rel="stylesheet"[^>]+href="([^"]+)"/g)].map((match) => match[1]);
    expect(stylesheets.length).toBeGreaterThan(0);
    for (const href of stylesheets) {
      const css = (await client.get(href)).text;
      const fonts = [...css.matchAll(/url\(([^)]+\.woff2?|data:font[^)]*)\)/g)].map((match) => match[1]);
      expect(fonts.length).toBeGreaterThan(0);
      // A data: URL would be refused by font-src 'self' and logged as an error on every page.
      for (const font of fonts) expect(font.slice(0, 40)).toMatch(/^\/assets\//);
    }
  });
});
