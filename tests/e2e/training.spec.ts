import type { Locator, Page } from "@playwright/test";
import { LAYER_LABELS, LAYERS, type Layer } from "#server/engine/vocabulary";
import { expect, test } from "./fixtures";
import { hydrated, screenshot, seriousAccessibilityViolations, toast } from "./helpers";
import { createTeam, type Team } from "./team";

// Each test makes its own organisation, so the two workers may share this file's tests.
test.describe.configure({ mode: "parallel" });

// Training (issue 12, docs/decisions/016): a trainer builds a lesson from a shipped example, a
// trainee takes it and predicts each layer before it is revealed, the trainer reads the score.

/** The layer labels after `layer`: none of them may be on the page or in its accessibility tree yet. */
async function expectNoLaterLayer(page: Page, layer: Layer): Promise<void> {
  const later = LAYERS.slice(LAYERS.indexOf(layer) + 1).map((entry) => LAYER_LABELS[entry]);
  const text = await page.locator("body").innerText();
  const tree = await page.locator("body").ariaSnapshot();
  for (const label of later) {
    expect(text, `page text names ${label}`).not.toContain(label);
    expect(tree, `accessibility tree names ${label}`).not.toContain(label);
  }
}

async function predict(page: Page, verdict: "pass" | "stop", outcome?: string): Promise<void> {
  const form = page.getByRole("form", { name: /^Predict: / });
  await form.getByLabel(verdict === "pass" ? "Passes it on to the next layer" : "Decides the outcome here").check();
  if (outcome) await form.getByLabel("If it decides here: what does the outsider get?").selectOption({ label: outcome });
  await form.getByRole("button", { name: "Reveal" }).click();
}

async function memberPage(browser: import("@playwright/test").Browser, team: Team, role: keyof Team["members"], watch: (context: import("@playwright/test").BrowserContext) => void): Promise<Page> {
  const context = await browser.newContext({ storageState: team.members[role].storageState, viewport: { width: 1366, height: 860 }, reducedMotion: "reduce" });
  watch(context);
  return context.newPage();
}

