import type { Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { hydrated, problemsAtEverySize, toast } from "./helpers";
import { createTeam, outboxDirectory } from "./team";
import { waitForMail } from "../support/outbox";
import { successiveCodes } from "../support/totp";

// Each test makes its own organisation, so the two workers may share this file's tests.
test.describe.configure({ mode: "parallel" });

// Sallyport's own second factor in the browser (docs/decisions/019): enrolment with a code the
// test computes from the secret the page shows (as an authenticator app would, RFC 6238), the
// two-step sign-in with a code and with a recovery code, and an organisation's requirement.

/** On the second-factor page: draw a secret, read it as an app would, confirm with a code; returns the codes source and the recovery codes shown. */
async function enrolHere(page: Page, shotName?: string): Promise<{ next: () => string; recoveryCodes: string[] }> {
  await page.getByRole("button", { name: "Set up a second factor" }).click();
  const secretText = page.getByTestId("totp-secret");
  await expect(secretText).toBeVisible();
  await expect(page.getByRole("img", { name: "QR code of the secret for your authenticator app" })).toBeVisible();
  // The text form is what a person types into the app: Base32 in groups of four.
  const typed = (await secretText.textContent())!.replace(/\s+/g, "");
  expect(typed).toMatch(/^[A-Z2-7]{32}$/);
  await hydrated(page);
  if (shotName) expect(await problemsAtEverySize(page, `second-factor/${shotName}`, "screenshots")).toEqual([]);
  const next = successiveCodes(typed);
  await page.getByLabel("Code from the app").fill(next());
  await page.getByRole("button", { name: "Confirm and turn on" }).click();
  const list = page.getByRole("list", { name: "Recovery codes" });
  await expect(list).toBeVisible();
  const recoveryCodes = (await list.getByRole("listitem").allTextContents()).map((code) => code.trim());
  expect(recoveryCodes).toHaveLength(10);
  return { next, recoveryCodes };
}

async function signOutHere(page: Page): Promise<void> {
  await page.goto("/account/second-factor");
  await page.getByRole("button", { name: "Sign out" }).click();
  await expect(page).toHaveURL(/\/login$/);
}

async function passwordStep(page: Page, email: string, password: string): Promise<void> {
  await page.goto("/login");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/\/login\/code$/);
  await expect(page.getByRole("heading", { name: "Second step" })).toBeVisible();
}

test("A person turns on a second factor from the shown secret, then signs in with a code and with a recovery code", async ({ page }) => {
  test.setTimeout(120_000);
  // An invented person in the reserved test.example domain (RFC 2606).
  const email = `nell.varga.${Date.now().toString(36)}@test.example`;
  const password = "pier lamps in the fog 31";
  await page.goto("/signup");
  await page.getByLabel("Your name").fill("Nell Varga");
  await page.getByLabel("Work e-mail").fill(email);
  await page.getByLabel("Organisation").fill(`Quayside Survey ${Date.now().toString(36)}`);
  await page.getByLabel("Password", { exact: true }).fill(password);
  await page.getByRole("button", { name: "Create organisation" }).click();
  await page.waitForURL(/\/o\/[a-z0-9-]+\/devices$/);
  const slug = new URL(page.url()).pathname.split("/")[2];

  await page.goto("/account");
  await page.getByRole("link", { name: "Set up a second factor" }).click();
  await expect(page).toHaveURL(/\/account\/second-factor$/);
  await hydrated(page);
  expect(await problemsAtEverySize(page, `second-factor/${"01-off"}`, "screenshots")).toEqual([]);
  const { next, recoveryCodes } = await enrolHere(page, "02-enrol");
  expect(await problemsAtEverySize(page, `second-factor/${"03-recovery-codes"}`, "screenshots")).toEqual([]);
  await page.getByRole("link", { name: "I have saved them — continue" }).click();
  await expect(page).toHaveURL(new RegExp(`/o/${slug}`));

  await signOutHere(page);
  await passwordStep(page, email, password);
  await hydrated(page);
  expect(await problemsAtEverySize(page, `second-factor/${"04-second-step"}`, "screenshots")).toEqual([]);
  await page.getByLabel("Code").fill(next());
  await page.getByRole("button", { name: "Continue" }).click();
  await expect(page).toHaveURL(new RegExp(`/o/${slug}`));
  await page.goto("/account");
  await expect(page.getByText("Recovery codes left: 10")).toBeVisible();

  await signOutHere(page);
  await passwordStep(page, email, password);
  await page.getByLabel("Code").fill(recoveryCodes[0]);
  await page.getByRole("button", { name: "Continue" }).click();
  await expect(page).toHaveURL(new RegExp(`/o/${slug}`));
  await expect(toast(page)).toContainText("Signed in with a recovery code");
  await page.goto("/account/second-factor");
  await expect(page.getByText(/Recovery codes left:\s*9/)).toBeVisible();
  await hydrated(page);
  expect(await problemsAtEverySize(page, `second-factor/${"05-on"}`, "screenshots")).toEqual([]);
});

