// The device editor's forms (issue 10, "Forms"): name pickers used by keyboard alone, problems
// in words beside their fields with "did you mean", forms that work without JavaScript, and the
// rule list's ends and compact view.
import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { screenshot, seriousAccessibilityViolations, signUpNewOrganisation, toast } from "./helpers";

/** Invented scenario: a ferry terminal's edge appliance; RFC 5737 outside, RFC 1918 inside. */
function terminalEdge(name: string) {
  return {
    schemaVersion: 1,
    device: { name, timezone: "Europe/Amsterdam" },
    interfaces: [
      { name: "outside", role: "outside", addresses: ["198.51.100.2/24"], listeners: ["https", "ssh"] },
      { name: "inside", role: "inside", addresses: ["10.40.0.1/24"], listeners: ["https", "ssh"] },
    ],
    addresses: [
      { name: "admin-desks", entries: ["10.40.10.0/28"] },
      { name: "noc-net", entries: ["10.40.20.0/24"] },
    ],
    inboundRules: [
      { id: "noc-admin", interface: "inside", sources: ["noc-net"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
      { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
    ],
    accounts: [{ name: "ops-mira", loginSources: ["noc-net"], secondFactor: "totp" }],
  };
}

/**
 * Signs up a new organisation of its own (tests never change the demo's) and imports a fresh
 * device through the import page at a new site; returns the path of its rules section.
 */
async function importDevice(page: Page, name: string): Promise<string> {
  const slug = await signUpNewOrganisation(page, "Ferry terminal", name);
  await page.goto(`/o/${slug}/devices/import`);
  await page.getByLabel("Model document").setInputFiles({ name: `${name}.json`, mimeType: "application/json", buffer: Buffer.from(JSON.stringify(terminalEdge(name))) });
  await page.getByLabel("New site's name").fill("Ferry terminal");
  await page.getByRole("button", { name: "Check the document" }).click();
  // A new device's name is offered for confirmation (it is free, so it is the document's own).
  await expect(page.getByLabel("Name of the new device")).toHaveValue(name);
  await page.getByRole("button", { name: "Import as a new device" }).click();
  await page.waitForURL(/\/devices\/[0-9a-f-]{36}$/);
  await expect(page.getByRole("heading", { name, exact: true })).toBeVisible();
  return `${new URL(page.url()).pathname}/model/rules`;
}

test("An engineer adds an inbound rule with the name pickers using the keyboard only", async ({ page }) => {
  const name = `forms-kbd-${Date.now().toString(36)}`;
  await page.goto(await importDevice(page, name));
  const ruleForm = page.getByRole("form", { name: "Inbound rule" });

  // From the rule id, Tab through the form as a keyboard user does.
  await ruleForm.getByLabel("Rule id").focus();
  await page.keyboard.type("desk-admin");
  await page.keyboard.press("Tab"); // position
  await page.keyboard.type("2");
  await page.keyboard.press("Tab"); // action (allow)
  await page.keyboard.press("Tab"); // interface
  await page.keyboard.press("Tab"); // sources
  const sources = ruleForm.getByRole("combobox", { name: "Sources" });
  await expect(sources).toBeFocused();

  // ↓ opens the list of names grouped by kind (WAI-ARIA APG combobox pattern: Down Arrow opens the listbox).
  await page.keyboard.press("ArrowDown");
  await expect(sources).toHaveAttribute("aria-expanded", "true");
  const list = page.getByRole("listbox");
  await expect(list.getByRole("group", { name: "Address objects" }).getByRole("option", { name: "admin-desks" })).toBeVisible();
  await expect(list.getByRole("group", { name: /Built-in/ }).getByRole("option", { name: "any4" })).toBeVisible();
  await screenshot(page, "40-picker-open");
  // Typing filters; ↓ highlights the first match; Enter chooses it.
  await page.keyboard.type("desk");
  await expect(list.getByRole("option")).toHaveCount(1);
  await page.keyboard.press("ArrowDown");
  await page.keyboard.press("Enter");
  await page.keyboard.press("Escape");
  const chosenSources = ruleForm.getByRole("grid", { name: "Chosen sources" });
  await expect(chosenSources.getByRole("row")).toHaveText(["any×", "admin-desks×"]);
  // Tab reaches the chosen names; Delete removes the focused one (WAI-ARIA APG grid; React Aria TagGroup).
  await page.keyboard.press("Tab");
  await expect(chosenSources.getByRole("row", { name: "any" })).toBeFocused();
  await page.keyboard.press("Delete");
  await expect(chosenSources.getByRole("row")).toHaveText(["admin-desks×"]);

  // Services: a full name and Enter takes it; a name that does not exist stays in the box.
  const services = ruleForm.getByRole("combobox", { name: "Services" });
  await services.focus();
  await page.keyboard.type("ssh");
  await page.keyboard.press("Enter");
  await page.keyboard.type("webadmin");
  await page.keyboard.press("Enter");
  await expect(services).toHaveValue("webadmin");
  // (Ctrl+A in a multi-select list chooses every option, as in any listbox; Shift+Home selects the text.)
  await page.keyboard.press("Shift+Home");
  await page.keyboard.press("Backspace");
  await page.keyboard.type("HTTPS");
  await page.keyboard.press("Enter");
  await expect(services).toHaveValue("");
  await screenshot(page, "41-picker-chosen");
  // As after choosing an option, the list stays open for the next name; Escape closes it.
  await page.keyboard.press("Escape");
  await expect(services).toHaveAttribute("aria-expanded", "false");
  await expect(ruleForm.getByRole("grid", { name: "Chosen services" }).getByRole("row")).toHaveText(["ssh×", "https×"]);

  // With the list closed and the box empty, Enter submits the form, as in any text field.
  await page.keyboard.press("Enter");
  await expect(toast(page)).toContainText("Added inbound rule desk-admin. Saved as revision r2.");
  const rules = page.getByRole("list", { name: "Inbound rules in order" });
  await expect(rules.getByRole("listitem").nth(1)).toHaveAccessibleName("Rule desk-admin at position 2");
  await expect(rules.getByRole("listitem").nth(1)).toContainText("from admin-desks → to any · services ssh, https");

  expect(await seriousAccessibilityViolations(page, undefined, "form[aria-label='Inbound rule']")).toEqual([]);
});

test.describe("Without JavaScript", () => {
  test.use({ javaScriptEnabled: false });

  test("A mistyped name is refused beside its field with the close name, what was typed stays, and the corrected form saves", async ({ page, browserProblems }) => {
    // The refused form answers 400 (DEVELOPERS.md: bad input is a clear 4xx).
    browserProblems.expect(400, /\/model\/rules/);
    const name = `forms-nojs-${Date.now().toString(36)}`;
    await page.goto(await importDevice(page, name));
    const ruleForm = page.getByRole("form", { name: "Inbound rule" });
    // Progressive enhancement: the pickers are text areas, one name per line.
    await ruleForm.getByLabel("Rule id").fill("desk-admin");
    await ruleForm.getByLabel("Position").fill("1");
    await ruleForm.getByLabel("Sources").fill("admin-desk");
    await ruleForm.getByLabel("Services").fill("https\nssh");
    await ruleForm.getByRole("button", { name: "Add rule" }).click();

    // PRODUCT.md §3: an unknown name is refused; the form says so in words under Sources.
    const sources = ruleForm.getByLabel("Sources");
    await expect(ruleForm.getByText("No address object or group is named “admin-desk”. Did you mean “admin-desks”?")).toBeVisible();
    await expect(sources).toHaveAttribute("aria-invalid", "true");
    await expect(sources).toHaveAccessibleDescription(/Did you mean “admin-desks”\?/);
    await expect(page.getByText(/inboundRules\[/)).toHaveCount(0);
    await expect(sources).toHaveValue("admin-desk");
    await expect(ruleForm.getByLabel("Services")).toHaveValue("https\nssh");
    await expect(ruleForm.getByLabel("Rule id")).toHaveValue("desk-admin");
    await screenshot(page, "42-field-words");

    await sources.fill("admin-desks");
    await ruleForm.getByRole("button", { name: "Add rule" }).click();
    await expect(toast(page)).toContainText("Added inbound rule desk-admin. Saved as revision r2.");
  });
});

test("The first rule cannot move up nor the last down; the compact view lists a rule per line and is remembered", async ({ page }) => {
  const name = `forms-list-${Date.now().toString(36)}`;
  await page.goto(await importDevice(page, name));
  await expect(page.getByRole("button", { name: "Move rule noc-admin up" })).toBeDisabled();
  await expect(page.getByRole("button", { name: "Move rule noc-admin down" })).toBeEnabled();
  await expect(page.getByRole("button", { name: "Move rule drop-rest up" })).toBeEnabled();
  await expect(page.getByRole("button", { name: "Move rule drop-rest down" })).toBeDisabled();
  const detailedHeight = (await page.getByRole("listitem", { name: "Rule noc-admin at position 1" }).boundingBox())?.height ?? 0;

  await page.getByRole("button", { name: "Compact" }).click();
  const table = page.getByRole("table", { name: "Inbound rules in order" });
  await expect(table.getByRole("row", { name: "Rule noc-admin at position 1" })).toBeVisible();
  await expect(page.getByRole("button", { name: "Compact" })).toHaveAttribute("aria-pressed", "true");
  const compactHeight = (await table.getByRole("row", { name: "Rule noc-admin at position 1" }).boundingBox())?.height ?? Infinity;
  // One line per rule: well under half the detailed card (common practice, no source: a dense table row is ~32–40 px).
  expect(compactHeight).toBeLessThan(44);
  expect(compactHeight).toBeLessThan(detailedHeight / 2);
  await expect(table.getByRole("button", { name: "Move rule noc-admin up" })).toBeDisabled();
  await expect(table.getByRole("button", { name: "Move rule drop-rest down" })).toBeDisabled();
  await screenshot(page, "43-rules-compact");

  // ↓ on the first rule works from the compact view too.
  await table.getByRole("button", { name: "Move rule noc-admin down" }).click();
  await expect(toast(page)).toContainText("Moved inbound rule noc-admin to position 2");
  await expect(table.getByRole("row", { name: "Rule noc-admin at position 2" })).toBeVisible();

  // Remembered: a new visit opens compact; Detailed switches back.
  await page.reload();
  await expect(page.getByRole("table", { name: "Inbound rules in order" })).toBeVisible();
  await page.getByRole("button", { name: "Detailed" }).click();
  await expect(page.getByRole("list", { name: "Inbound rules in order" })).toBeVisible();
});
