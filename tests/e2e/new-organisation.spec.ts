import path from "node:path";
import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { screenshot, toast } from "./helpers";

// A new user's first hour: from sign-up to a traced device, every empty page offering the next
// step (docs/decisions/008: the first site is named where the first device is made).

const PASSWORD = "lantern over the quay 9";
const MODEL_FILE = path.resolve("tests/fixtures/models/harbourline-edge.json");

async function signUp(page: Page, label: string): Promise<string> {
  const stamp = Date.now().toString(36);
  await page.goto("/signup");
  await page.getByLabel("Your name").fill("Ines Quayle");
  await page.getByLabel("Work e-mail").fill(`ines.${label}.${stamp}@test.example`);
  await page.getByLabel("Organisation").fill(`Quayside ${label} ${stamp}`);
  await page.getByLabel("Password").fill(PASSWORD);
  await page.getByRole("button", { name: "Create organisation" }).click();
  await page.waitForURL(/\/o\/[a-z0-9-]+\/devices$/);
  return new URL(page.url()).pathname.split("/")[2];
}

test("A new owner goes from sign-up to a first traced device without a dead end", async ({ page, browserProblems }) => {
  await signUp(page, "first-hour");

  // The empty fleet leads on.
  await expect(page.getByRole("heading", { name: "No devices yet" })).toBeVisible();
  await screenshot(page, "40-new-organisation-fleet");
  await page.getByRole("link", { name: "Add the first device" }).click();

  // No site yet: New device asks for the first one's name right there, and says so beside the field when it is missing.
  browserProblems.expect(400, /\/devices\/new\.data$/);
  await page.getByLabel("Device name").fill("quay-gw-01");
  await page.getByRole("button", { name: "Create device" }).click();
  await expect(page.getByText("Name the new site, e.g. the customer's office or plant.")).toBeVisible();
  await expect(page.getByText(/Invalid input/)).toHaveCount(0);
  await page.getByLabel("Site").fill("Quayside office");
  await page.getByLabel("Time zone").fill("Europe/Lisbon");
  await screenshot(page, "41-new-device-first-site");
  await page.getByRole("button", { name: "Create device" }).click();
  await expect(page.getByRole("heading", { name: "quay-gw-01" })).toBeVisible();
  await expect(toast(page)).toContainText("Device quay-gw-01 created at the new site Quayside office. Add its interfaces next.");

  // Before any interface, the trace page points to the interfaces editor rather than an empty form.
  const deviceNavigation = page.getByRole("navigation", { name: "Device" });
  await deviceNavigation.getByRole("link", { name: "Trace" }).click();
  await expect(page.getByRole("heading", { name: "This device has no interfaces yet" })).toBeVisible();
  await page.getByRole("link", { name: "Add the first interface" }).click();
  await expect(page).toHaveURL(/\/model\/interfaces$/);

  // One interface with an address (RFC 5737) and HTTPS listening.
  const interfaceForm = page.getByRole("form", { name: "Interface" });
  await interfaceForm.getByLabel("Name").fill("outside");
  await interfaceForm.getByLabel("Addresses").fill("203.0.113.10/24");
  await interfaceForm.getByLabel("https").check();
  await interfaceForm.getByRole("button", { name: "Add interface" }).click();
  await expect(toast(page)).toContainText("Added interface outside. Saved as revision r2.");

  // The first trace: a probe from the internet reaches the login layer, where no account may log in
  // (there are none yet) — PRODUCT.md §3, layer 5: no eligible account → login-denied.
  await deviceNavigation.getByRole("link", { name: "Trace" }).click();
  await page.getByLabel("From (source)").fill("203.0.113.50");
  await expect(page).toHaveURL(/from=203\.0\.113\.50/);
  const verdicts = page.getByRole("list", { name: "Layer verdicts" });
  // All six layers are listed; the fifth decides and the sixth is never reached (issue 12).
  await expect(verdicts.getByRole("listitem")).toHaveCount(6);
  await expect(verdicts.getByRole("listitem").nth(4)).toContainText("Login sources");
  await expect(verdicts.getByRole("listitem").nth(4)).toContainText("decides: login refused");
  await expect(verdicts.getByRole("listitem").last()).toContainText("not reached");
  await expect(page.getByLabel("Outcome", { exact: true })).toBeVisible();
  await screenshot(page, "42-first-trace");

  // The site exists now, on the sites page, with its device.
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Sites" }).click();
  await expect(page.getByRole("row").filter({ hasText: "Quayside office" })).toContainText("1");
});

test("Importing into a new organisation names the first site, says when no file was chosen, and offers a rename for a taken name", async ({ page, browserProblems }) => {
  await signUp(page, "import");
  await page.getByRole("link", { name: "Import a model document" }).click();

  // Nothing chosen: said as such, beside the file field.
  browserProblems.expect(400, /\/devices\/import\.data$/);
  await page.getByRole("button", { name: "Check the document" }).click();
  await expect(page.getByText("No file chosen: choose a model document (.json) to upload.")).toBeVisible();
  await expect(page.getByText("The chosen file is empty.")).toHaveCount(0);

  // No site yet: "Import as" offers a new site, named right here.
  await page.getByLabel("Model document").setInputFiles(MODEL_FILE);
  await expect(page.getByLabel("Import as")).toHaveValue("site:new");
  await page.getByLabel("New site's name").fill("Harbour office");
  await page.getByRole("button", { name: "Check the document" }).click();
  await expect(page.getByRole("heading", { name: "Preview: hl-edge-1" })).toBeVisible();
  await expect(page.getByLabel("Name of the new device")).toHaveValue("hl-edge-1");
  await page.getByRole("button", { name: "Import as a new device" }).click();
  await expect(toast(page)).toContainText("Device hl-edge-1 imported.");

  // The same document again, as a new device: the preview says the name is taken and offers a free one to edit.
  await page.goto(page.url().replace(/\/devices\/.*$/, "/devices/import"));
  await page.getByLabel("Model document").setInputFiles(MODEL_FILE);
  await page.getByLabel("Import as").selectOption({ label: "New device at Harbour office" });
  await page.getByRole("button", { name: "Check the document" }).click();
  const rename = page.getByLabel("Name of the new device");
  await expect(rename).toHaveValue("hl-edge-1-2");
  await expect(page.getByText("A device named hl-edge-1 exists already")).toBeVisible();
  await expect(page.getByRole("button", { name: /as a new revision of hl-edge-1/ })).toBeVisible();
  await screenshot(page, "43-import-rename");
  await rename.fill("hl-edge-lab");
  await page.getByRole("button", { name: "Import as a new device" }).click();
  await expect(toast(page)).toContainText("Device hl-edge-lab imported.");
  await expect(page.getByRole("heading", { name: "hl-edge-lab" })).toBeVisible();
});
