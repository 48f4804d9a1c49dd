import { readFileSync } from "node:fs";
import path from "node:path";
import { expect, test } from "./fixtures";
import { hydrated, problemsAtEverySize, screenshot, toast } from "./helpers";
import { createTeam, type Team } from "./team";

// Issue 11: an import over an existing device is judged by its effect before it lands, and a
// high finding's dismissal takes a second person. An organisation of the test's own (createTeam);
// the pages are checked at 1366 and 390 px, light and dark: no sideways scroll, no serious axe
// violation, and (through the shared fixture) no console error or unexpected failed request.

/** The fixture device with its catch-all drop moved to the top: both operator networks lose every login path. */
function lockedOutDocument(): string {
  const document = JSON.parse(readFileSync(path.resolve("tests/fixtures/models/harbourline-edge.json"), "utf8")) as { inboundRules: Array<{ id: string }> };
  const drop = document.inboundRules.filter((rule) => rule.id === "r-drop");
  return JSON.stringify({ ...document, inboundRules: [...drop, ...document.inboundRules.filter((rule) => rule.id !== "r-drop")] }, null, 2);
}

// The dismissal runs on revision r1; the import that follows makes r2.
let team: Team;
test.beforeAll(async ({ playwright }, testInfo) => {
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  team = await createTeam(playwright.request, baseURL, "effect");
});

test("An engineer asks to dismiss a high finding; the reviewer confirms it from 'awaiting my confirmation', and only then it leaves the counts", async ({ browser, browserProblems }) => {
  test.setTimeout(120_000);
  const title = 'Account "vendor-kit" has no second factor';
  const engineerContext = await browser.newContext({ storageState: team.members.engineer.storageState });
  browserProblems.watch(engineerContext);
  const engineer = await engineerContext.newPage();
  await engineer.goto(team.device.path);
  await hydrated(engineer);
  const activeCard = engineer.getByRole("heading", { name: "Active findings" }).locator("..");
  const card = engineer.getByRole("listitem").filter({ has: engineer.getByRole("heading", { name: title }) });
  await card.getByText("Dismiss…").click();
  await expect(card.getByText("needs a reason of at least 20 characters and a second person's confirmation")).toBeVisible();
  await card.getByLabel("Why is this accepted?").fill("Vendor read-only account; their portal enforces a second factor.");
  await card.getByRole("button", { name: "Ask to dismiss with this reason" }).click();
  await expect(toast(engineer)).toContainText("It still counts until a second person");
  await expect(card.getByText("Dismissal awaiting confirmation")).toBeVisible();
  await expect(activeCard).toContainText("1 high");
  await expect(activeCard).toContainText("1 dismissal awaits confirmation");
  // The one who asked cannot confirm: no such button for them.
  await expect(card.getByRole("button", { name: /^Confirm dismissal/ })).toHaveCount(0);
  expect(await problemsAtEverySize(engineer, "32-dismissal-awaiting", "screenshots")).toEqual([]);

  const reviewerContext = await browser.newContext({ storageState: team.members.reviewer.storageState });
  browserProblems.watch(reviewerContext);
  const reviewer = await reviewerContext.newPage();
  await reviewer.goto(`/o/${team.slug}/findings`);
  await hydrated(reviewer);
  await reviewer.getByTestId("awaiting-mine-link").click();
  await expect(reviewer).toHaveURL(/awaiting=mine/);
  await expect(reviewer.getByLabel("Awaiting my confirmation")).toBeChecked();
  await expect(reviewer.getByText(title, { exact: true })).toBeVisible();
  expect(await problemsAtEverySize(reviewer, "33-findings-awaiting-my-confirmation", "screenshots")).toEqual([]);
  await reviewer.getByRole("button", { name: `Confirm dismissal of ${title}` }).click();
  await expect(toast(reviewer)).toContainText("it is an accepted risk now and leaves the counts");
  await expect(reviewer.getByRole("heading", { name: "Nothing awaits your confirmation" })).toBeVisible();

  await engineer.reload();
  await expect(activeCard).not.toContainText("1 high");
  await expect(engineer.getByText("Dismissed (1)")).toBeVisible();
  await engineerContext.close();
  await reviewerContext.close();
});

