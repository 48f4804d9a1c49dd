import { afterAll, describe, expect, test } from "vitest";
import { TrainingAttempt, TrainingLesson, TrainingPrediction } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { LAYER_LABELS, LAYERS } from "#server/engine/vocabulary";
import type { TestClient } from "../support/client";
import { visibleText } from "../support/html";
import { createdId, makeTrainingTeam, type TrainingTeam } from "../support/training-team";

// Lessons (issue 12, docs/decisions/016): built by trainers, taken by everyone, predictions saved
// and scored, other trainees' results unseen.

const sequelize = getDatabase();
afterAll(() => sequelize.close());

const words = (html: string) => visibleText(html).replace(/\s+/g, " ");

/** A scenario from the example and a lesson on it with the example's probes; returns the lesson id. */
async function lessonFromExample(team: TrainingTeam, example: string, title = `Lesson on ${example}`): Promise<string> {
  const trainer = await team.members.reviewer.client();
  const scenarioId = createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: `Scenario ${example}`, summary: "", source: "example", example }), "scenarios");
  return createdId(await trainer.post(`${team.training}/lessons/new`, { title, introduction: "Predict each layer.", scenarioId, withExampleProbes: "on" }), "lessons");
}

async function begin(client: TestClient, team: TrainingTeam, lessonId: string): Promise<string> {
  return createdId(await client.post(`${team.training}/lessons/${lessonId}`, { intent: "start" }), "attempts");
}

/** The question the attempt page asks: its hidden step and layer index, and the layer's title. */
function questionOn(html: string): { step: string; layerIndex: string } | null {
  const step = /name="step" value="(\d+)"/.exec(html)?.[1];
  const layerIndex = /name="layerIndex" value="(\d+)"/.exec(html)?.[1];
  return step !== undefined && layerIndex !== undefined ? { step, layerIndex } : null;
}

