import { afterAll, describe, expect, test } from "vitest";
import { AuditEvent, TrainingAttempt, TrainingDrill, TrainingPrediction } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import type { DrillScript } from "#server/training/drills";
import { visibleText } from "../support/html";
import { createdId, makeTrainingTeam, type TrainingTeam } from "../support/training-team";

// Drills (issue 12, point 4; docs/decisions/016, "Drills"): trainers manage them (403 for
// anyone else), everyone takes them, other trainees' attempts are a 404, and a sandbox edit that
// makes the model invalid is said beside its field with nothing saved.

const sequelize = getDatabase();
afterAll(() => sequelize.close());

const words = (html: string) => visibleText(html).replace(/\s+/g, " ");

async function scenarioFrom(team: TrainingTeam, example: string): Promise<string> {
  const trainer = await team.members.reviewer.client();
  return createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: `Scenario ${example}`, summary: "", source: "example", example }), "scenarios");
}

/** A repair drill on the rule-order example: two goals, and the trainer's answer (the drop moved below the operations centre's allow). */
async function fixDrill(team: TrainingTeam): Promise<string> {
  const trainer = await team.members.reviewer.client();
  const scenarioId = await scenarioFrom(team, "rule-order");
  const drillId = createdId(await trainer.post(`${team.training}/drills/new`, { title: "Let the operations centre in", introduction: "Only the **operations centre**.", scenarioId, kind: "fix", seed: "", count: "" }), "drills");
  const edit = `${team.training}/drills/${drillId}/edit`;
  const goal = { intent: "add-goal", interface: "outside", service: "https", to: "", when: "all-week" };
  expect((await trainer.post(edit, { ...goal, version: "1", from: "192.0.2.70", expect: "login-mfa" })).status).toBe(302);
  expect((await trainer.post(edit, { ...goal, version: "2", from: "203.0.113.9", expect: "silent" })).status).toBe(302);
  const moved = await trainer.post(`${team.training}/drills/${drillId}/answer/model/rules`, { intent: "move-rule", ruleId: "drop-internet", to: "2", baseRevision: "3" });
  expect(moved.status, words(moved.text).slice(0, 300)).toBe(302);
  return drillId;
}

