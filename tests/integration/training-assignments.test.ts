import { afterAll, describe, expect, inject, test } from "vitest";
import { AuditEvent, TrainingAssignment, TrainingAttempt, TrainingDrill, TrainingLesson } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import type { Script } from "#server/training/lessons";
import type { FetchResult, TestClient } from "../support/client";
import { wordsOf } from "../support/html";
import { waitForMail } from "../support/outbox";
import { createdId, makeTrainingTeam, type TrainingTeam } from "../support/training-team";

// Assignments and progress (issue 12 point 5, docs/decisions/016 "Assignments and progress"):
// a trainer assigns a lesson with a due date, the assignee is e-mailed a link from APP_ORIGIN,
// answers after the due date are accepted and marked late, other members' assignments and
// results stay unseen, and the trainer reads each trainee's progress.

const sequelize = getDatabase();
afterAll(() => sequelize.close());

const outboxDir = inject("outboxDir");
const baseUrl = inject("baseUrl");
const words = wordsOf;
const DAY = 86_400_000;
/** A datetime-local value (read as UTC) `days` from now. */
const dueIn = (days: number) => new Date(Date.now() + days * DAY).toISOString().slice(0, 16);

/** A scenario from the login-sources example and a lesson on it (2 probes, 13 points); returns the lesson id. */
async function lesson(team: TrainingTeam, title = "Who may log in"): Promise<string> {
  const trainer = await team.members.reviewer.client();
  const scenarioId = createdId(await trainer.post(`${team.training}/scenarios/new`, { intent: "create", title: `Scenario for ${title}`, summary: "", source: "example", example: "login-sources" }), "scenarios");
  return createdId(await trainer.post(`${team.training}/lessons/new`, { title, introduction: "", scenarioId, withExampleProbes: "on" }), "lessons");
}

/** Posts a form whose fields may repeat (one `assignees` per member chosen). */
function postFields(client: TestClient, path: string, fields: Array<[string, string]>, headers: Record<string, string> = {}): Promise<FetchResult> {
  return client.request(path, { method: "POST", body: new URLSearchParams(fields), headers });
}

function assign(client: TestClient, team: TrainingTeam, target: string, assignees: string[], dueAt = dueIn(7), note = "", headers: Record<string, string> = {}): Promise<FetchResult> {
  return postFields(client, `${team.training}/assignments/new`, [["target", target], ...assignees.map((id): [string, string] => ["assignees", id]), ["dueAt", dueAt], ["note", note]], headers);
}

async function assignmentOf(team: TrainingTeam, userId: string): Promise<TrainingAssignment> {
  return TrainingAssignment.findOne({ where: { organisationId: team.organisationId, assigneeUserId: userId }, order: [["createdAt", "DESC"]], rejectOnEmpty: true });
}

/** Answers every question of the attempt from its script, wrong once at the given question (0-based). */
async function answerAll(client: TestClient, team: TrainingTeam, attemptId: string, wrongAt: number | null): Promise<void> {
  const script = (await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true })).script as Script;
  let position = 0;
  for (const [step, entry] of script.steps.entries()) {
    for (const [layerIndex, layer] of entry.layers.entries()) {
      const wrong = position === wrongAt;
      const verdict = wrong ? (layer.result === "pass" ? "stop" : "pass") : layer.result;
      const outcome = verdict === "stop" ? (wrong ? "silent" : entry.outcome) : "";
      const answered = await client.post(`${team.training}/attempts/${attemptId}`, { intent: "predict", step: String(step), layerIndex: String(layerIndex), verdict, outcome });
      expect(answered.status, words(answered.text).slice(0, 200)).toBe(302);
      position += 1;
    }
  }
}