describe("Lessons", () => {
  test("A trainee takes a lesson built from an example: one layer revealed per prediction, nothing later named before it is reached, one wrong prediction scored and shown to the trainer", async () => {
    const team = await makeTrainingTeam("take");
    // login-sources: probe 1 stops at the login sources (4 layers), probe 2 reaches all six.
    const lessonId = await lessonFromExample(team, "login-sources");
    const lesson = await TrainingLesson.findByPk(lessonId, { rejectOnEmpty: true });
    expect(lesson.steps).toHaveLength(2);

    const trainee = await team.members.trainee.client();
    const attemptId = await begin(trainee, team, lessonId);
    const path = `${team.training}/attempts/${attemptId}`;
    const expected = [
      // [step, layer, verdict, outcome]
      ["0", "arrival", "pass"],
      ["0", "inbound-rules", "pass"],
      ["0", "listener", "pass"],
      ["0", "service-kind", "pass"],
      ["0", "login-sources", "stop", "login-denied"],
      ["1", "arrival", "pass"],
      ["1", "inbound-rules", "pass"],
      ["1", "listener", "pass"],
      ["1", "service-kind", "pass"],
      ["1", "login-sources", "pass"],
      ["1", "second-factor", "stop", "login-mfa"],
    ] as const;
    for (const [index, [step, layer, verdict, outcome]] of expected.entries()) {
      const page = await trainee.get(path);
      expect(page.status).toBe(200);
      const text = words(page.text);
      const layerIndex = LAYERS.indexOf(layer);
      expect(questionOn(page.text)).toEqual({ step, layerIndex: String(layerIndex) });
      // The layer asked about is named; no layer after it is, by name or by number.
      expect(text).toContain(`${layerIndex + 1}. ${LAYER_LABELS[layer]} — your prediction`);
      for (const later of LAYERS.slice(layerIndex + 1)) expect(text, `${layer}: ${LAYER_LABELS[later]}`).not.toContain(LAYER_LABELS[later]);
      // One wrong prediction: the trainee thinks the inbound rules of probe 1 decide.
      const wrong = index === 1;
      const posted = wrong ? { verdict: "stop", outcome: "silent" } : { verdict, outcome: outcome ?? "" };
      const answered = await trainee.post(path, { intent: "predict", step, layerIndex: String(layerIndex), ...posted });
      expect(answered.status, words(answered.text).slice(0, 300)).toBe(302);
    }
    const finished = words((await trainee.get(`${path}?probe=1`)).text);
    // 11 verdicts and 2 outcomes; the wrong one costs its point.
    expect(finished).toContain("You scored 12 of 13");
    expect(finished).toMatch(/Probe 1, Inbound rules ?: predicted it decides \(no answer\); it passes\./);
    const attempt = await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true });
    expect(attempt.finishedAt).not.toBeNull();
    expect([attempt.points, attempt.possible]).toEqual([12, 13]);
    expect(await TrainingPrediction.count({ where: { attemptId } })).toBe(11);

    // The trainer sees the score and the wrong layer on the lesson page.
    const results = words((await (await team.members.reviewer.client()).get(`${team.training}/lessons/${lessonId}`)).text);
    expect(results).toContain(team.members.trainee.name);
    expect(results).toContain("12 of 13");
    expect(results).toContain("probe 1: Inbound rules");
  });

  test("Other trainees' results are a 404; a trainer reads them but cannot answer for the trainee (403)", async () => {
    const team = await makeTrainingTeam("privacy");
    const lessonId = await lessonFromExample(team, "rule-order");
    const trainee = await team.members.trainee.client();
    const attemptId = await begin(trainee, team, lessonId);
    const path = `${team.training}/attempts/${attemptId}`;
    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "pass" })).status).toBe(302);

    // The engineer is no trainer: another member's attempt does not exist for them.
    const other = await team.members.engineer.client();
    expect((await other.get(path)).status).toBe(404);
    expect((await other.post(path, { intent: "predict", step: "0", layerIndex: "1", verdict: "pass" })).status).toBe(404);
    const theirs = words((await other.get(`${team.training}/lessons/${lessonId}`)).text);
    expect(theirs).not.toContain(team.members.trainee.name);

    const trainer = await team.members.reviewer.client();
    const watched = await trainer.get(path);
    expect(watched.status).toBe(200);
    expect(words(watched.text)).toContain(`The attempt of ${team.members.trainee.name}`);
    expect(questionOn(watched.text)).toBeNull();
    expect((await trainer.post(path, { intent: "predict", step: "0", layerIndex: "1", verdict: "pass" })).status).toBe(403);
    expect(await TrainingPrediction.count({ where: { attemptId } })).toBe(1);

    // Another organisation's attempt is a 404 too; a malformed id a 400.
    const stranger = await makeTrainingTeam("privacy-other");
    expect((await (await stranger.members.reviewer.client()).get(`/o/${stranger.slug}/training/attempts/${attemptId}`)).status).toBe(404);
    expect((await trainee.get(`${team.training}/attempts/not-an-id`)).status).toBe(400);
  });

  test("Bad predictions: 'it decides' without an outcome is said beside the field, with the choice kept; an answered question cannot be answered again", async () => {
    const team = await makeTrainingTeam("bad-predictions");
    const lessonId = await lessonFromExample(team, "rule-order");
    const trainee = await team.members.trainee.client();
    const attemptId = await begin(trainee, team, lessonId);
    const path = `${team.training}/attempts/${attemptId}`;
    const missing = await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "stop", outcome: "" });
    expect(missing.status).toBe(400);
    expect(words(missing.text)).toContain("You say this layer decides: choose the outcome it gives.");
    expect(missing.text).toMatch(/name="verdict" (checked="" value="stop"|value="stop" checked="")/);
    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "maybe" })).status).toBe(400);
    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "pass", outcome: "no-such-outcome" })).status).toBe(400);
    expect(await TrainingPrediction.count({ where: { attemptId } })).toBe(0);

    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "pass" })).status).toBe(302);
    // Answering it again (after it was revealed), or skipping ahead, is refused.
    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "stop", outcome: "silent" })).status).toBe(409);
    expect((await trainee.post(path, { intent: "predict", step: "1", layerIndex: "0", verdict: "pass" })).status).toBe(409);
    expect(await TrainingPrediction.count({ where: { attemptId } })).toBe(1);
  });

  test("A trainee cannot build, change or present lessons (403); a trainer's bad probe is said beside its field; a stale form is refused; a scenario in use is not deleted", async () => {
    const team = await makeTrainingTeam("lesson-editing");
    const lessonId = await lessonFromExample(team, "schedule-window");
    const trainee = await team.members.trainee.client();
    const edit = `${team.training}/lessons/${lessonId}/edit`;
    expect((await trainee.get(`${team.training}/lessons/new`)).status).toBe(403);
    expect((await trainee.get(edit)).status).toBe(403);
    expect((await trainee.post(edit, { intent: "delete-step", index: "0", version: "1" })).status).toBe(403);
    expect((await trainee.get(`${team.training}/lessons/${lessonId}/present`)).status).toBe(403);

    const trainer = await team.members.reviewer.client();
    const unknown = await trainer.post(edit, { intent: "add-step", version: "1", from: "203.0.113.9", interface: "no-such-port", service: "https" });
    expect(unknown.status).toBe(400);
    expect(words(unknown.text)).toContain("no-such-port");
    expect(unknown.text).toContain('value="203.0.113.9"');
    const malformed = await trainer.post(edit, { intent: "add-step", version: "1", from: "203.0.113", interface: "wan", service: "https" });
    expect(malformed.status).toBe(400);
    expect((await TrainingLesson.findByPk(lessonId, { rejectOnEmpty: true })).version).toBe(1);

    const added = await trainer.post(edit, { intent: "add-step", version: "1", from: "10.40.0.20", interface: "lan", service: "ssh", "note-login-sources": "*shop-admin* may log in from the shop." });
    expect(added.status).toBe(302);
    const lesson = await TrainingLesson.findByPk(lessonId, { rejectOnEmpty: true });
    expect(lesson.version).toBe(2);
    expect(lesson.steps).toHaveLength(3);
    expect((lesson.steps as Array<{ notes: Record<string, string> }>)[2].notes).toEqual({ "login-sources": "*shop-admin* may log in from the shop." });
    expect((await trainer.post(edit, { intent: "delete-step", index: "0", version: "1" })).status).toBe(409);
    expect((await trainer.post(edit, { intent: "move-step", index: "2", direction: "up", version: "2" })).status).toBe(302);
    expect(((await TrainingLesson.findByPk(lessonId, { rejectOnEmpty: true })).steps as Array<{ probe: { interface: string } }>).map((step) => step.probe.interface)).toEqual(["wan", "lan", "wan"]);

    const scenarioId = lesson.scenarioId;
    const refused = await trainer.post(`${team.training}/scenarios/${scenarioId}`, { intent: "delete" });
    expect(refused.status).toBe(409);
    expect(words(refused.text)).toContain(lesson.title);
  });

  test("An attempt is graded against the scenario as it was when it began, whatever the trainer changes later", async () => {
    const team = await makeTrainingTeam("snapshot");
    const lessonId = await lessonFromExample(team, "rule-order");
    const trainee = await team.members.trainee.client();
    const attemptId = await begin(trainee, team, lessonId);
    const trainer = await team.members.reviewer.client();
    const lesson = await TrainingLesson.findByPk(lessonId, { rejectOnEmpty: true });
    // The trainer fixes the rule order: the drop no longer comes first.
    expect((await trainer.post(`${team.training}/scenarios/${lesson.scenarioId}/model/rules`, { intent: "move-rule", ruleId: "drop-internet", to: "2", baseRevision: "1" })).status).toBe(302);
    const path = `${team.training}/attempts/${attemptId}`;
    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "0", verdict: "pass" })).status).toBe(302);
    // In the snapshot, drop-internet still decides probe 1.
    expect((await trainee.post(path, { intent: "predict", step: "0", layerIndex: "1", verdict: "stop", outcome: "silent" })).status).toBe(302);
    const attempt = await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true });
    expect([attempt.points, attempt.possible]).toEqual([3, 3]);
    // A new attempt reads the scenario as it is now.
    const second = await begin(trainee, team, lessonId);
    const secondPath = `${team.training}/attempts/${second}`;
    await trainee.post(secondPath, { intent: "predict", step: "0", layerIndex: "0", verdict: "pass" });
    const page = words((await trainee.get(secondPath)).text);
    expect(page).toContain("2. Inbound rules — your prediction");
    await trainee.post(secondPath, { intent: "predict", step: "0", layerIndex: "1", verdict: "stop", outcome: "silent" });
    expect((await TrainingAttempt.findByPk(second, { rejectOnEmpty: true })).points).toBe(1);
  });
});