describe("Drills", () => {
  test("Only trainers manage drills (403 for others), audited in the change's transaction; every member may take one", async () => {
    const team = await makeTrainingTeam("drill-manage");
    const scenarioId = await scenarioFrom(team, "rule-order");
    for (const member of [team.members.trainee, team.members.engineer]) {
      const client = await member.client();
      expect((await client.get(`${team.training}/drills/new`)).status).toBe(403);
      expect((await client.post(`${team.training}/drills/new`, { title: "Not mine", scenarioId, kind: "predict", seed: "1", count: "4" })).status).toBe(403);
    }
    expect(await TrainingDrill.count({ where: { organisationId: team.organisationId } })).toBe(0);

    const trainer = await team.members.reviewer.client();
    const drillId = createdId(await trainer.post(`${team.training}/drills/new`, { title: "Call it", introduction: "", scenarioId, kind: "predict", seed: "5", count: "4" }), "drills");
    const trainee = await team.members.trainee.client();
    expect((await trainee.get(`${team.training}/drills/${drillId}/edit`)).status).toBe(403);
    expect((await trainee.post(`${team.training}/drills/${drillId}/edit`, { intent: "delete-drill" })).status).toBe(403);
    expect((await trainee.get(`${team.training}/drills/${drillId}`)).status).toBe(200);
    expect(words((await trainee.get(team.training)).text)).toContain("Call it");

    const saved = await trainer.post(`${team.training}/drills/${drillId}/edit`, { intent: "save-details", version: "1", title: "Call the outcome", introduction: "", seed: "6", count: "4" });
    expect(saved.status).toBe(302);
    expect((await trainer.post(`${team.training}/drills/${drillId}/edit`, { intent: "delete-drill" })).status).toBe(302);
    const actions = (await AuditEvent.findAll({ where: { organisationId: team.organisationId, targetId: drillId }, order: [["createdAt", "ASC"]] })).map((event) => event.action);
    expect(actions).toEqual(["training.drill-created", "training.drill-changed", "training.drill-deleted"]);
  });

  test("Bad input: a drill form and a goal keep what was typed with a message per field; a malformed id is a 400, another organisation's drill a 404", async () => {
    const team = await makeTrainingTeam("drill-bad");
    const trainer = await team.members.reviewer.client();
    const scenarioId = await scenarioFrom(team, "rule-order");
    const bad = await trainer.post(`${team.training}/drills/new`, { title: "Too many", introduction: "", scenarioId, kind: "predict", seed: "1", count: "500" });
    expect(bad.status).toBe(400);
    expect(words(bad.text)).toContain("Enter a number of probes from 1 to 50.");
    expect(bad.text).toContain('value="Too many"');
    expect((await trainer.post(`${team.training}/drills/new`, { title: "No kind", introduction: "", scenarioId, kind: "vendor", seed: "1", count: "5" })).status).toBe(400);

    const drillId = createdId(await trainer.post(`${team.training}/drills/new`, { title: "Goals", introduction: "", scenarioId, kind: "fix", seed: "", count: "" }), "drills");
    const edit = `${team.training}/drills/${drillId}/edit`;
    const badGoal = await trainer.post(edit, { intent: "add-goal", version: "1", from: "not-an-address", interface: "outside", service: "https", to: "", when: "all-week", expect: "silent" });
    expect(badGoal.status).toBe(400);
    expect(words(badGoal.text)).toContain("Must be one IPv4 or IPv6 address.");
    expect(badGoal.text).toContain('value="not-an-address"');
    const noSuchInterface = await trainer.post(edit, { intent: "add-goal", version: "1", from: "192.0.2.9", interface: "nowhere", service: "https", to: "", when: "all-week", expect: "silent" });
    expect(noSuchInterface.status).toBe(400);
    expect((await TrainingDrill.findByPk(drillId, { rejectOnEmpty: true })).goals).toEqual([]);

    expect((await trainer.get(`${team.training}/drills/not-a-uuid`)).status).toBe(400);
    const elsewhere = await makeTrainingTeam("drill-bad-other");
    expect((await (await elsewhere.members.reviewer.client()).get(`${elsewhere.training}/drills/${drillId}`)).status).toBe(404);
  });

  test("A repair drill: an invalid sandbox edit is said beside its field and saves nothing; other trainees' attempts are a 404; it passes only when every goal holds", async () => {
    const team = await makeTrainingTeam("drill-fix");
    const drillId = await fixDrill(team);
    const trainee = await team.members.trainee.client();
    const attemptId = createdId(await trainee.post(`${team.training}/drills/${drillId}`, { intent: "start" }), "drills/attempts");
    const path = `${team.training}/drills/attempts/${attemptId}`;
    const sandbox = `${path}/model/rules`;
    const sandboxOf = async () => ((await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true })).script as DrillScript & { kind: "fix" }).sandbox;

    // A rule naming an address object that does not exist: refused beside the sources, nothing saved.
    const before = JSON.stringify(await sandboxOf());
    const bad = await trainee.post(sandbox, { intent: "save-rule", id: "allow-partner", interface: "outside", sources: "partner-office", destinations: "any", services: "https", schedule: "all-week", action: "allow", enabled: "on", note: "", baseRevision: "1" });
    expect(bad.status).toBe(400);
    expect(visibleText(bad.text)).toContain("partner-office");
    expect(bad.text).toContain('value="allow-partner"');
    expect(JSON.stringify(await sandboxOf())).toBe(before);

    // Another member (no trainer) finds no such attempt, nor its sandbox.
    const other = await team.members.engineer.client();
    expect((await other.get(path)).status).toBe(404);
    expect((await other.get(sandbox)).status).toBe(404);
    expect((await other.post(path, { intent: "check-fix" })).status).toBe(404);
    expect((await other.post(sandbox, { intent: "delete-rule", ruleId: "drop-internet", baseRevision: "1" })).status).toBe(404);
    // The trainer reads it but does not answer for the trainee.
    const trainer = await team.members.reviewer.client();
    expect((await trainer.get(path)).status).toBe(200);
    expect((await trainer.post(path, { intent: "check-fix" })).status).toBe(403);

    // An incomplete fix: deleting the drop lets the operations centre in and the whole internet to the login page.
    expect((await trainee.post(sandbox, { intent: "delete-rule", ruleId: "drop-internet", baseRevision: "1" })).status).toBe(302);
    expect((await trainee.post(path, { intent: "check-fix" })).status).toBe(302);
    let page = words((await trainee.get(path)).text);
    expect(page).toContain("Not yet: 1 of 2 goals do not hold");
    expect(page).not.toContain("Pass: every goal holds");
    let attempt = await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true });
    expect([attempt.points, attempt.possible, attempt.finishedAt]).toEqual([1, 3, null]);

    // The right fix: put the drop back below the operations centre's allow.
    const restored = await trainee.post(sandbox, { intent: "save-rule", id: "drop-internet", interface: "outside", sources: "any", destinations: "any", services: "any", schedule: "all-week", action: "deny", enabled: "on", note: "", position: "2", baseRevision: "1" });
    expect(restored.status, words(restored.text).slice(0, 300)).toBe(302);
    expect((await trainee.post(path, { intent: "check-fix" })).status).toBe(302);
    page = words((await trainee.get(path)).text);
    expect(page).toContain("Pass: every goal holds");
    attempt = await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true });
    expect(attempt.points).toBe(attempt.possible);
    expect(attempt.finishedAt).not.toBeNull();
    expect(attempt.lastActivityAt.getTime()).toBeGreaterThanOrEqual(attempt.startedAt.getTime());
    // Finished: no more edits.
    expect((await trainee.post(path, { intent: "check-fix" })).status).toBe(409);
  });

  test("A predict drill records each answer with trace()'s answer and the layer, so progress reads wrong layers like a lesson's", async () => {
    const team = await makeTrainingTeam("drill-predict");
    const trainer = await team.members.reviewer.client();
    const scenarioId = await scenarioFrom(team, "login-sources");
    const drillId = createdId(await trainer.post(`${team.training}/drills/new`, { title: "Call three", introduction: "", scenarioId, kind: "predict", seed: "3", count: "3" }), "drills");
    const trainee = await team.members.trainee.client();
    const attemptId = createdId(await trainee.post(`${team.training}/drills/${drillId}`, { intent: "start" }), "drills/attempts");
    const path = `${team.training}/drills/attempts/${attemptId}`;
    const script = (await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true })).script as DrillScript & { kind: "predict" };
    expect(script.probes).toHaveLength(3);
    // Out of turn: refused.
    expect((await trainee.post(path, { intent: "predict", index: "1", outcome: "silent", layer: "arrival" })).status).toBe(409);
    for (const [index, probe] of script.probes.entries()) {
      // Every answer right but the first probe's layer.
      const layer = index === 0 ? (probe.expected.decidingLayer === "arrival" ? "second-factor" : "arrival") : probe.expected.decidingLayer;
      expect((await trainee.post(path, { intent: "predict", index: String(index), outcome: probe.expected.outcome, layer })).status).toBe(302);
    }
    const attempt = await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true });
    expect([attempt.points, attempt.possible]).toEqual([5, 6]);
    expect(attempt.finishedAt).not.toBeNull();
    const wrong = await TrainingPrediction.findAll({ where: { attemptId }, order: [["position", "ASC"]] });
    expect(wrong.filter((row) => row.points < row.possible).map((row) => row.layer)).toEqual([script.probes[0].expected.decidingLayer]);
    expect(words((await trainer.get(`${team.training}/drills/${drillId}`)).text)).toContain("5 of 6");
  });
});
