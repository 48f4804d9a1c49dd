import { expect, test } from "./fixtures";
import { hydrated, screenshot } from "./helpers";
import { createProposal, createTeam, type Team } from "./team";

// The reviewer's side of a proposal in the browser, on an organisation of the test's own: the
// draft editor's effect line follows each edit (fetched from the effect JSON route), and the
// change record prints on its own, black on white. The proposal (tests/e2e/team.ts) disables
// the draft's first inbound rule and is in review.

let team: Team;
let proposalPath = "";
test.beforeAll(async ({ playwright }, testInfo) => {
  const baseURL = testInfo.project.use.baseURL;
  if (!baseURL) throw new Error("no baseURL in playwright.config.ts");
  team = await createTeam(playwright.request, baseURL, "effect");
  proposalPath = await createProposal(playwright.request, baseURL, team);
});

test("While drafting, the effect headline refreshes after each edit", async ({ browser, browserProblems }) => {
  const context = await browser.newContext({ storageState: team.members.engineer.storageState });
  browserProblems.watch(context);
  const page = await context.newPage();
  await page.goto(`${proposalPath}/draft/rules`);
  await hydrated(page);
  const line = page.getByTestId("draft-effect");
  await expect(line).toHaveAttribute("data-state", "ready");
  const disabled = (await line.getByTestId("effect-headline").textContent()) ?? "";
  expect(disabled).not.toBe("No source's outcome changes");

  // Enabling the rule again makes the draft the live model: nothing changes for anyone.
  // The proposal disabled the first rule of the list (tests/e2e/team.ts).
  const ruleName = (await page.locator('input[name="ruleId"]').first().getAttribute("value")) ?? "";
  await page.getByRole("button", { name: `Enable rule ${ruleName}` }).click();
  await expect(line.getByTestId("effect-headline")).toHaveText("No source's outcome changes");
  await screenshot(page, "draft-effect-refreshed");

  // Disabled again: the first headline comes back.
  await page.getByRole("button", { name: `Disable rule ${ruleName}` }).click();
  await expect(line.getByTestId("effect-headline")).toHaveText(disabled);
  await context.close();
});

test("The proposal page shows the effect with its picture, and its change record prints alone, black on white, in the dark scheme too", async ({ browser, browserProblems }) => {
  const context = await browser.newContext({ storageState: team.members.reviewer.storageState, colorScheme: "dark" });
  browserProblems.watch(context);
  const page = await context.newPage();
  await page.goto(proposalPath);
  await hydrated(page);
  const effect = page.getByRole("region", { name: "Effect" });
  await expect(effect.getByTestId("effect-headline")).toBeVisible();
  await expect(effect.getByRole("table", { name: "Before and after, per interface and service" })).toBeVisible();

  await page.getByRole("link", { name: "Change record" }).click();
  await expect(page.getByRole("heading", { name: "The change", exact: true })).toBeVisible();
  await hydrated(page);
  await expect(page.getByRole("button", { name: "Print" })).toBeVisible();

  await page.emulateMedia({ media: "print", colorScheme: "dark" });
  await expect(page.getByRole("navigation", { name: "Main" })).toBeHidden();
  await expect(page.getByRole("navigation", { name: "Device" })).toBeHidden();
  await expect(page.getByRole("button", { name: "Print" })).toBeHidden();
  await expect(page.getByRole("link", { name: "Download JSON" })).toBeHidden();
  for (const part of ["The change", "Effect and expectations", "Review"]) await expect(page.getByRole("heading", { name: part, exact: true })).toBeVisible();
  const colours = await page.getByRole("heading", { name: "The change", exact: true }).evaluate((heading) => {
    const card = heading.closest("section")?.firstElementChild;
    return { ink: getComputedStyle(heading).color, paper: card ? getComputedStyle(card).backgroundColor : "" };
  });
  expect(colours).toEqual({ ink: "rgb(0, 0, 0)", paper: "rgb(255, 255, 255)" });
  // Each part starts a page of its own.
  expect(await page.locator(".change-record-part").evaluateAll((parts) => parts.map((part) => getComputedStyle(part).breakBefore))).toEqual(["auto", "page", "page"]);
  await screenshot(page, "change-record-print");
  await context.close();
});
