import { expect, test } from "./fixtures";
import { outboxPath, screenshot, signIn, toast } from "./helpers";

test("An owner invites a colleague, who joins from the e-mailed link in the local outbox", async ({ page, browser, browserProblems }) => {
  // The malformed address below is refused with a 400.
  browserProblems.expect(400, /\/settings\/members\.data$/);
  await signIn(page, "maren.holt@lanternfield.example", "demo-password-owner");
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Settings" }).click();
  await expect(page).toHaveURL(/\/settings\/members$/);

  const invitee = `ines.varga-${Date.now().toString(36)}@test.example`;
  // A bad address is refused beside the field, and the page keeps the role chosen.
  await page.getByLabel("E-mail").fill("not an address");
  await page.getByLabel("Role", { exact: true }).selectOption("reviewer");
  await page.getByRole("button", { name: "Send invitation" }).click();
  await expect(page.getByText("Enter a valid e-mail address")).toBeVisible();
  await expect(page.getByLabel("Role", { exact: true })).toHaveValue("reviewer");

  await page.getByLabel("E-mail").fill(invitee);
  await page.getByRole("button", { name: "Send invitation" }).click();
  await expect(toast(page)).toContainText(`Invitation sent to ${invitee}`);
  await expect(page.getByRole("cell", { name: invitee })).toBeVisible();
  await screenshot(page, "10-members");

  // The invitee opens the local outbox in a fresh browser and follows the link.
  const guest = await browser.newContext();
  browserProblems.watch(guest);
  const guestPage = await guest.newPage();
  await guestPage.goto(outboxPath());
  const message = guestPage.getByRole("article", { name: "Join Lanternfield Managed Networks on Sallyport" }).filter({ hasText: invitee }).first();
  await expect(message).toBeVisible();
  await screenshot(guestPage, "11-outbox");
  await message.getByRole("link", { name: /\/invitations\// }).first().click();
  await expect(guestPage.getByRole("heading", { name: "Join Lanternfield Managed Networks" })).toBeVisible();
  await guestPage.getByLabel("Your name").fill("Ines Varga");
  await guestPage.getByLabel("Choose a password").fill("copper kettle on the stove");
  await guestPage.getByRole("button", { name: "Create account and join" }).click();
  await expect(guestPage).toHaveURL(/\/o\/lanternfield\/devices$/);
  await expect(toast(guestPage)).toContainText("Welcome to Lanternfield Managed Networks");
  await guest.close();

  await page.reload();
  const row = page.getByRole("row").filter({ hasText: invitee });
  await expect(row).toContainText("Ines Varga");
  await expect(row.getByLabel("Role of Ines Varga")).toHaveValue("reviewer");
  await page.getByRole("link", { name: "Audit log" }).click();
  // The audit log says it in words, naming the new member.
  await expect(page.getByRole("row").filter({ hasText: "Invitation accepted" }).filter({ hasText: `${invitee} joined as reviewer` }).first()).toBeVisible();
  await screenshot(page, "12-audit-log");
});

test("The theme can be switched to dark and stays after reload", async ({ page }) => {
  await signIn(page, "oskar.lindqvist@lanternfield.example", "demo-password-reviewer");
  await page.getByLabel("Account menu for Oskar Lindqvist").click();
  await page.getByRole("button", { name: "dark" }).click();
  await expect(page.locator("html")).toHaveAttribute("data-theme", "dark");
  await page.reload();
  await expect(page.locator("html")).toHaveAttribute("data-theme", "dark");
  await page.goto("/o/lanternfield/sites");
  await screenshot(page, "13-sites-dark");
  // A reviewer reads sites but gets no editing controls.
  await expect(page.getByRole("button", { name: "Add site" })).toHaveCount(0);
});
