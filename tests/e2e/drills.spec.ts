import type { Browser, BrowserContext, Page } from "@playwright/test";
import { expect, test } from "./fixtures";
import { hydrated, problemsAtEverySize, toast } from "./helpers";
import { createTeam, type Team } from "./team";

// Each test makes its own organisation, so the two workers may share this file's tests.
test.describe.configure({ mode: "parallel" });

// Drills graded by the engine (issue 12, point 4; docs/decisions/016, "Drills"): a trainer
// builds a repair drill; a trainee's incomplete fix is not a pass, the full one is; a predict
// drill and an order drill are taken once. Every page at 390 and 1366 px, light and dark.

async function memberPage(browser: Browser, team: Team, role: keyof Team["members"], watch: (context: BrowserContext) => void): Promise<Page> {
  const context = await browser.newContext({ storageState: team.members[role].storageState, viewport: { width: 1366, height: 860 }, reducedMotion: "reduce" });
  watch(context);
  return context.newPage();
}

test("A trainer builds a repair drill; the trainee's incomplete fix is not a pass, and it passes only once every goal holds", async ({ browser, playwright, baseURL, browserProblems }) => {
  test.setTimeout(240_000);
  const team = await createTeam(playwright.request, baseURL!, "drills-fix");
  const training = `/o/${team.slug}/training`;

  // The owner trains always (docs/decisions/016): a scenario from the rule-order example, a repair drill on it.
  const trainer = await memberPage(browser, team, "owner", (context) => browserProblems.watch(context));
  await trainer.goto(`${training}/scenarios/new?example=rule-order`);
  await trainer.getByRole("button", { name: "Create scenario" }).click();
  await expect(trainer.getByText("Teaching scenario — not a fleet device")).toBeVisible();
  await trainer.goto(training);
  await trainer.getByRole("link", { name: "New drill" }).click();
  await hydrated(trainer);
  await trainer.getByLabel("Title").fill("Let the operations centre in");
  await trainer.getByRole("radio", { name: "Repair the model" }).check();
  await trainer.getByLabel("Introduction (optional, Markdown)").fill("The operations centre is locked out. Fix **only** that.");
  expect(await problemsAtEverySize(trainer, "91-drill-new", "screenshots")).toEqual([]);
  await trainer.getByRole("button", { name: "Create drill" }).click();
  await expect(toast(trainer)).toContainText("Drill “Let the operations centre in” created");

  // Two goals: the operations centre logs in with its second factor; the rest of the internet gets no answer.
  const addGoal = async (from: string, outcome: string, goalsAfter: number) => {
    const form = trainer.getByRole("form", { name: "Add a goal" });
    await form.getByLabel("From (source address)").fill(from);
    await form.getByLabel("Interface").selectOption("outside");
    await form.getByLabel("Service").fill("https");
    await form.getByLabel("Must get").selectOption({ label: outcome });
    await form.getByRole("button", { name: "Add goal" }).click();
    await expect(toast(trainer)).toContainText("Goal added");
    // The goal itself, not only a toast (the first goal's toast may still show when the second is
    // added): leaving the page before the save is done would edit an older version of the drill.
    await expect(trainer.getByRole("list", { name: "Goals" }).getByRole("listitem")).toHaveCount(goalsAfter);
  };
  await addGoal("192.0.2.70", "Login with second factor", 1);
  await addGoal("203.0.113.9", "No answer", 2);
  // The answer model: the drop moved below the operations centre's allow.
  await trainer.getByRole("link", { name: "Edit the answer model" }).click();
  await hydrated(trainer);
  await trainer.getByRole("button", { name: "Move rule drop-internet down" }).click();
  await expect(toast(trainer)).toContainText("in the answer model");
  await trainer.getByRole("link", { name: "Drill editor" }).click();
  const goals = trainer.getByRole("list", { name: "Goals" });
  await expect(goals.getByText("holds with your answer")).toHaveCount(2);
  expect(await problemsAtEverySize(trainer, "92-drill-editor", "screenshots")).toEqual([]);
  const drillPath = new URL(trainer.url()).pathname.replace(/\/edit$/, "");

  // The trainee begins it from the Training page.
  const trainee = await memberPage(browser, team, "trainee", (context) => browserProblems.watch(context));
  await trainee.goto(training);
  await trainee.getByRole("link", { name: "Let the operations centre in" }).click();
  await trainee.getByRole("button", { name: "Begin the drill" }).click();
  await expect(trainee.getByRole("heading", { name: "Goals" })).toBeVisible();
  const attemptPath = new URL(trainee.url()).pathname;

  // An incomplete fix: disabling the drop lets the operations centre in, and the whole internet to the login page.
  await trainee.getByRole("link", { name: "Inbound rules" }).click();
  await hydrated(trainee);
  await trainee.getByRole("button", { name: "Disable rule drop-internet" }).click();
  await expect(toast(trainee)).toContainText("sandbox copy");
  await trainee.getByRole("link", { name: "The drill and its goals" }).click();
  await trainee.getByRole("button", { name: "Check my fix" }).click();
  const result = trainee.getByRole("status", { name: "Result of your last check" });
  await expect(result).toContainText("Not yet: 1 of 2 goals do not hold");
  await expect(result).not.toContainText("Pass");
  expect(await problemsAtEverySize(trainee, "93-drill-fix-not-yet", "screenshots")).toEqual([]);

  // The full fix: the drop enabled again, below the allow.
  await trainee.goto(`${attemptPath}/model/rules`);
  await hydrated(trainee);
  await trainee.getByRole("button", { name: "Enable rule drop-internet" }).click();
  await expect(toast(trainee)).toContainText("sandbox copy");
  await trainee.getByRole("button", { name: "Move rule drop-internet down" }).click();
  await expect(toast(trainee)).toContainText("sandbox copy");
  expect(await problemsAtEverySize(trainee, "94-drill-sandbox", "screenshots")).toEqual([]);
  await trainee.goto(attemptPath);
  await trainee.getByRole("button", { name: "Check my fix" }).click();
  await expect(result).toContainText("Pass: every goal holds");
  await expect(result).toContainText("No collateral change");
  await expect(trainee.getByText("Score 3 of 3 — finished")).toBeVisible();
  expect(await problemsAtEverySize(trainee, "95-drill-fix-pass", "screenshots")).toEqual([]);

  // The trainer reads the result on the drill's page.
  await trainer.goto(drillPath);
  await expect(trainer.getByRole("row").filter({ hasText: team.members.trainee.name })).toContainText("3 of 3");
  expect(await problemsAtEverySize(trainer, "96-drill-results", "screenshots")).toEqual([]);
});

