import { readFileSync } from "node:fs";
import type { Browser, Page } from "@playwright/test";
import { parseCsv } from "#server/formats/csv";
import { expect, test, type BrowserProblems } from "./fixtures";
import { hydrated, screenshot } from "./helpers";
import { harbourlineObservations } from "./observations";
import { createTeam, type Team } from "./team";

// Fleet reach from the app shell's search box, its filters and its CSV; a field check uploaded
// on a device's page; a CIDR block on the trace page. The team's own organisation and device
// (tests/e2e/team.ts), never the demo's.

let team: Team;
test.beforeAll(async ({ playwright }, testInfo) => {
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  team = await createTeam(playwright.request, baseURL, "fleet");
});

/** A page of the team's engineer, watched like the default one. */
async function engineerPage(browser: Browser, browserProblems: BrowserProblems): Promise<Page> {
  const context = await browser.newContext({ storageState: team.members.engineer.storageState });
  browserProblems.watch(context);
  return context.newPage();
}

/** Full-page screenshots at a phone's 390 px and a laptop's 1366 px, light and dark; none scrolls sideways. */
async function screenshotsAtBothSizes(page: Page, name: string): Promise<void> {
  for (const [width, height] of [
    [390, 844],
    [1366, 860],
  ] as const) {
    await page.setViewportSize({ width, height });
    for (const scheme of ["light", "dark"] as const) {
      await page.emulateMedia({ colorScheme: scheme });
      expect(await page.evaluate(() => (document.scrollingElement ?? document.documentElement).scrollWidth - window.innerWidth), `${name} at ${width} px, ${scheme}`).toBeLessThanOrEqual(0);
      await screenshot(page, `${name}-${width}-${scheme}`);
    }
  }
  await page.setViewportSize({ width: 1366, height: 860 });
  await page.emulateMedia({ colorScheme: "light" });
}

test("An engineer types an address in the shell's search, lands on fleet reach, filters to wan and exports the CSV", async ({ browser, browserProblems }) => {
  const page = await engineerPage(browser, browserProblems);
  await page.goto(`/o/${team.slug}/devices`);
  await hydrated(page);
  const search = page.getByRole("search").getByRole("searchbox", { name: "Find in the fleet" });
  await search.fill("198.51.100.20");
  await search.press("Enter");
  await page.waitForURL(/\/reach\?from=198\.51\.100\.20$/);
  await expect(page.getByRole("heading", { name: "Fleet reach", level: 1 })).toBeVisible();
  // harbourline-edge: the NOC address logs in with a second factor on outside (rule r-noc).
  const table = page.getByRole("table", { name: /Outcome for each device, interface and service/ });
  await expect(table.getByRole("row").nth(1)).toContainText("Login with second factor");
  await expect(table).toContainText("(management)");
  await expect(page.getByText(/198\.51\.100\.20 gets an answer from 1 of 1 device/)).toBeVisible();
  await screenshotsAtBothSizes(page, "50-fleet-reach");

  await page.getByRole("group", { name: "Interface roles" }).getByLabel("wan").check();
  await page.getByRole("button", { name: "Show fleet reach" }).click();
  await page.waitForURL(/role=wan/);
  const rows = table.getByRole("row");
  await expect(rows.nth(1)).toContainText("(wan)");
  for (const row of await rows.all()) expect(await row.textContent()).not.toMatch(/\((lan|management)\)/);
  await expect(search).toHaveValue("198.51.100.20");

  const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download CSV" }).click()]);
  expect(download.suggestedFilename()).toMatch(/fleet-reach-198_51_100_20\.csv$/);
  const [header, ...lines] = parseCsv(readFileSync(await download.path(), "utf8"));
  expect(header.slice(0, 8)).toEqual(["device", "device_id", "site", "revision", "interface", "role", "to", "service"]);
  expect(lines.length).toBeGreaterThan(0);
  expect(new Set(lines.map((line) => line[header.indexOf("role")]))).toEqual(new Set(["wan"]));
  expect(lines.map((line) => line[header.indexOf("outcome")])).toContain("login-mfa");
  await screenshotsAtBothSizes(page, "51-fleet-reach-wan");
});