test("An organisation that requires a second factor sends a member without one to enrol before anything else", async ({ browser, playwright, browserProblems }, testInfo) => {
  test.setTimeout(180_000);
  const team = await createTeam(playwright.request, testInfo.project.use.baseURL!, "totp");
  const ownerContext = await browser.newContext({ storageState: team.members.owner.storageState, reducedMotion: "reduce" });
  browserProblems.watch(ownerContext);
  const owner = await ownerContext.newPage();
  const settings = `/o/${team.slug}/settings/organisation`;

  // Without a second factor of their own, the owner cannot turn the requirement on.
  await owner.goto(settings);
  const requirement = owner.getByRole("form", { name: "Second factor for every member" });
  await expect(requirement.getByRole("checkbox", { name: "Require a second factor of every member." })).toBeDisabled();
  await expect(requirement).toContainText("Set up your own second factor first");

  await owner.goto("/account/second-factor");
  await enrolHere(owner);
  await owner.goto(settings);
  await expect(requirement).toContainText(`${team.members.engineer.name} (engineer)`);
  await requirement.getByRole("checkbox", { name: "Require a second factor of every member." }).check();
  await hydrated(owner);
  expect(await problemsAtEverySize(owner, `second-factor/${"06-organisation-requirement"}`, "screenshots")).toEqual([]);
  await requirement.getByRole("button", { name: "Save the requirement" }).click();
  await expect(toast(owner)).toContainText("Every member now needs a second factor");

  const engineerContext = await browser.newContext({ storageState: team.members.engineer.storageState, reducedMotion: "reduce" });
  browserProblems.watch(engineerContext);
  const engineer = await engineerContext.newPage();
  await engineer.goto(`/o/${team.slug}/devices`);
  await expect(engineer).toHaveURL(/\/account\/second-factor$/);
  await expect(engineer.getByRole("alert")).toContainText(`${team.name} requires a second factor of every member`);
  // Nothing else opens until then.
  await engineer.goto(team.device.path);
  await expect(engineer).toHaveURL(/\/account\/second-factor$/);
  await hydrated(engineer);
  expect(await problemsAtEverySize(engineer, `second-factor/${"07-enrolment-required"}`, "screenshots")).toEqual([]);
  await enrolHere(engineer);
  await engineer.getByRole("link", { name: "I have saved them — continue" }).click();
  await engineer.goto(`/o/${team.slug}/devices`);
  await expect(engineer.getByRole("heading", { name: "Devices" })).toBeVisible();

  await ownerContext.close();
  await engineerContext.close();
});

test("An admin resets a member's second factor from the members page, after confirming; the member is signed out, told by e-mail, and signs in again without it", async ({ browser, playwright, browserProblems }, testInfo) => {
  test.setTimeout(180_000);
  const team = await createTeam(playwright.request, testInfo.project.use.baseURL!, "totp-reset");
  const member = team.members.engineer;
  const memberContext = await browser.newContext({ storageState: member.storageState, reducedMotion: "reduce" });
  browserProblems.watch(memberContext);
  const memberPage = await memberContext.newPage();
  await memberPage.goto("/account/second-factor");
  await enrolHere(memberPage);

  const adminContext = await browser.newContext({ storageState: team.members.admin.storageState, reducedMotion: "reduce" });
  browserProblems.watch(adminContext);
  const admin = await adminContext.newPage();
  await admin.goto(`/o/${team.slug}/settings/members`);
  await hydrated(admin);
  const row = admin.getByRole("row").filter({ hasText: member.email });
  await expect(row.getByRole("cell", { name: "on", exact: true })).toBeVisible();
  // No reset of one's own second factor from here.
  await expect(admin.getByRole("row").filter({ hasText: team.members.admin.email }).getByRole("button", { name: /Reset the second factor/ })).toHaveCount(0);

  await row.getByRole("button", { name: `Reset the second factor of ${member.name}` }).click();
  const dialog = admin.getByRole("dialog", { name: `Reset the second factor of ${member.name}?` });
  await expect(dialog).toBeVisible();
  expect(await problemsAtEverySize(admin, `second-factor/${"08-admin-reset-dialog"}`, "screenshots")).toEqual([]);
  // Not confirmed: refused beside the box, and nothing changes.
  browserProblems.expect(400, /\/settings\/members/);
  await dialog.getByRole("button", { name: "Reset second factor" }).click();
  await expect(dialog.getByRole("alert")).toContainText("Tick the box once you have made sure");
  await dialog.getByRole("checkbox", { name: /I made sure, by a way other than e-mail/ }).check();
  await dialog.getByRole("button", { name: "Reset second factor" }).click();
  await expect(toast(admin)).toContainText(`Second factor of ${member.name} reset: signed out everywhere and told by e-mail.`);
  await expect(row.getByRole("cell", { name: "none", exact: true })).toBeVisible();
  await hydrated(admin);
  expect(await problemsAtEverySize(admin, `second-factor/${"09-admin-reset-done"}`, "screenshots")).toEqual([]);

  // The member's browser is signed out; the e-mail says what happened and links to set up a new one.
  await memberPage.goto(`/o/${team.slug}/devices`);
  await expect(memberPage).toHaveURL(/\/login\?redirectTo=/);
  const mail = await waitForMail(outboxDirectory(), member.email, /second factor was reset/);
  expect(mail.text).toContain(`${team.members.admin.name}, an administrator of ${team.name}`);
  expect(mail.text).toContain(`${testInfo.project.use.baseURL}/account/second-factor`);
  // The password alone signs in now (the organisation does not require a second factor).
  await memberPage.getByLabel("E-mail").fill(member.email);
  await memberPage.getByLabel("Password").fill(member.password);
  await memberPage.getByRole("button", { name: "Sign in" }).click();
  await expect(memberPage).toHaveURL(new RegExp(`/o/${team.slug}/devices`));

  await adminContext.close();
  await memberContext.close();
});
