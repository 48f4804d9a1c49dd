import { readFileSync } from "node:fs";
import { expect, test } from "./fixtures";
import { chooseNames, screenshot, toast, useSignedInSession } from "./helpers";
import { createTeam } from "./team";

// In a team's own organisation (tests/e2e/team.ts), so the demo's fleet stays as seeded.
test("An engineer models a new device, reorders its rules, and round-trips it through export and import", async ({ browser, playwright, browserProblems }, testInfo) => {
  // Two submissions below are refused on purpose (a bad name, a rule without services): 400s.
  browserProblems.expect(400, /\/devices\/new\.data$/);
  browserProblems.expect(400, /\/model\/rules\.data$/);
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  const team = await createTeam(playwright.request, baseURL, "workspace");
  const context = await browser.newContext({ storageState: team.members.engineer.storageState });
  browserProblems.watch(context);
  const page = await context.newPage();
  const deviceName = `e2e-edge-${Date.now().toString(36)}`;
  await page.goto(`/o/${team.slug}/devices`);
  await expect(page.getByRole("heading", { name: "Devices" })).toBeVisible();
  await screenshot(page, "20-fleet");

  // Create the device.
  await page.getByRole("link", { name: "New device" }).click();
  await page.getByLabel("Device name").fill("bad name with spaces");
  await page.getByLabel("Site").selectOption({ label: "Pier office" });
  await page.getByRole("button", { name: "Create device" }).click();
  await expect(page.getByText("Use 1–63 characters")).toBeVisible();
  await expect(page.getByLabel("Site")).toHaveValue(/[0-9a-f-]{36}/);
  await page.getByLabel("Device name").fill(deviceName);
  await page.getByLabel("Time zone").fill("Europe/Amsterdam");
  await page.getByRole("button", { name: "Create device" }).click();
  await expect(page.getByRole("heading", { name: deviceName })).toBeVisible();
  await expect(toast(page)).toContainText(`Device ${deviceName} created`);

  // A wan interface named outside, with https and ssh listening (switches grouped by kind).
  const interfaceForm = page.getByRole("form", { name: "Interface" });
  await interfaceForm.getByLabel("Name").fill("outside");
  await interfaceForm.getByLabel("Role").selectOption("wan");
  await interfaceForm.getByLabel("Addresses").fill("203.0.113.10/24\n2001:db8:e2e::10/64");
  await interfaceForm.getByLabel("https").check();
  await interfaceForm.getByLabel("ssh").check();
  await interfaceForm.getByRole("button", { name: "Add interface" }).click();
  await expect(toast(page)).toContainText("Added interface outside. Saved as revision r2.");
  // The listeners column lists them by kind, in the catalogue's order (PRODUCT.md §3: login ssh, https, http, telnet).
  await expect(page.getByRole("cell", { name: "login ssh, https" })).toBeVisible();
  await screenshot(page, "21-interfaces");

  // The team's network, then two inbound rules: a catch-all deny first, an allow second.
  await page.getByRole("navigation", { name: "Device" }).getByRole("link", { name: "Addresses" }).click();
  const addressForm = page.getByRole("form", { name: "Address object" });
  await addressForm.getByLabel("Name").fill("team-net");
  await addressForm.getByLabel("Entries").fill("198.51.100.0/28");
  await addressForm.getByRole("button", { name: "Add address object" }).click();
  await expect(toast(page)).toContainText("Saved as revision r3");

  await page.getByRole("navigation", { name: "Device" }).getByRole("link", { name: "Inbound rules" }).click();
  const ruleForm = page.getByRole("form", { name: "Inbound rule" });
  await ruleForm.getByLabel("Rule id").fill("drop-rest");
  await ruleForm.getByLabel("Action").selectOption("deny");
  await ruleForm.getByRole("button", { name: "Add rule" }).click();
  // Services were left empty: refused beside the field, with what was typed kept.
  await expect(ruleForm.getByText("Name at least one service (or any).")).toBeVisible();
  await expect(ruleForm.getByLabel("Rule id")).toHaveValue("drop-rest");
  await chooseNames(ruleForm, "Services", ["any"]);
  await ruleForm.getByRole("button", { name: "Add rule" }).click();
  await expect(toast(page)).toContainText("Saved as revision r4");
  await ruleForm.getByLabel("Rule id").fill("team-admin");
  await ruleForm.getByLabel("Action").selectOption("allow");
  await ruleForm.getByLabel("Interface").selectOption("outside");
  await chooseNames(ruleForm, "Sources", ["team-net"]);
  await ruleForm.getByRole("grid", { name: "Chosen sources" }).getByRole("button", { name: "Remove any" }).click();
  await chooseNames(ruleForm, "Services", ["https", "ssh"]);
  await ruleForm.getByRole("button", { name: "Add rule" }).click();
  await expect(toast(page)).toContainText("Saved as revision r5");
  const rules = page.getByRole("list", { name: "Inbound rules in order" });
  await expect(rules.getByRole("listitem").nth(0)).toHaveAccessibleName("Rule drop-rest at position 1");
  await expect(rules.getByRole("listitem").nth(1)).toContainText("from team-net → to any · services https, ssh");
  // The allow must come before the catch-all deny: move it up.
  await page.getByRole("button", { name: "Move rule team-admin up" }).click();
  await expect(toast(page)).toContainText("Moved inbound rule team-admin to position 1");
  await expect(rules.getByRole("listitem").nth(0)).toHaveAccessibleName("Rule team-admin at position 1");
  await expect(rules.getByRole("listitem").nth(1)).toHaveAccessibleName("Rule drop-rest at position 2");
  await screenshot(page, "22-rules");

  // An account restricted to the team network.
  await page.getByRole("navigation", { name: "Device" }).getByRole("link", { name: "Accounts" }).click();
  const accountForm = page.getByRole("form", { name: "Account" });
  await accountForm.getByLabel("Name").fill("ops-lena");
  await chooseNames(accountForm, "Login sources", ["team-net"]);
  await accountForm.getByLabel("Second factor").selectOption("totp");
  await accountForm.getByRole("button", { name: "Add account" }).click();
  await expect(toast(page)).toContainText("Saved as revision r7");
  await screenshot(page, "23-accounts");

  // Everything is still there after a reload.
  await page.reload();
  await expect(page.getByRole("cell", { name: "ops-lena", exact: true })).toBeVisible();
  await expect(page.getByRole("cell", { name: "team-net", exact: true })).toBeVisible();
  await page.getByRole("navigation", { name: "Device" }).getByRole("link", { name: "Inbound rules" }).click();
  await expect(rules.getByRole("listitem").nth(0)).toHaveAccessibleName("Rule team-admin at position 1");

  // Export the current revision …
  const downloadPromise = page.waitForEvent("download");
  await page.getByRole("link", { name: "Export model (JSON)" }).click();
  const download = await downloadPromise;
  const exportedPath = await download.path();
  const exported = JSON.parse(readFileSync(exportedPath, "utf8")) as { device: { name: string }; inboundRules: Array<{ id: string }> };
  expect(exported.device.name).toBe(deviceName);
  expect(exported.inboundRules.map((rule) => rule.id)).toEqual(["team-admin", "drop-rest"]);

  // … and import it back as a new revision of the same device: nothing changes.
  await page.goto(`/o/${team.slug}/devices/import`);
  await page.getByLabel("Model document").setInputFiles(exportedPath);
  await page.getByLabel("Import as").selectOption({ label: `${deviceName} (now r7)` });
  await page.getByRole("button", { name: "Check the document" }).click();
  await expect(page.getByRole("heading", { name: `Preview: ${deviceName}` })).toBeVisible();
  await screenshot(page, "24-import-preview");
  await page.getByRole("button", { name: `Import ${deviceName}` }).click();
  await expect(toast(page)).toContainText("The import matched the current revision; nothing changed.");
  await expect(page.getByRole("cell", { name: "r7", exact: true })).toBeVisible();
  await screenshot(page, "25-history");
  await context.close();
});

