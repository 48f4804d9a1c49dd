import { mkdirSync } from "node:fs";
import path from "node:path";
import AxeBuilder from "@axe-core/playwright";
import { expect, request, test, type Locator, type Page } from "@playwright/test";
import { makeOncePerRun, sharedFolder } from "./run-once";

const directory = path.resolve("tests/artifacts/screenshots");

/** Saves a full-page screenshot kept as a test artifact (tests/artifacts/screenshots). */
export async function screenshot(page: Page, name: string): Promise<void> {
  mkdirSync(directory, { recursive: true });
  await page.screenshot({ path: path.join(directory, `${name}.png`), fullPage: true });
}

/** Signs in through the form and waits until the app has taken the user in. */
export async function signIn(page: Page, email: string, password: string): Promise<void> {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/login"));
}

/**
 * Signs the page's browser in as a demo member without the form, for a test that is not about
 * signing in: the sign-in form's own post is made once per run (by whichever worker asks first)
 * and every test that asks for the member gets that session's cookie. Tests of signing in itself
 * use `signIn`.
 */
export async function useSignedInSession(page: Page, email: string, password: string): Promise<void> {
  const { project } = test.info();
  const baseURL = project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  const folder = sharedFolder(project.outputDir, "sessions");
  const cookies = await makeOncePerRun(folder, email.replace(/[^a-z0-9]+/gi, "-"), async () => {
    // Posts carry the site's own Origin, as a browser's would (the same-origin guard asks for it).
    const client = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
    const response = await client.post("/login", { form: { email, password }, maxRedirects: 0 });
    if (response.status() !== 302 || response.headers()["location"]?.startsWith("/login")) throw new Error(`signing in ${email}: expected a redirect into the app, got ${response.status()} ${response.headers()["location"] ?? ""}`);
    const { cookies: made } = await client.storageState();
    await client.dispose();
    return made;
  });
  await page.context().addCookies(cookies);
}

/** The one-time message shown after an action. */
export function toast(page: Page) {
  return page.getByTestId("toast");
}

/** Chooses names in a name picker with the keyboard: each typed in full, then Enter. */
export async function chooseNames(scope: Locator, label: string, names: readonly string[]): Promise<void> {
  const input = scope.getByRole("combobox", { name: label });
  await input.focus();
  for (const name of names) {
    await input.pressSequentially(name);
    await input.press("Enter");
    await expect(input).toHaveValue("");
  }
  // Escape closes the list (while it is open, the rest of the page is hidden from assistive technology).
  await input.press("Escape");
  const chosen = scope.getByRole("grid", { name: `Chosen ${label.toLowerCase()}` });
  for (const name of names) await expect(chosen.getByRole("row", { name })).toBeVisible();
}

/**
 * axe's serious and critical violations on the page as it is laid out now (WCAG 2.1 A and AA
 * rules, or only `rules` when given), each as "rule: help (first few elements)". Minor and
 * moderate ones are left to review.
 */
export async function seriousAccessibilityViolations(page: Page, rules?: string[], within?: string): Promise<string[]> {
  // Legacy mode runs axe in the page itself; the default cross-frame mode opens a blank page for
  // every run to merge frame results, which doubles the time, and the app has no frames.
  const whole = new AxeBuilder({ page }).setLegacyMode();
  const builder = within ? whole.include(within) : whole;
  const results = await (rules ? builder.withRules(rules) : builder.withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"])).analyze();
  return results.violations
    .filter((violation) => violation.impact === "serious" || violation.impact === "critical")
    .map((violation) => `${violation.id}: ${violation.help} (${violation.nodes.map((node) => node.target.join(" ")).slice(0, 3).join("; ")})`);
}

/** Waits until the page's scripts have hydrated it (the root layout marks <html>). */
export async function hydrated(page: Page): Promise<void> {
  await page.locator("html[data-hydrated]").waitFor({ state: "attached" });
}

/** Signs up a new organisation with its owner (an invented person; e-mail in the reserved test.example domain); returns its slug. */
export async function signUpNewOrganisation(page: Page, organisation: string, label: string): Promise<string> {
  const stamp = `${label}-${Date.now().toString(36)}`;
  await page.goto("/signup");
  await page.getByLabel("Your name").fill("Ines Quayle");
  await page.getByLabel("Work e-mail").fill(`ines.${stamp}@test.example`);
  await page.getByLabel("Organisation").fill(`${organisation} ${stamp}`);
  await page.getByLabel("Password", { exact: true }).fill("quiet harbour lantern 42");
  await page.getByRole("button", { name: "Create organisation" }).click();
  await page.waitForURL(/\/o\/[a-z0-9-]+\/devices$/);
  return new URL(page.url()).pathname.split("/")[2];
}

/** The local outbox's address with its secret (docs/decisions/013): the page swaps it for a cookie and shows the mail. */
export function outboxPath(): string {
  return `/outbox?key=${encodeURIComponent(process.env.E2E_OUTBOX_SECRET ?? "")}`;
}