test("A trainee takes a drill that calls outcomes and one that orders rules, with the explanation after each answer", async ({ browser, playwright, baseURL, browserProblems }) => {
  test.setTimeout(240_000);
  const team = await createTeam(playwright.request, baseURL!, "drills-take");
  const training = `/o/${team.slug}/training`;
  const trainer = await memberPage(browser, team, "owner", (context) => browserProblems.watch(context));
  await trainer.goto(`${training}/scenarios/new?example=rule-order`);
  await trainer.getByRole("button", { name: "Create scenario" }).click();
  await expect(trainer.getByText("Teaching scenario — not a fleet device")).toBeVisible();
  const newDrill = async (title: string, kind: string, count?: string) => {
    await trainer.goto(`${training}/drills/new`);
    await hydrated(trainer);
    await trainer.getByLabel("Title").fill(title);
    await trainer.getByRole("radio", { name: kind }).check();
    if (count) await trainer.getByLabel("Probes (call the outcome)").fill(count);
    await trainer.getByRole("button", { name: "Create drill" }).click();
    await expect(toast(trainer)).toContainText("created");
  };
  await newDrill("Call three", "Call the outcome", "3");
  await newDrill("Outside rules in order", "Put the rules in order");
  const form = trainer.getByRole("form", { name: "Add a goal" });
  await form.getByLabel("From (source address)").fill("192.0.2.70");
  await form.getByLabel("Interface").selectOption("outside");
  await form.getByLabel("Must get").selectOption({ label: "Login with second factor" });
  await form.getByRole("button", { name: "Add goal" }).click();
  await expect(toast(trainer)).toContainText("Goal added");
  await trainer.getByRole("list", { name: "Answer order" }).getByRole("button", { name: "Move drop-internet down" }).click();
  await expect(toast(trainer)).toContainText("moved down");
  await expect(trainer.getByRole("list", { name: "Goals" }).getByText("holds with your answer")).toHaveCount(1);

  const trainee = await memberPage(browser, team, "trainee", (context) => browserProblems.watch(context));
  // Call the outcome: three probes, each explained in words once answered.
  await trainee.goto(training);
  await trainee.getByRole("link", { name: "Call three" }).click();
  await trainee.getByRole("button", { name: "Begin the drill" }).click();
  for (let index = 1; index <= 3; index++) {
    const question = trainee.getByRole("form", { name: `Answer probe ${index}` });
    await question.getByLabel("What does the outsider get?").selectOption({ label: "No answer" });
    await question.getByLabel("Which layer decides it?").selectOption({ label: "Inbound rules" });
    if (index === 1) expect(await problemsAtEverySize(trainee, "97-drill-predict-question", "screenshots")).toEqual([]);
    await question.getByRole("button", { name: "Answer" }).click();
    const answered = trainee.locator(`#answer-${index - 1}`);
    await expect(answered.getByRole("heading", { name: `Probe ${index} of 3` })).toBeVisible();
    // The explanation: the outcome in a sentence and each layer reached.
    await expect(answered.getByText("Arrival", { exact: true })).toBeVisible();
  }
  await expect(trainee.getByText(/Score \d of 6 — finished/)).toBeVisible();
  expect(await problemsAtEverySize(trainee, "98-drill-predict-done", "screenshots")).toEqual([]);

  // Put the rules in order: the drop moves below the allow with the buttons (keyboard reachable).
  await trainee.goto(training);
  await trainee.getByRole("link", { name: "Outside rules in order" }).click();
  await trainee.getByRole("button", { name: "Begin the drill" }).click();
  await hydrated(trainee);
  const move = trainee.getByRole("button", { name: "Move drop-internet down" });
  await move.focus();
  await trainee.keyboard.press("Enter");
  await expect(trainee.getByRole("list", { name: "Rule order" }).getByRole("listitem").first()).toContainText("allow-ops-centre");
  await trainee.getByRole("button", { name: "Check this order" }).click();
  const result = trainee.getByRole("status", { name: "Result of your last check" });
  await expect(result).toContainText("Pass: every goal holds, as tight as the best order");
  expect(await problemsAtEverySize(trainee, "99-drill-order-pass", "screenshots")).toEqual([]);
});