test("A bad upload is refused with its problems and creates nothing", async ({ page, browserProblems }) => {
  browserProblems.expect(400, /\/devices\/import\.data$/);
  await useSignedInSession(page, "priya.nandakumar@lanternfield.example", "demo-password-engineer");
  await page.goto("/o/lanternfield/devices/import");
  await page.getByLabel("Model document").setInputFiles({ name: "broken.json", mimeType: "application/json", buffer: Buffer.from(JSON.stringify({ schemaVersion: 2, device: { name: "broken" }, inboundRules: [{ id: "r1", interface: "any", sources: ["noc"], destinations: ["any"], services: ["ssh"], action: "allow" }] })) });
  await page.getByLabel("Import as").selectOption({ label: "New device at Brightwater Clinic — main campus" });
  await page.getByRole("button", { name: "Check the document" }).click();
  await expect(page.getByRole("alert").first()).toContainText("not a valid Sallyport model");
  await expect(page.getByText('inboundRules[0].sources[0]')).toBeVisible();
  await screenshot(page, "26-import-refused");
  await page.goto("/o/lanternfield/devices?q=broken");
  await expect(page.getByText("0 of")).toBeVisible();
});

// On a team's own device (tests/e2e/team.ts): the reorder is saved, and the demo's devices stay as seeded.
test("Inbound rules can be reordered with the keyboard and by dragging", async ({ browser, playwright, browserProblems }, testInfo) => {
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  const team = await createTeam(playwright.request, baseURL, "reorder");
  const context = await browser.newContext({ storageState: team.members.engineer.storageState });
  browserProblems.watch(context);
  const page = await context.newPage();
  await page.goto(`/o/${team.slug}/devices`);
  await page.getByRole("link", { name: team.device.name, exact: true }).click();
  await page.getByRole("navigation", { name: "Device" }).getByRole("link", { name: "Inbound rules" }).click();
  const rules = page.getByRole("list", { name: "Inbound rules in order" });
  const first = await rules.getByRole("listitem").nth(0).getAttribute("aria-label");
  const second = await rules.getByRole("listitem").nth(1).getAttribute("aria-label");
  const firstId = first!.match(/^Rule (\S+) at/)![1];
  const secondId = second!.match(/^Rule (\S+) at/)![1];

  // Keyboard: pick the first rule up with space, move it down one place, drop it with space.
  await page.getByRole("button", { name: `Drag to reorder rule ${firstId}; with the keyboard press space, arrows, then space` }).focus();
  // dnd-kit measures the list between key presses, as a person's pace allows.
  await page.keyboard.press("Space");
  await page.waitForTimeout(300);
  await page.keyboard.press("ArrowDown");
  await page.waitForTimeout(300);
  await page.keyboard.press("Space");
  await expect(toast(page)).toContainText(`Moved inbound rule ${firstId} to position 2`);
  await expect(rules.getByRole("listitem").nth(0)).toHaveAccessibleName(`Rule ${secondId} at position 1`);

  // Mouse: drag it back above.
  const handle = page.getByRole("button", { name: `Drag to reorder rule ${firstId}; with the keyboard press space, arrows, then space` });
  const target = rules.getByRole("listitem").nth(0);
  const from = await handle.boundingBox();
  const to = await target.boundingBox();
  await page.mouse.move(from!.x + from!.width / 2, from!.y + from!.height / 2);
  await page.mouse.down();
  await page.mouse.move(from!.x + from!.width / 2, from!.y - 10, { steps: 5 });
  await page.mouse.move(to!.x + 40, to!.y + 5, { steps: 10 });
  await page.mouse.up();
  await expect(rules.getByRole("listitem").nth(0)).toHaveAccessibleName(`Rule ${firstId} at position 1`);
  await expect(toast(page)).toContainText(`Moved inbound rule ${firstId} to position 1`);
  await context.close();
});
