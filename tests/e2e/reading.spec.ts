import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { screenshot, toast, useSignedInSession } from "./helpers";

/** Console errors of the page (a hydration mismatch in a formatted time or count shows here). */
function consoleErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on("console", (message) => {
    if (message.type() === "error") errors.push(message.text());
  });
  page.on("pageerror", (error) => errors.push(error.message));
  return errors;
}

/** Signs up a new user with an organisation of their own; returns the organisation's slug. */
async function signUp(page: Page, name: string, organisation: string): Promise<string> {
  const stamp = Date.now().toString(36);
  await page.goto("/signup");
  await page.getByLabel("Your name").fill(name);
  await page.getByLabel("Work e-mail").fill(`${name.split(" ")[0].toLowerCase()}-${stamp}@test.example`);
  await page.getByLabel("Organisation").fill(`${organisation} ${stamp}`);
  await page.getByLabel("Password", { exact: true }).fill("quiet harbour lantern 42");
  await page.getByRole("button", { name: "Create organisation" }).click();
  await page.waitForURL(/\/o\//);
  return new URL(page.url()).pathname.split("/")[2];
}

test("A new user changes their name on the account page, inside the app shell", async ({ page, browserProblems }) => {
  // A refused change answers 400 (bad input is a clear 4xx).
  browserProblems.expect(400, /\/account/);
  const errors = consoleErrors(page);
  await signUp(page, "Ada Pierhead", "Pierhead Survey");

  await page.getByLabel("Account menu for Ada Pierhead").click();
  await page.getByRole("link", { name: "Your account" }).click();
  await expect(page).toHaveURL(/\/o\/[a-z0-9-]+\/account$/);
  await expect(page.getByRole("heading", { name: "Your account" })).toBeVisible();
  await expect(page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Devices" })).toBeVisible();

  const nameForm = page.getByRole("form", { name: "Change your name" });
  await nameForm.getByLabel("Name").fill("Ada Quayside");
  await nameForm.getByRole("button", { name: "Save name" }).click();
  await expect(toast(page)).toContainText("Your name is now Ada Quayside.");
  await expect(page.getByText("Changed their name from “Ada Pierhead” to “Ada Quayside”")).toBeVisible();

  const passwordForm = page.getByRole("form", { name: "Change your password" });
  await passwordForm.getByLabel("Current password").fill("not the password at all");
  await passwordForm.getByLabel("New password").fill("tide tables and rope knots");
  await passwordForm.getByRole("button", { name: "Change password" }).click();
  await expect(passwordForm.getByText("That is not your current password.")).toBeVisible();
  await screenshot(page, "40-account");
  // The refused form answers 400 by design (server/http/form.server.ts); nothing else may log an error.
  expect(errors.filter((error) => !error.includes("responded with a status of 400"))).toEqual([]);
});

test("An owner reads the audit log in words, filters it and opens an entry's details", async ({ page }) => {
  const errors = consoleErrors(page);
  const slug = await signUp(page, "Bo Ledger", "Ledger Marine");
  await page.goto(`/o/${slug}/sites`);
  await page.getByLabel("Site name").fill("Slipway");
  await page.getByLabel("Location").fill("North quay");
  await page.getByRole("button", { name: "Add site" }).click();
  await expect(toast(page)).toBeVisible();

  await page.goto(`/o/${slug}/settings/audit`);
  const table = page.getByRole("table", { name: /Audit log entries/ });
  await expect(table).toContainText("Added site “Slipway” at North quay");
  await expect(table).toContainText("Bo Ledger");
  await page.getByLabel("What").selectOption({ label: "Site added" });
  await page.getByRole("button", { name: "Apply" }).click();
  await expect(page).toHaveURL(/action=site\.created/);
  const rows = table.locator("tbody tr");
  await expect(rows).toHaveCount(1);
  await rows.first().getByText("Details").click();
  await expect(rows.first().getByText("site.created", { exact: true })).toBeVisible();
  await expect(rows.first().getByText("North quay", { exact: true })).toBeVisible();
  await screenshot(page, "41-audit-log");
  expect(errors).toEqual([]);
});

test("The device overview's times, counts and single caution render the same on the server and in the browser", async ({ page }) => {
  const errors = consoleErrors(page);
  await useSignedInSession(page, "priya.nandakumar@lanternfield.example", "demo-password-engineer");
  await page.goto("/o/lanternfield/devices");
  await page.getByRole("link", { name: "clf-gw-02" }).click();
  await expect(page.getByText(/on (Mon|Tue|Wed|Thu|Fri|Sat|Sun) \d{1,2} \w{3} \d{4}, \d{2}:\d{2} America\/Chicago/)).toBeVisible();
  await expect(page.getByText("3.70 billion non-private sources").first()).toBeVisible();
  await expect(page.getByText("The simulation models the configuration, not the device")).toHaveCount(1);
  await screenshot(page, "42-device-overview-reading");
  expect(errors).toEqual([]);
});
