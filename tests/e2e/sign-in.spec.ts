import { expect, test } from "./fixtures";
import { screenshot, toast } from "./helpers";

test("A demo engineer signs in, finds the app shell, and signs out", async ({ page, browserProblems }) => {
  // The wrong password below is refused with a 401.
  browserProblems.expect(401, /\/login\.data\?/);
  await page.goto("/o/lanternfield/sites");
  await expect(page).toHaveURL(/\/login\?redirectTo=/);
  await screenshot(page, "01-sign-in");

  await page.getByLabel("E-mail").fill("priya.nandakumar@lanternfield.example");
  await page.getByLabel("Password").fill("wrong password for the demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert")).toContainText("The e-mail address or password is not right.");
  // What was typed stays in the form.
  await expect(page.getByLabel("E-mail")).toHaveValue("priya.nandakumar@lanternfield.example");

  await page.getByLabel("Password").fill("demo-password-engineer");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/\/o\/lanternfield\/sites$/);
  await expect(page.getByRole("heading", { name: "Sites" })).toBeVisible();
  await expect(page.getByRole("cell", { name: "Brightwater Clinic — main campus", exact: true })).toBeVisible();
  const navigation = page.getByRole("navigation", { name: "Main" });
  for (const item of ["Devices", "Sites", "Findings", "Training", "Settings"]) await expect(navigation.getByRole("link", { name: item })).toBeVisible();
  await screenshot(page, "02-sites");

  // The Training page is the training home now (issue 12), pointing to the Trace tab's walkthrough too.
  await navigation.getByRole("link", { name: "Training" }).click();
  await expect(page.getByRole("heading", { name: "Training", level: 1 })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Walkthrough on a device" })).toBeVisible();
  await screenshot(page, "03-training");

  await page.getByLabel("Account menu for Priya Nandakumar").click();
  await screenshot(page, "04-user-menu");
  await page.getByRole("button", { name: "Sign out" }).click();
  await expect(page).toHaveURL(/\/login$/);
  await expect(toast(page)).toContainText("Signed out.");
  await page.goto("/o/lanternfield/sites");
  await expect(page).toHaveURL(/\/login\?redirectTo=/);
});
