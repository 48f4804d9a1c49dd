import type { Browser, BrowserContext, Page } from "@playwright/test";
import { LAYER_LABELS, LAYERS, type Layer } from "#server/engine/vocabulary";
import { expect, test } from "./fixtures";
import { hydrated, outboxPath, screenshot, seriousAccessibilityViolations, toast } from "./helpers";
import { createTeam, outboxDirectory, type Team } from "./team";
import { waitForMail } from "../support/outbox";

// Assignments and progress (issue 12 point 5, docs/decisions/016): a trainer builds a lesson from
// a shipped example and assigns it; the trainee opens the e-mailed link from the local outbox,
// completes the lesson with one wrong prediction, and the score and the wrong layer show in the
// trainer's progress table — at 1366 and 390 px, light and dark, with no console error.

const WIDE = { width: 1366, height: 860 };
const PHONE = { width: 390, height: 844 };

async function memberPage(browser: Browser, team: Team, role: keyof Team["members"], watch: (context: BrowserContext) => void, viewport = WIDE, colorScheme: "light" | "dark" = "light"): Promise<Page> {
  const context = await browser.newContext({ storageState: team.members[role].storageState, viewport, colorScheme, reducedMotion: "reduce" });
  watch(context);
  return context.newPage();
}

async function predict(page: Page, verdict: "pass" | "stop", outcome?: string): Promise<void> {
  const form = page.getByRole("form", { name: /^Predict: / });
  await form.getByLabel(verdict === "pass" ? "Passes it on to the next layer" : "Decides the outcome here").check();
  if (outcome) await form.getByLabel("If it decides here: what does the outsider get?").selectOption({ label: outcome });
  await form.getByRole("button", { name: "Reveal" }).click();
}

/** How far the document scrolls sideways: 0 when nothing sticks out. */
function sideways(page: Page): Promise<number> {
  return page.evaluate(() => (document.scrollingElement ?? document.documentElement).scrollWidth - window.innerWidth);
}