describe("Assignments", () => {
  test("A trainer assigns a lesson with a due date and a note; the assignee is e-mailed a link from APP_ORIGIN (never the request's Host), begins it there, and the attempt counts for the assignment", async () => {
    const team = await makeTrainingTeam("assign");
    const lessonId = await lesson(team);
    const trainer = await team.members.reviewer.client();
    const due = dueIn(5);
    // A forged Host on the request must not reach the link (OWASP ASVS 4.0.3 5.1.5: host header injection).
    const sent = await assign(trainer, team, `lesson:${lessonId}`, [team.members.trainee.userId, team.members.engineer.userId], due, "Before Friday's session, please.", { "X-Forwarded-Host": "attacker.example" });
    expect(sent.status, words(sent.text).slice(0, 300)).toBe(302);
    expect(sent.location).toBe(`${team.training}/assignments`);

    const assignment = await assignmentOf(team, team.members.trainee.userId);
    expect(assignment.kind).toBe("lesson");
    expect(assignment.lessonId).toBe(lessonId);
    expect(assignment.dueAt.toISOString().slice(0, 16)).toBe(due);
    expect(assignment.note).toBe("Before Friday's session, please.");
    expect(assignment.emailedAt).not.toBeNull();
    expect(await TrainingAssignment.count({ where: { organisationId: team.organisationId } })).toBe(2);
    // Audited once per assignee, naming the lesson and the member.
    const audited = await AuditEvent.findAll({ where: { organisationId: team.organisationId, action: "training.assigned" } });
    expect(audited.map((event) => event.changes.assignee).sort()).toEqual([team.members.engineer.email, team.members.trainee.email].sort());
    expect(audited.every((event) => event.changes.title === "Who may log in" && event.targetType === "training-assignment")).toBe(true);

    const mail = await waitForMail(outboxDir, team.members.trainee.email, /^Training assigned: Who may log in$/);
    expect(mail.text).toContain("Before Friday's session, please.");
    const link = /https?:\/\/\S+\/training\/assignments\/[0-9a-f-]{36}/.exec(mail.text)?.[0] ?? "";
    expect(link).toBe(`${baseUrl}${team.training}/assignments/${assignment.id}`);
    expect(mail.text).not.toContain("attacker.example");

    const trainee = await team.members.trainee.client();
    const page = await trainee.get(new URL(link).pathname);
    expect(page.status).toBe(200);
    expect(words(page.text)).toContain("Not started");
    const attemptId = createdId(await trainee.post(new URL(link).pathname, { intent: "start" }), "attempts");
    expect((await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true })).assignmentId).toBe(assignment.id);
    await answerAll(trainee, team, attemptId, 1);

    const mine = words((await trainee.get(`${team.training}/mine`)).text);
    expect(mine).toMatch(/Who may log in \(lesson\) .* Done 12 of 13/);
    expect(mine).not.toContain("Done late");
    // The trainer's list says so too.
    expect(words((await trainer.get(`${team.training}/assignments`)).text)).toMatch(new RegExp(`${team.members.trainee.name} Who may log in \\(lesson\\) .* Done 12 of 13`));
  });

  test("Beginning an assigned lesson from the lesson's own page still counts for the assignment; once done, a new attempt is practice", async () => {
    const team = await makeTrainingTeam("assign-lesson-page");
    const lessonId = await lesson(team);
    expect((await assign(await team.members.reviewer.client(), team, `lesson:${lessonId}`, [team.members.trainee.userId])).status).toBe(302);
    const assignment = await assignmentOf(team, team.members.trainee.userId);
    const trainee = await team.members.trainee.client();
    const first = createdId(await trainee.post(`${team.training}/lessons/${lessonId}`, { intent: "start" }), "attempts");
    expect((await TrainingAttempt.findByPk(first, { rejectOnEmpty: true })).assignmentId).toBe(assignment.id);
    await answerAll(trainee, team, first, null);
    const second = createdId(await trainee.post(`${team.training}/lessons/${lessonId}`, { intent: "start" }), "attempts");
    expect((await TrainingAttempt.findByPk(second, { rejectOnEmpty: true })).assignmentId).toBeNull();
    const mine = words((await trainee.get(`${team.training}/mine`)).text);
    expect(mine).toMatch(/Assigned to you .* Done 13 of 13/);
    expect(mine).toMatch(/Other attempts .* Who may log in \(lesson\)/);
  });

  test("An answer after the due date is accepted and marked late", async () => {
    const team = await makeTrainingTeam("late");
    const lessonId = await lesson(team);
    expect((await assign(await team.members.reviewer.client(), team, `lesson:${lessonId}`, [team.members.trainee.userId], dueIn(1))).status).toBe(302);
    const assignment = await assignmentOf(team, team.members.trainee.userId);
    const trainee = await team.members.trainee.client();
    const attemptId = createdId(await trainee.post(`${team.training}/assignments/${assignment.id}`, { intent: "start" }), "attempts");
    // The due date passes while the trainee is at it.
    await assignment.update({ dueAt: new Date(Date.now() - 60_000) });
    expect(words((await trainee.get(`${team.training}/assignments/${assignment.id}`)).text)).toContain("Overdue");
    await answerAll(trainee, team, attemptId, null);
    const attempt = await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true });
    expect(attempt.finishedAt!.getTime()).toBeGreaterThan(assignment.dueAt.getTime());
    expect([attempt.points, attempt.possible]).toEqual([13, 13]);
    const page = words((await trainee.get(`${team.training}/assignments/${assignment.id}`)).text);
    expect(page).toContain("Done late");
    expect(page).toContain("after the due date, marked late");
    expect(words((await trainee.get(`${team.training}/mine`)).text)).toMatch(/Done late 13 of 13/);
    const progress = words((await (await team.members.reviewer.client()).get(`${team.training}/progress`)).text);
    expect(progress).toMatch(new RegExp(`${team.members.trainee.name} .*1 late`));
  });

  test("Someone else's assignment is a 404, another organisation's too; a malformed id is a 400; only the assignee begins it", async () => {
    const team = await makeTrainingTeam("assign-privacy");
    const lessonId = await lesson(team);
    expect((await assign(await team.members.reviewer.client(), team, `lesson:${lessonId}`, [team.members.trainee.userId])).status).toBe(302);
    const assignment = await assignmentOf(team, team.members.trainee.userId);
    const path = `${team.training}/assignments/${assignment.id}`;
    // The engineer is no trainer: another member's assignment does not exist for them.
    const engineer = await team.members.engineer.client();
    expect((await engineer.get(path)).status).toBe(404);
    expect((await engineer.post(path, { intent: "start" })).status).toBe(404);
    expect(words((await engineer.get(`${team.training}/mine`)).text)).not.toContain("Who may log in");
    // A trainer reads it but does not begin it for the trainee.
    const trainer = await team.members.reviewer.client();
    expect((await trainer.get(path)).status).toBe(200);
    expect((await trainer.post(path, { intent: "start" })).status).toBe(403);
    expect(await TrainingAttempt.count({ where: { assignmentId: assignment.id } })).toBe(0);
    const stranger = await makeTrainingTeam("assign-privacy-other");
    expect((await (await stranger.members.reviewer.client()).get(`/o/${stranger.slug}/training/assignments/${assignment.id}`)).status).toBe(404);
    expect((await engineer.get(`${team.training}/assignments/not-an-id`)).status).toBe(400);
  });

  test("A trainee cannot assign, withdraw, or open the progress page or its CSV (403); their own results are theirs alone", async () => {
    const team = await makeTrainingTeam("assign-roles");
    const lessonId = await lesson(team);
    const trainee = await team.members.trainee.client();
    expect((await trainee.get(`${team.training}/assignments/new`)).status).toBe(403);
    expect((await assign(trainee, team, `lesson:${lessonId}`, [team.members.trainee.userId])).status).toBe(403);
    expect((await trainee.get(`${team.training}/assignments`)).status).toBe(403);
    expect((await trainee.get(`${team.training}/progress`)).status).toBe(403);
    expect((await trainee.get(`${team.training}/progress.csv`)).status).toBe(403);
    expect(await TrainingAssignment.count({ where: { organisationId: team.organisationId } })).toBe(0);
    expect((await assign(await team.members.reviewer.client(), team, `lesson:${lessonId}`, [team.members.engineer.userId])).status).toBe(302);
    const assignment = await assignmentOf(team, team.members.engineer.userId);
    expect((await trainee.post(`${team.training}/assignments`, { intent: "withdraw", assignmentId: assignment.id })).status).toBe(403);
    expect(await TrainingAssignment.count({ where: { id: assignment.id } })).toBe(1);
  });

  test("Bad assignments are refused beside their field with the input kept, and nothing is saved: a past due date, a non-member, another organisation's lesson, nobody chosen", async () => {
    const team = await makeTrainingTeam("assign-bad");
    const lessonId = await lesson(team);
    const stranger = await makeTrainingTeam("assign-bad-other");
    const theirLesson = await lesson(stranger, "Their lesson");
    const trainer = await team.members.reviewer.client();

    const past = await assign(trainer, team, `lesson:${lessonId}`, [team.members.trainee.userId], dueIn(-1), "Kept note");
    expect(past.status).toBe(400);
    expect(words(past.text)).toContain("The due date must be in the future.");
    expect(past.text).toContain("Kept note");
    expect(past.text).toMatch(new RegExp(`value="${team.members.trainee.userId}" checked=""|checked="" value="${team.members.trainee.userId}"`));

    const outsider = await assign(trainer, team, `lesson:${lessonId}`, [team.members.trainee.userId, stranger.members.trainee.userId]);
    expect(outsider.status).toBe(400);
    expect(words(outsider.text)).toContain("Choose members of this organisation only");

    const foreign = await assign(trainer, team, `lesson:${theirLesson}`, [team.members.trainee.userId]);
    expect(foreign.status).toBe(404);
    expect(words(foreign.text)).toContain("Choose one of this organisation's lessons.");

    const nobody = await assign(trainer, team, `lesson:${lessonId}`, []);
    expect(nobody.status).toBe(400);
    expect(words(nobody.text)).toContain("Choose at least one member.");
    expect((await assign(trainer, team, "lesson:not-an-id", [team.members.trainee.userId])).status).toBe(400);
    expect((await assign(trainer, team, `lesson:${lessonId}`, [team.members.trainee.userId], "2026-02-31T10:00")).status).toBe(400);
    expect((await assign(trainer, team, `lesson:${lessonId}`, [team.members.trainee.userId], dueIn(3), "bell\u0007")).status).toBe(400);
    expect(await TrainingAssignment.count({ where: { organisationId: team.organisationId } })).toBe(0);
  });

  test("A trainer withdraws an assignment: audited, gone from My training, the attempt already made kept", async () => {
    const team = await makeTrainingTeam("withdraw");
    const lessonId = await lesson(team);
    const trainer = await team.members.reviewer.client();
    expect((await assign(trainer, team, `lesson:${lessonId}`, [team.members.trainee.userId])).status).toBe(302);
    const assignment = await assignmentOf(team, team.members.trainee.userId);
    const trainee = await team.members.trainee.client();
    const attemptId = createdId(await trainee.post(`${team.training}/assignments/${assignment.id}`, { intent: "start" }), "attempts");
    const withdrawn = await trainer.post(`${team.training}/assignments`, { intent: "withdraw", assignmentId: assignment.id });
    expect(withdrawn.status).toBe(302);
    expect(await TrainingAssignment.count({ where: { id: assignment.id } })).toBe(0);
    expect((await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true })).assignmentId).toBeNull();
    const audit = await AuditEvent.findOne({ where: { organisationId: team.organisationId, action: "training.assignment-withdrawn", targetId: assignment.id }, rejectOnEmpty: true });
    expect(audit.changes).toMatchObject({ title: "Who may log in", assignee: team.members.trainee.email });
    expect((await trainee.get(`${team.training}/assignments/${assignment.id}`)).status).toBe(404);
    expect(words((await trainee.get(`${team.training}/mine`)).text)).toContain("Nothing assigned");
    expect((await trainer.post(`${team.training}/assignments`, { intent: "withdraw", assignmentId: assignment.id })).status).toBe(404);
  });

  test("A drill is assigned like a lesson: its title from the drill, its link to the drill's page", async () => {
    const team = await makeTrainingTeam("assign-drill");
    const lessonId = await lesson(team);
    const { scenarioId } = await TrainingLesson.findByPk(lessonId, { rejectOnEmpty: true });
    const drill = await TrainingDrill.create({ organisationId: team.organisationId, scenarioId, kind: "predict", title: "Twelve probes on the dental office", createdByUserId: null, createdByEmail: team.members.reviewer.email });
    const trainer = await team.members.reviewer.client();
    expect(words((await trainer.get(`${team.training}/assignments/new`)).text)).toContain("Twelve probes on the dental office (predict drill)");
    expect((await assign(trainer, team, `drill:${drill.id}`, [team.members.trainee.userId])).status).toBe(302);
    const assignment = await assignmentOf(team, team.members.trainee.userId);
    expect([assignment.kind, assignment.drillId, assignment.lessonId]).toEqual(["drill", drill.id, null]);
    await waitForMail(outboxDir, team.members.trainee.email, /^Training assigned: Twelve probes on the dental office$/);
    const trainee = await team.members.trainee.client();
    const mine = await trainee.get(`${team.training}/mine`);
    expect(words(mine.text)).toMatch(/Twelve probes on the dental office \(drill\) .* Not started/);
    const page = await trainee.get(`${team.training}/assignments/${assignment.id}`);
    expect(page.text).toContain(`href="${team.training}/drills/${drill.id}"`);
    // A drill is begun on its own page, not here; begun there, the attempt counts for the assignment.
    expect((await trainee.post(`${team.training}/assignments/${assignment.id}`, { intent: "start" })).status).toBe(409);
    const attemptId = createdId(await trainee.post(`${team.training}/drills/${drill.id}`, { intent: "start" }), "drills/attempts");
    expect((await TrainingAttempt.findByPk(attemptId, { rejectOnEmpty: true })).assignmentId).toBe(assignment.id);
  });
});

