import { expect, test } from "./fixtures";
import { hydrated, screenshot, toast } from "./helpers";
import { TEAM_PASSWORD } from "./team";

// The REST API as a person meets it in the browser: a personal token made on the account page
// (its secret shown once, then only its name and first characters), the token calling the API,
// and the API reference page drawn from the OpenAPI document. docs/decisions/014-rest-api.md.

test("A member creates a personal token on the account page; it is shown once, calls the API, and stops working when revoked", async ({ page, playwright, baseURL, browserProblems }) => {
  // The first try has no name: refused beside the field (400).
  browserProblems.expect(400, /\/account\.data$/);
  const stamp = Date.now().toString(36);
  const setup = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL ?? "" } });
  const signedUp = await setup.post("/signup", { form: { name: "Ada Pierce", email: `token.${stamp}@test.example`, organisationName: `Pierhead tokens ${stamp}`, password: TEAM_PASSWORD }, maxRedirects: 0 });
  expect(signedUp.status()).toBe(302);
  const slug = (signedUp.headers()["location"] ?? "").replace(/^\/o\//, "");
  await page.context().addCookies((await setup.storageState()).cookies);
  await setup.dispose();

  await page.goto(`/o/${slug}/account`);
  await hydrated(page);
  const form = page.getByRole("form", { name: "Create an API token" });
  await form.getByLabel("Scope").selectOption("write");
  await form.getByRole("button", { name: "Create token" }).click();
  await expect(form.getByText("Name the token after where it is used")).toBeVisible();
  // What was chosen stays chosen.
  await expect(form.getByLabel("Scope")).toHaveValue("write");

  await form.getByLabel("Name").fill("nightly exposure check");
  await form.getByLabel("Expires in").selectOption("30");
  await form.getByRole("button", { name: "Create token" }).click();
  const shown = page.getByTestId("new-token");
  await expect(shown).toContainText("Your new token “nightly exposure check”");
  await expect(shown).toContainText("shown only this once");
  const secret = await shown.getByLabel("The new token").inputValue();
  expect(secret).toMatch(/^sallyport_p_[A-Za-z0-9_-]{43}$/);
  await screenshot(page, "60-api-token-shown-once");

  // The token calls the API as this member (RFC 6750 §2.1: the bearer token in the Authorization header).
  const api = await playwright.request.newContext({ baseURL });
  const who = await api.get("/api/v1/token", { headers: { Authorization: `Bearer ${secret}` } });
  expect(who.status()).toBe(200);
  expect(await who.json()).toMatchObject({ name: "nightly exposure check", kind: "personal", scope: "write", role: "owner" });

  // Shown once: after a reload the page lists the token by name and its first characters only.
  await page.reload();
  await hydrated(page);
  await expect(page.getByTestId("new-token")).toHaveCount(0);
  expect(await page.content()).not.toContain(secret);
  const row = page.getByRole("row").filter({ hasText: "nightly exposure check" });
  await expect(row).toContainText(secret.slice(0, 16));
  await expect(row).toContainText("Read and write");
  await expect(row).toContainText("Active");

  await row.getByRole("button", { name: "Revoke nightly exposure check" }).click();
  await expect(toast(page)).toContainText("is revoked");
  await expect(page.getByRole("row").filter({ hasText: "nightly exposure check" })).toContainText("Revoked");
  const refused = await api.get("/api/v1/token", { headers: { Authorization: `Bearer ${secret}` } });
  expect(refused.status()).toBe(401);
  expect(refused.headers()["content-type"]).toBe("application/problem+json");
  await api.dispose();
});

test("The API reference page shows every operation of the OpenAPI document, at a laptop's and a phone's width", async ({ page, request }) => {
  const openapi = (await (await request.get("/api/v1/openapi.json")).json()) as { paths: Record<string, Record<string, { summary: string; operationId: string }>> };
  await page.goto("/docs/api");
  await hydrated(page);
  await expect(page.getByRole("heading", { level: 1 })).toContainText("Sallyport API");
  const operations = Object.entries(openapi.paths).flatMap(([path, item]) => Object.entries(item).map(([method, operation]) => ({ path, method, ...operation })));
  expect(operations.length).toBeGreaterThan(10);
  for (const operation of operations) {
    const card = page.locator(`[id="${operation.operationId.toLowerCase()}"]`);
    await expect(card.getByRole("heading", { level: 3 })).toContainText(operation.path);
    await expect(card.getByRole("heading", { level: 3 })).toContainText(operation.method.toUpperCase());
    await expect(card).toContainText(operation.summary);
  }
  // Problem types are anchored where a problem's `type` points (RFC 9457 §3.1.1).
  await expect(page.locator("#problem-rate-limited")).toContainText("429");
  await page.getByRole("navigation", { name: "Contents" }).getByRole("link", { name: "Trace a probe" }).click();
  await expect(page).toHaveURL(/#trace$/);
  await screenshot(page, "61-api-reference");

  await page.setViewportSize({ width: 390, height: 844 });
  await page.emulateMedia({ colorScheme: "dark" });
  await page.goto("/docs/api#createdevice");
  await hydrated(page);
  const sideways = await page.evaluate(() => (document.scrollingElement ?? document.documentElement).scrollWidth - window.innerWidth);
  expect(sideways).toBe(0);
  await screenshot(page, "62-api-reference-phone-dark");
});
