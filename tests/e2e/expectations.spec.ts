import { expect, test } from "./fixtures";
import { hydrated, screenshot, seriousAccessibilityViolations } from "./helpers";
import { createTeam, type Team } from "./team";

// The Expectations tab as a team uses it, on an organisation of the test's own (the invented
// harbour office edge device, tests/fixtures/models/harbourline-edge.json): the NOC
// (198.51.100.0/26, RFC 5737) logs in on outside https with a second factor; the vendor's range
// gets the https login with a password alone in its support window.

let team: Team;
test.beforeAll(async ({ playwright }, testInfo) => {
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  team = await createTeam(playwright.request, baseURL, "expect");
});

test("An engineer records what must hold; a failing bound links to a trace of its witness, the overview counts it, a reviewer reads it", async ({ browser, browserProblems }) => {
  const context = await browser.newContext({ storageState: team.members.engineer.storageState });
  browserProblems.watch(context);
  const page = await context.newPage();
  await page.goto(`${team.device.path}/expectations`);
  await hydrated(page);
  await expect(page.getByRole("heading", { name: "No expectations yet" })).toBeVisible();

  const probeForm = page.locator("form").filter({ has: page.getByRole("button", { name: "Add probe" }) });
  await probeForm.getByLabel("Id").fill("noc-https-mfa");
  await probeForm.getByLabel("Interface").selectOption("outside");
  await probeForm.getByLabel("From").fill("198.51.100.20");
  await probeForm.getByLabel("Service").fill("https");
  await probeForm.getByLabel("Must get").selectOption("login-mfa");
  await probeForm.getByLabel("Note (optional)").fill("The NOC logs in with a second factor");
  await probeForm.getByRole("button", { name: "Add probe" }).click();
  const probe = page.locator("#expectation-noc-https-mfa");
  await expect(probe).toContainText("Holds");
  await expect(probe).toContainText("198.51.100.20 → outside https: Login with second factor, all week");
  // The form starts empty again for the next one.
  await expect(probeForm.getByLabel("Id")).toHaveValue("");

  const boundForm = page.locator("form").filter({ has: page.getByRole("button", { name: "Add bound" }) });
  await boundForm.getByLabel("Id").fill("internet-quiet-https");
  await boundForm.getByLabel("Interface").selectOption("outside");
  await boundForm.getByLabel("Sources").fill("non-private");
  await boundForm.getByLabel("Service").fill("https");
  await boundForm.getByLabel("At most").selectOption("silent");
  await boundForm.getByRole("button", { name: "Add bound" }).click();
  const bound = page.locator("#expectation-internet-quiet-https");
  await expect(bound).toContainText("Fails");
  await expect(bound).toContainText("No non-private source gets more than No answer on outside https");
  // The worst any of them gets is the vendor's password-only login in the support window.
  await expect(bound).toContainText("up to Login with password only");
  await expect(page.getByRole("status").filter({ hasText: "expectations on r1" })).toContainText("2 expectations on r1: 1 fails");
  expect(await seriousAccessibilityViolations(page)).toEqual([]);
  await screenshot(page, "70-expectations");

  // Try it: the trace page opens with the witness and shows what the bound forbids.
  await bound.getByRole("link", { name: /^Try it: trace https from / }).click();
  await expect(page).toHaveURL(/\/analysis\?from=192\.0\.2\.64&interface=outside&service=https/);
  await expect(page.getByLabel("Outcome", { exact: true })).toContainText(/password alone/i);
  await screenshot(page, "71-expectation-witness-trace");

  // The overview says how many fail, linking to the tab.
  await page.goto(team.device.path);
  await hydrated(page);
  await expect(page.getByRole("link", { name: "1 of 2 expectations fails on r1" })).toBeVisible();
  await context.close();

  // A reviewer reads the list and its results, with no editing controls.
  const reviewerContext = await browser.newContext({ storageState: team.members.reviewer.storageState });
  browserProblems.watch(reviewerContext);
  const reviewer = await reviewerContext.newPage();
  await reviewer.goto(`${team.device.path}/expectations`);
  await hydrated(reviewer);
  await expect(reviewer.locator("#expectation-internet-quiet-https")).toContainText("Fails");
  await expect(reviewer.getByRole("button", { name: /Delete|Add probe|Move up/ })).toHaveCount(0);
  await expect(reviewer.getByRole("link", { name: "Export (JSON)" })).toBeVisible();
  await screenshot(reviewer, "72-expectations-reviewer");
  await reviewerContext.close();
});