describe("Progress", () => {
  test("The trainer's progress table shows each trainee's attempts, score, time and wrong layer, sorts by the URL, and downloads as CSV in the same order", async () => {
    const team = await makeTrainingTeam("progress");
    const lessonId = await lesson(team);
    const trainee = await team.members.trainee.client();
    const attemptId = createdId(await trainee.post(`${team.training}/lessons/${lessonId}`, { intent: "start" }), "attempts");
    // Wrong at question 2: probe 1's inbound rules.
    await answerAll(trainee, team, attemptId, 1);
    const engineer = await team.members.engineer.client();
    const engineerAttempt = createdId(await engineer.post(`${team.training}/lessons/${lessonId}`, { intent: "start" }), "attempts");
    await answerAll(engineer, team, engineerAttempt, null);

    const trainer = await team.members.reviewer.client();
    const page = await trainer.get(`${team.training}/progress`);
    expect(page.status).toBe(200);
    const text = words(page.text);
    expect(text).toMatch(new RegExp(`${team.members.trainee.name} \\S+ 1 92 ?% 12 of 13 .* Inbound rules`));
    expect(text).toMatch(new RegExp(`${team.members.engineer.name} \\S+ 1 100 ?% 13 of 13 .* none`));
    // Scores over time: the text alternative lists both finished attempts.
    expect(text).toMatch(/Scores over time .*Who may log in 92 ?%/);
    const byScore = words((await trainer.get(`${team.training}/progress?sort=score&dir=desc`)).text);
    expect(byScore.indexOf(team.members.engineer.name)).toBeLessThan(byScore.indexOf(team.members.trainee.name));
    const byScoreUp = words((await trainer.get(`${team.training}/progress?sort=score&dir=asc`)).text);
    expect(byScoreUp.indexOf(team.members.trainee.name)).toBeLessThan(byScoreUp.indexOf(team.members.engineer.name));

    const csv = await trainer.get(`${team.training}/progress.csv?sort=score&dir=desc`);
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toContain("text/csv");
    const lines = csv.text.trim().split("\r\n");
    expect(lines[0]).toBe("member_name,member_email,attempts,finished,points,possible,score_percent,time_spent_minutes,last_activity_utc,late,wrong_layers,wrong_layers_label");
    expect(lines[1]).toContain(`${team.members.engineer.name},${team.members.engineer.email},1,1,13,13,100,`);
    expect(lines[2]).toContain(`${team.members.trainee.name},${team.members.trainee.email},1,1,12,13,92,`);
    expect(lines[2]).toMatch(/,inbound-rules:1,Inbound rules$/);
  });
});