test("An import that locks out the operator networks shows the lockout in words: an engineer is offered only a proposal; an admin imports it after 'I have read the effect' and a written reason", async ({ browser, browserProblems }) => {
  test.setTimeout(120_000);
  // The admin's last step sent once without the box (400) and once without a reason (409, the lockout guard), on purpose.
  browserProblems.expect(400, /\/devices\/import\.data$/);
  browserProblems.expect(409, /\/devices\/import\.data$/);
  const preview = async (role: "engineer" | "admin") => {
    const context = await browser.newContext({ storageState: team.members[role].storageState });
    browserProblems.watch(context);
    const page = await context.newPage();
    await page.goto(`/o/${team.slug}/devices/import`);
    await hydrated(page);
    await page.getByLabel("Model document").setInputFiles({ name: "hl-edge-1-drop-first.json", mimeType: "application/json", buffer: Buffer.from(lockedOutDocument()) });
    await page.getByLabel("Import as").selectOption({ label: `${team.device.name} (now r1)` });
    await page.getByRole("button", { name: "Check the document" }).click();
    return page;
  };

  const page = await preview("engineer");
  const effect = page.getByRole("region", { name: `Effect on ${team.device.name}: r1 → r2` });
  await expect(effect).toBeVisible();
  // Counts before → after (the same elements, reordered), the lockout guard and the words beside the buttons.
  await expect(page.getByTestId("import-counts")).toContainText("inbound rules 7 → 7");
  await expect(effect.getByTestId("lockout-guard")).toContainText("noc");
  await expect(effect.getByTestId("lockout-guard")).toContainText("mgmt-lan");
  await expect(page.getByTestId("import-lockout-warning")).toContainText("Importing this locks the team out: operator networks “noc” and “mgmt-lan” would have no login path left");
  await expect(effect.getByText('Operator network "noc" has no login path')).toBeVisible();
  // Like a save in the editor (docs/decisions/017): the lockout guard blocks a direct import, so the engineer is offered the proposal only.
  await expect(page.getByTestId("import-blocked")).toContainText("The lockout guard blocks importing this directly: import it as a proposal, for an admin or owner to decide.");
  await expect(page.getByTestId("import-actions").getByRole("button")).toHaveText(["Import as a proposal"]);
  expect(await problemsAtEverySize(page, "30-import-preview-lockout", "screenshots")).toEqual([]);
  await page.context().close();

  // An admin: the box, then a written reason.
  const admin = await preview("admin");
  await expect(admin.getByTestId("import-blocked")).toContainText("or — as an admin — import it anyway with a written reason");
  await admin.getByRole("button", { name: `Import ${team.device.name} anyway` }).click();
  await expect(admin.getByText("Read the effect of this import above, then tick “I have read the effect” to import it.")).toBeVisible();
  await expect(admin.getByRole("region", { name: `Effect on ${team.device.name}: r1 → r2` })).toBeVisible();
  await screenshot(admin, "31-import-effect-unread");
  await admin.getByLabel("I have read the effect, including the lockout warning").check();
  await admin.getByRole("button", { name: `Import ${team.device.name} anyway` }).click();
  await expect(admin.getByTestId("import-refused")).toContainText("Not saved: the lockout guard blocks this change.");
  await admin.getByLabel("I have read the effect, including the lockout warning").check();
  await admin.getByLabel("Why import it anyway").fill("The NOC moves to the new ranges tonight; the old ones go on purpose.");
  await admin.getByRole("button", { name: `Import ${team.device.name} anyway` }).click();
  await expect(toast(admin)).toContainText("Imported as revision r2 past the guard, with your reason.");
  await expect(admin).toHaveURL(new RegExp(`${team.device.path}/history$`));
  await admin.context().close();
});