test("A trainer assigns a lesson built from a shipped example; the trainee opens the e-mailed link from the outbox, finishes with one wrong prediction, and the trainer's progress table shows the score and the wrong layer", async ({ browser, playwright, baseURL, browserProblems }) => {
  test.setTimeout(240_000);
  const team = await createTeam(playwright.request, baseURL!, "assign");
  const training = `/o/${team.slug}/training`;
  const title = "Login sources for the new starters";

  // The admin (who trains always) builds the lesson from the login-sources example.
  const trainer = await memberPage(browser, team, "admin", (context) => browserProblems.watch(context));
  await trainer.goto(training);
  await hydrated(trainer);
  await trainer.getByRole("link", { name: "Use the example Login sources: the page answers, the login is refused" }).click();
  await trainer.getByRole("button", { name: "Create scenario" }).click();
  await expect(trainer.getByText("Teaching scenario — not a fleet device")).toBeVisible();
  await trainer.goto(`${training}/lessons/new`);
  await trainer.getByLabel("Title").fill(title);
  await trainer.getByRole("button", { name: "Create lesson" }).click();
  await expect(trainer.getByRole("heading", { name: `Edit: ${title}` })).toBeVisible();
  await trainer.getByRole("link", { name: "Lesson page" }).click();

  // … and assigns it to the trainee with a note (the due date a week ahead, as suggested).
  await trainer.getByRole("link", { name: "Assign", exact: true }).click();
  await hydrated(trainer);
  const form = trainer.getByRole("form", { name: "Assign training" });
  await expect(form.getByLabel("Lesson or drill")).toHaveValue(/^lesson:/);
  await form.getByLabel(new RegExp(`^${team.members.trainee.name}`)).check();
  await form.getByLabel("Note to the members (optional, plain text)").fill("Take it before Thursday's session.");
  await screenshot(trainer, "91-training-assign");
  await form.getByRole("button", { name: "Assign" }).click();
  await expect(toast(trainer)).toContainText(`“${title}” assigned to 1 member; each was e-mailed a link.`);
  await expect(trainer.getByRole("row").filter({ hasText: team.members.trainee.name })).toContainText("Not started");
  await screenshot(trainer, "92-training-assignments");

  // The trainee, on a phone in dark mode, opens the e-mail in the local outbox and follows its link.
  await waitForMail(outboxDirectory(), team.members.trainee.email, new RegExp(`^Training assigned: ${title}$`));
  const trainee = await memberPage(browser, team, "trainee", (context) => browserProblems.watch(context), PHONE, "dark");
  await trainee.goto(outboxPath());
  const mail = trainee.getByRole("article", { name: `Training assigned: ${title}` }).filter({ hasText: `To: ${team.members.trainee.email}` });
  await expect(mail).toContainText("Take it before Thursday's session.");
  await mail.getByRole("link", { name: /\/training\/assignments\/[0-9a-f-]{36}$/ }).click();
  await expect(trainee.getByRole("heading", { name: title })).toBeVisible();
  await hydrated(trainee);
  await expect(trainee.getByText("Not started")).toBeVisible();
  expect(await sideways(trainee)).toBe(0);
  await screenshot(trainee, "93-training-assignment-phone-dark");
  expect(await seriousAccessibilityViolations(trainee)).toEqual([]);
  await trainee.getByRole("button", { name: "Begin the lesson" }).click();

  // Probe 1 passes four layers and is decided at the login sources; one wrong prediction at the inbound rules.
  const answers: Array<[number, Layer, "pass" | "stop", string?]> = [
    [1, "arrival", "pass"],
    [1, "inbound-rules", "stop", "No answer"],
    [1, "listener", "pass"],
    [1, "service-kind", "pass"],
    [1, "login-sources", "stop", "Login shown, refused"],
    ...LAYERS.map((layer): [number, Layer, "pass" | "stop", string?] => (layer === "second-factor" ? [2, layer, "stop", "Login with second factor"] : [2, layer, "pass"])),
  ];
  for (const [index, [probe, layer, verdict, outcome]] of answers.entries()) {
    if (probe === 2 && answers[index - 1][0] === 1) await trainee.getByRole("link", { name: "Next probe" }).click();
    await expect(trainee.getByRole("heading", { name: `${LAYERS.indexOf(layer) + 1}. ${LAYER_LABELS[layer]} — your prediction` })).toBeVisible();
    await predict(trainee, verdict, outcome);
  }
  await expect(trainee.getByRole("status", { name: "Your score" })).toContainText("You scored 12 of 13");

  // My training: done, on time, with the score.
  await trainee.goto(`${training}/mine`);
  await hydrated(trainee);
  const assigned = trainee.getByRole("row").filter({ hasText: title });
  await expect(assigned).toContainText("Done");
  await expect(assigned).toContainText("12 of 13");
  expect(await sideways(trainee)).toBe(0);
  await screenshot(trainee, "94-training-mine-phone-dark");
  // Another member's results stay unseen: the progress page is the trainers'.
  browserProblems.expect(403, /\/training\/progress$/);
  const refused = await trainee.goto(`${training}/progress`);
  expect(refused?.status()).toBe(403);

  // The trainer's progress table: the score and the wrong layer, and the chart with its table.
  await trainer.goto(`${training}/progress`);
  await hydrated(trainer);
  const row = trainer.getByRole("row").filter({ hasText: team.members.trainee.name }).first();
  await expect(row).toContainText("92%");
  await expect(row).toContainText("12 of 13");
  await expect(row).toContainText("Inbound rules");
  await expect(trainer.getByTestId("score-chart").locator(".recharts-line-dot")).toHaveCount(1);
  await expect(trainer.getByRole("table", { name: /Scores over time/ })).toContainText(title);
  await screenshot(trainer, "95-training-progress");
  expect(await seriousAccessibilityViolations(trainer)).toEqual([]);
  // Sorted by score, highest first, through the URL.
  await trainer.getByRole("link", { name: "Score", exact: true }).click();
  await expect(trainer).toHaveURL(/sort=score&dir=asc/);
  await trainer.getByRole("link", { name: "Score", exact: true }).click();
  await expect(trainer).toHaveURL(/sort=score&dir=desc/);
  await expect(trainer.getByRole("table", { name: /Progress per trainee/ }).getByRole("columnheader", { name: /Score/ })).toHaveAttribute("aria-sort", "descending");

  // The same page on a phone and in dark mode: it fits, the chart still draws, axe passes.
  for (const [viewport, scheme] of [
    [PHONE, "light"],
    [PHONE, "dark"],
    [WIDE, "dark"],
  ] as const) {
    await trainer.setViewportSize(viewport);
    await trainer.emulateMedia({ colorScheme: scheme });
    await trainer.goto(`${training}/progress`);
    await hydrated(trainer);
    await expect(trainer.getByTestId("score-chart").locator(".recharts-line-dot")).toHaveCount(1);
    expect(await sideways(trainer), `${viewport.width} px ${scheme}`).toBe(0);
    expect(await seriousAccessibilityViolations(trainer)).toEqual([]);
    await screenshot(trainer, `96-training-progress-${viewport.width}-${scheme}`);
  }
});