test("A CIDR block in the search box is answered per group of sources, and a block wider than IPv4 is refused in words", async ({ browser, browserProblems }) => {
  browserProblems.expect(400, /\/reach(\.data)?\?from=198\.51\.100\.0%2F33/);
  const page = await engineerPage(browser, browserProblems);
  await page.goto(`/o/${team.slug}/devices`);
  await hydrated(page);
  const search = page.getByRole("search").getByRole("searchbox");
  await search.fill("198.51.100.0/24");
  await search.press("Enter");
  await page.waitForURL(/\/reach\?from=198\.51\.100\.0%2F24$/);
  const table = page.getByRole("table", { name: /Outcome for each device, interface and service/ });
  await expect(table.getByRole("columnheader", { name: "Sources" })).toBeVisible();
  // The NOC's /26 without the blocklisted 198.51.100.7: 63 addresses log in with a second factor (RFC 4632 §3.1: a /26 holds 64).
  await expect(table.getByRole("row").nth(1)).toContainText("63 addresses");
  await screenshotsAtBothSizes(page, "52-fleet-reach-block");

  await search.fill("198.51.100.0/33");
  await search.press("Enter");
  await expect(page.getByText('"198.51.100.0/33" is wider than IPv4 allows: a prefix length is /0 to /32')).toBeVisible();
  // What was typed stays in the form, to be corrected.
  await expect(page.getByLabel("Source address or CIDR block")).toHaveValue("198.51.100.0/33");
});

test("An engineer uploads a field check and reads its agreements, the difference with its likely reason and the bad row", async ({ browser, browserProblems }) => {
  // The refused file at the end answers 400 by design.
  browserProblems.expect(400, /\/field-checks(\.data)?(\?.*)?$/);
  const page = await engineerPage(browser, browserProblems);
  await page.goto(`${team.device.path}/field-checks`);
  await hydrated(page);
  await page.getByLabel("Field-check file").setInputFiles({ name: "pier-tests.csv", mimeType: "text/csv", buffer: Buffer.from(harbourlineObservations(new Date().toISOString())) });
  await page.getByRole("button", { name: "Check against the model" }).click();
  await page.waitForURL(/\/field-checks\/[0-9a-f-]{36}$/);
  await expect(page.getByRole("heading", { name: "Differences (1)" })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Not checked (1)" })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Agreements (3)" })).toBeVisible();
  await expect(page.getByText("Device differs from its configuration")).toBeVisible();
  await expect(page.getByText(/observed: "maybe" is not one of/)).toBeVisible();
  await screenshotsAtBothSizes(page, "53-field-check");

  // The device's overview and the fleet table show the last check's agreement.
  await page.goto(team.device.path);
  await hydrated(page);
  await expect(page.getByRole("status").filter({ hasText: "Last field check" })).toContainText("75% (3 of 4)");
  await page.goto(`/o/${team.slug}/devices`);
  await expect(page.getByRole("link", { name: `Last field check of ${team.device.name}` })).toContainText("75% (3 of 4)");

  // A file that is not one is refused as a whole, the page kept.
  await page.goto(`${team.device.path}/field-checks`);
  await hydrated(page);
  await page.getByLabel("Field-check file").setInputFiles({ name: "wrong.csv", mimeType: "text/csv", buffer: Buffer.from("time,source\n1,2\n") });
  await page.getByRole("button", { name: "Check against the model" }).click();
  await expect(page.getByText(/not a column of a field-check file/)).toBeVisible();
});

test("A CIDR block on the trace page lists its groups, and choosing one walks its trace", async ({ browser, browserProblems }) => {
  const page = await engineerPage(browser, browserProblems);
  await page.goto(`${team.device.path}/analysis?from=198.51.100.0/24&interface=outside&service=https`);
  await hydrated(page);
  const groups = page.getByRole("list", { name: "Groups of sources" });
  const group = groups.locator(":scope > li");
  // harbourline-edge: the NOC's /26 but one address, the blocklisted address, and the rest of the /24.
  await expect(group).toHaveCount(3);
  await group.nth(2).getByRole("button", { name: "Walk through" }).click();
  await expect(group.nth(2).getByRole("button", { name: "Walking through" })).toBeVisible();
  await expect(page.getByLabel("Layer verdicts")).toContainText('rule "r-drop" (deny) is the first match');
  await screenshotsAtBothSizes(page, "54-trace-block");
});