test("A trainer builds a lesson from a shipped example; a trainee takes it with one wrong prediction, never told of a layer before reaching it; the trainer reads the score", async ({ browser, playwright, baseURL, browserProblems }) => {
  test.setTimeout(180_000);
  const team = await createTeam(playwright.request, baseURL!, "training");
  const training = `/o/${team.slug}/training`;

  // An admin gives the engineer the trainer capability on the Members page.
  const admin = await memberPage(browser, team, "admin", (context) => browserProblems.watch(context));
  await admin.goto(`/o/${team.slug}/settings/members`);
  await admin.getByRole("button", { name: `Make ${team.members.engineer.name} a trainer` }).click();
  await expect(toast(admin)).toContainText("Trainer capability given");
  await screenshot(admin, "80-training-trainer-flag");

  // The trainer starts a scenario from the login-sources example and builds a lesson on it.
  const trainer = await memberPage(browser, team, "engineer", (context) => browserProblems.watch(context));
  await trainer.goto(training);
  await hydrated(trainer);
  await screenshot(trainer, "81-training-home");
  await trainer.getByRole("link", { name: "Use the example Login sources: the page answers, the login is refused" }).click();
  await expect(trainer.getByLabel("Title")).toHaveValue("Login sources: the page answers, the login is refused");
  await trainer.getByRole("button", { name: "Create scenario" }).click();
  await expect(trainer.getByText("Teaching scenario — not a fleet device")).toBeVisible();
  await screenshot(trainer, "82-training-scenario");
  await trainer.goto(training);
  await trainer.getByRole("link", { name: "New lesson" }).click();
  await trainer.getByLabel("Title").fill("Who may log in from the internet");
  await trainer.getByLabel("Introduction (optional, Markdown)").fill("Two probes on Quillon Dental's web console. Predict **each** layer before you reveal it.");
  await trainer.getByRole("button", { name: "Create lesson" }).click();
  await expect(trainer.getByRole("heading", { name: "Edit: Who may log in from the internet" })).toBeVisible();
  // A note with Markdown and raw HTML: the Markdown renders, the HTML never does.
  await trainer.getByRole("link", { name: "Edit probe 1" }).click();
  const probeForm = trainer.getByRole("form", { name: "Probe 1" });
  await probeForm.getByLabel("Inbound rules").fill('**allow-console** lets every source reach the page. <img src=x onerror="alert(1)"><b>raw</b>');
  await probeForm.getByRole("button", { name: "Save probe 1" }).click();
  await expect(toast(trainer)).toContainText("Probe 1 saved.");
  await screenshot(trainer, "83-training-lesson-editor");
  const lessonPath = (await trainer.getByRole("link", { name: "Lesson page" }).getAttribute("href")) ?? "";

  // The trainee takes it.
  const trainee = await memberPage(browser, team, "trainee", (context) => browserProblems.watch(context));
  await trainee.goto(training);
  await trainee.getByRole("link", { name: "Who may log in from the internet" }).click();
  await trainee.getByRole("button", { name: "Begin the lesson" }).click();
  await expect(trainee.getByRole("heading", { name: "1. Arrival — your prediction" })).toBeVisible();
  await hydrated(trainee);
  // Before any layer is revealed, neither the text nor the accessibility tree names a later layer.
  await expectNoLaterLayer(trainee, "arrival");
  expect(await trainee.locator("body").innerText()).toContain("Probe 1 of 2");
  await screenshot(trainee, "84-training-first-step");
  expect(await seriousAccessibilityViolations(trainee)).toEqual([]);

  // Probe 1 (192.0.2.50 → wan https) passes four layers and is decided at the login sources.
  const answers: Array<[Layer, "pass" | "stop", string?]> = [
    ["arrival", "pass"],
    ["inbound-rules", "stop", "No answer"], // the one wrong prediction
    ["listener", "pass"],
    ["service-kind", "pass"],
    ["login-sources", "stop", "Login shown, refused"],
  ];
  for (const [layer, verdict, outcome] of answers) {
    const index = LAYERS.indexOf(layer);
    await expect(trainee.getByRole("heading", { name: `${index + 1}. ${LAYER_LABELS[layer]} — your prediction` })).toBeVisible();
    await expectNoLaterLayer(trainee, layer);
    await predict(trainee, verdict, outcome);
    await expect(trainee.getByRole("heading", { name: `${index + 1}. ${LAYER_LABELS[layer]}`, exact: true })).toBeVisible();
    if (layer === "inbound-rules") {
      const revealed = trainee.getByRole("listitem").filter({ has: trainee.getByRole("heading", { name: "2. Inbound rules", exact: true }) });
      await expect(revealed).toContainText("✗ Not quite");
      await expect(revealed.locator("strong", { hasText: "allow-console" })).toBeVisible();
      await expect(revealed.locator("b, img")).toHaveCount(0);
      await screenshot(trainee, "85-training-revealed");
    }
  }
  await expect(trainee.getByLabel("Outcome", { exact: true })).toContainText("Login page shown, login refused: no account allows this source.");
  await trainee.getByRole("link", { name: "Next probe" }).click();
  // Probe 2 (from the IT partner) reaches all six layers; every answer right.
  for (const layer of LAYERS) {
    await expect(trainee.getByRole("heading", { name: `${LAYERS.indexOf(layer) + 1}. ${LAYER_LABELS[layer]} — your prediction` })).toBeVisible();
    await expectNoLaterLayer(trainee, layer);
    await predict(trainee, layer === "second-factor" ? "stop" : "pass", layer === "second-factor" ? "Login with second factor" : undefined);
  }
  const score = trainee.getByRole("status", { name: "Your score" });
  await expect(score).toContainText("You scored 12 of 13");
  await expect(score).toContainText("Probe 1, Inbound rules");
  await screenshot(trainee, "86-training-score");

  // The trainer's results: the trainee, the score and the wrong layer.
  await trainer.goto(lessonPath);
  const row = trainer.getByRole("row").filter({ hasText: team.members.trainee.name });
  await expect(row).toContainText("12 of 13");
  await expect(row).toContainText("probe 1: Inbound rules");
  await screenshot(trainer, "87-training-results");

  // Presenter mode: large type, → reveals the next layer, ← goes back; the link opens at the first probe.
  await trainer.getByRole("link", { name: "Present" }).click();
  await hydrated(trainer);
  const dialog = trainer.getByRole("dialog", { name: "Presenting Who may log in from the internet" });
  await expect(dialog.getByRole("heading", { name: "1. Arrival — what does it do?" })).toBeVisible();
  await expectNoLaterLayer(trainer, "arrival");
  await trainer.keyboard.press("ArrowRight");
  await expect(trainer).toHaveURL(/present\?probe=1&shown=1$/);
  await expect(dialog.getByRole("heading", { name: "2. Inbound rules — what does it do?" })).toBeVisible();
  await expect(dialog.getByText("passes", { exact: true })).toBeVisible();
  await screenshot(trainer, "88-training-presenter");
  await trainer.keyboard.press("ArrowLeft");
  await expect(trainer).toHaveURL(/present\?probe=1&shown=0$/);
  await expect(dialog.getByRole("heading", { name: "1. Arrival — what does it do?" })).toBeVisible();
  await trainer.keyboard.press("Escape");
  await expect(trainer).toHaveURL(new RegExp(`${lessonPath}$`));
});

/** An invented branch edge with 17 rules and long names (RFC 5737 outside): more than the canvas once showed. */
function manyRulesModel(): object {
  const rules = Array.from({ length: 16 }, (_, index) => ({
    id: `allow-branch-office-${String(index + 1).padStart(2, "0")}-to-the-web-console-in-audits`,
    interface: "wan",
    sources: [`branch-${index + 1}`],
    destinations: ["any"],
    services: ["https"],
    action: "allow",
  }));
  return {
    schemaVersion: 2,
    device: { name: "fenwick-edge", timezone: "Europe/Dublin" },
    interfaces: [{ name: "wan", role: "wan", addresses: ["203.0.113.1/24"], listeners: ["https"] }],
    addresses: rules.map((_, index) => ({ name: `branch-${index + 1}`, entries: [`198.51.100.${index + 1}`] })),
    inboundRules: [...rules, { id: "drop-everything-else", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" }],
    accounts: [{ name: "ops-anneli", loginSources: [], secondFactor: "none" }],
  };
}

test("The Trace tab's walkthrough opens a shared link at the first step with all six layers unrevealed; the canvas shows every rule's full name and marks the deciding layer by what it decided", async ({ browser, playwright, baseURL, browserProblems }) => {
  test.setTimeout(120_000);
  const team = await createTeam(playwright.request, baseURL!, "canvas");
  const engineer = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL! }, storageState: team.members.engineer.storageState });
  const imported = await engineer.post(`/o/${team.slug}/devices/import`, { multipart: { intent: "import", target: "site:new", siteName: "Fenwick branch", fileName: "fenwick-edge.json", documentText: JSON.stringify(manyRulesModel()) }, maxRedirects: 0 });
  const device = imported.headers()["location"];
  expect(device).toMatch(/\/devices\/[0-9a-f-]{36}$/);
  await engineer.dispose();
  const trainee = await memberPage(browser, team, "trainee", (context) => browserProblems.watch(context));

  // A probe stopped at the inbound rules: its shared link opens with nothing revealed, and the
  // list names all six layers — not only the ones it will pass.
  await trainee.goto(`${device}/analysis?from=192.0.2.99&interface=wan&service=https`);
  await hydrated(trainee);
  const verdicts = trainee.getByRole("list", { name: "Layer verdicts" });
  await expect(verdicts.getByRole("listitem")).toHaveCount(6);
  await expect(trainee.getByText("Layer 0 of 6")).toBeVisible();
  await expect(verdicts).not.toContainText("not reached");
  await expect(verdicts).not.toContainText("decides");
  await expect(verdicts).not.toContainText("passes");
  await screenshot(trainee, "89-walkthrough-shared-link");
  await trainee.getByRole("button", { name: "Show all" }).click();
  await expect(verdicts.getByRole("listitem").nth(1)).toContainText("decides: no answer");
  await expect(verdicts.getByRole("listitem").nth(2)).toContainText("not reached");

  // The sixteenth branch gets a password login: every rule's full name is on the canvas, the
  // matching one scrolled into view, and the second factor layer says what it decided.
  const fullNames = (manyRulesModel() as { inboundRules: Array<{ id: string }> }).inboundRules.map((rule) => rule.id);
  await trainee.goto(`${device}/analysis?from=198.51.100.16&interface=wan&service=https&reveal=all`);
  await hydrated(trainee);
  const ruleList: Locator = trainee.getByRole("list", { name: `Inbound rules, all ${fullNames.length}, in order` });
  await expect(ruleList.getByRole("listitem")).toHaveCount(fullNames.length);
  for (const [index, name] of fullNames.entries()) await expect(ruleList.getByRole("listitem").nth(index)).toContainText(name);
  await expect(ruleList.getByRole("listitem").nth(15)).toBeInViewport();
  const deciding = trainee.getByTestId("rf__node-second-factor");
  await expect(deciding).toContainText("decides: password login");
  expect(await deciding.locator("div").first().getAttribute("class")).not.toMatch(/danger/);
  await expect(verdicts.getByRole("listitem").nth(5)).toContainText("decides: password login");
  await screenshot(trainee, "90-canvas-deciding-layer");
});
