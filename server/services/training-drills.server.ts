// Drills and their attempts (docs/decisions/016, "Drills"). A drill changes under a version
// number with its audit entry in the change's transaction; an attempt snapshots its script when
// it begins (the scenario's model, the probes or the finding, the goals and the trainer's
// answer), so a later edit never changes what a started attempt is graded against. Every answer
// is graded by the pure functions of server/training/drills.ts, one transaction each.
import { Op, type Transaction } from "sequelize";
import { TrainingAttempt, TrainingDrill, TrainingPrediction, TrainingScenario, User, type DrillKind } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { checkExpectations, compileModel, type DeviceModel } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import {
  bestExposure,
  drillQuestionCount,
  drillScore,
  DrillGoalsSchema,
  gradeFix,
  gradeOrder,
  gradePredict,
  gradeSpot,
  moveInOrder,
  predictScript,
  reorderRules,
  spotElements,
  spotFindings,
  type DrillGoal,
  type DrillScript,
  type PredictAnswer,
} from "../training/drills.ts";
import { canonicalJson, EMPTY_LIBRARY, validateDocument, type ModelDocument } from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { invalidModel } from "./devices.server.ts";
import { findAttempt, type AttemptRef, type Viewer } from "./training-lessons.server.ts";
import { findScenario } from "./training-scenarios.server.ts";

export type DrillRef = { organisationId: string; drillId: string };
export type DrillDetails = { title: string; introduction: string; seed: number; count: number };

/** The trainer's answer per kind, as `training_drills.answer` holds it. */
export type SpotAnswer = { findingKey: string; cause: string };
export type FixAnswer = { document: DeviceModel };
export type OrderAnswer = { order: string[] };

export async function findDrill(ref: DrillRef, transaction?: Transaction): Promise<TrainingDrill> {
  const drill = await TrainingDrill.findOne({ where: { id: ref.drillId, organisationId: ref.organisationId }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined });
  if (!drill) throw new Refusal("No such drill in this organisation.", 404);
  return drill;
}

/** A drill's goals as stored; a row that does not read back is a bug, not a refusal. */
export function goalsOf(drill: TrainingDrill): DrillGoal[] {
  return DrillGoalsSchema.parse(drill.goals);
}

export function spotAnswerOf(drill: TrainingDrill): SpotAnswer | null {
  const answer = drill.answer as Partial<SpotAnswer> | null;
  return drill.kind === "spot" && typeof answer?.findingKey === "string" && typeof answer.cause === "string" ? { findingKey: answer.findingKey, cause: answer.cause } : null;
}

export function fixAnswerOf(drill: TrainingDrill, scenario: DeviceModel): DeviceModel {
  const answer = drill.answer as Partial<FixAnswer> | null;
  return answer?.document ?? scenario;
}

/** The trainer's order: the stored one while it still names each of the scenario's rules once, else the scenario's own. */
export function orderAnswerOf(drill: TrainingDrill, scenario: DeviceModel): string[] {
  const answer = drill.answer as Partial<OrderAnswer> | null;
  const order = Array.isArray(answer?.order) ? answer.order.filter((id): id is string => typeof id === "string") : [];
  return reorderRules(scenario, order) ? order : scenario.inboundRules.map((rule) => rule.id);
}

export type DrillRow = { id: string; title: string; kind: DrillKind; scenarioId: string; scenarioTitle: string; updatedAt: string };

export async function listDrills(organisationId: string, where: { scenarioId?: string } = {}): Promise<DrillRow[]> {
  const drills = await TrainingDrill.findAll({ where: { organisationId, ...where }, include: [{ model: TrainingScenario, as: "scenario", attributes: ["id", "title"] }], order: [["title", "ASC"]] });
  return drills.map((drill) => ({ id: drill.id, title: drill.title, kind: drill.kind, scenarioId: drill.scenarioId, scenarioTitle: drill.scenario?.title ?? "", updatedAt: drill.updatedAt.toISOString() }));
}

async function assertTitleFree(organisationId: string, title: string, transaction: Transaction, except?: string): Promise<void> {
  const taken = await TrainingDrill.findOne({ where: { organisationId, title, ...(except ? { id: { [Op.ne]: except } } : {}) }, transaction });
  if (taken) throw new Refusal(`A drill is already called “${title}”: choose another title.`, 409, { field: "title" });
}

/** What a new drill's answer starts as: the scenario itself (fix, order) or its first finding (spot). */
function firstAnswer(kind: DrillKind, document: DeviceModel): SpotAnswer | FixAnswer | OrderAnswer | null {
  switch (kind) {
    case "predict":
      return null;
    case "spot": {
      const first = spotFindings(document)[0];
      return first ? { findingKey: first.key, cause: first.cause } : null;
    }
    case "fix":
      return { document };
    case "order":
      return { order: document.inboundRules.map((rule) => rule.id) };
  }
  return null;
}

export async function createDrill(organisationId: string, input: DrillDetails & { scenarioId: string; kind: DrillKind }, actor: AuditActor): Promise<TrainingDrill> {
  return getDatabase().transaction(async (transaction) => {
    const scenario = await findScenario({ organisationId, scenarioId: input.scenarioId }, transaction).catch((error: unknown) => {
      if (error instanceof Refusal && error.status === 404) throw new Refusal("Choose one of this organisation's scenarios.", 404, { field: "scenarioId" });
      throw error;
    });
    await assertTitleFree(organisationId, input.title, transaction);
    if (input.kind === "order" && scenario.document.inboundRules.length < 2) throw new Refusal("This scenario has fewer than two inbound rules: there is nothing to reorder. Choose another scenario or kind.", 400, { field: "kind" });
    const drill = await TrainingDrill.create(
      {
        organisationId,
        scenarioId: scenario.id,
        kind: input.kind,
        title: input.title,
        introduction: input.introduction,
        seed: input.seed,
        count: input.count,
        goals: [],
        answer: firstAnswer(input.kind, scenario.document),
        createdByUserId: actor.userId,
        createdByEmail: actor.email,
      },
      { transaction },
    );
    await recordAuditEvent(actor, { organisationId, action: "training.drill-created", targetType: "training-drill", targetId: drill.id, changes: { title: drill.title, kind: drill.kind, scenario: scenario.title } }, transaction);
    return drill;
  });
}

function assertVersion(drill: TrainingDrill, expected: number): void {
  if (drill.version !== expected) throw new Refusal(`Not saved: someone changed this drill since you opened it (now version ${drill.version}). Your input is still in the form: reload, then save again.`, 409);
}

type DrillPatch = Partial<Pick<TrainingDrill, "title" | "introduction" | "seed" | "count" | "goals" | "answer">>;

/**
 * One change of a drill (details, goals, the trainer's answer), checked against the scenario as
 * it is now and audited in the same transaction. `change` returns the patch, or null for no change.
 */
export async function changeDrill(ref: DrillRef, expectedVersion: number, change: (drill: TrainingDrill, scenario: DeviceModel) => DrillPatch | null, edit: string, actor: AuditActor): Promise<boolean> {
  return getDatabase().transaction(async (transaction) => {
    const drill = await findDrill(ref, transaction);
    assertVersion(drill, expectedVersion);
    const scenario = await findScenario({ organisationId: ref.organisationId, scenarioId: drill.scenarioId }, transaction);
    const patch = change(drill, scenario.document);
    if (!patch) return false;
    if (patch.title !== undefined && patch.title !== drill.title) await assertTitleFree(ref.organisationId, patch.title, transaction, drill.id);
    const title = drill.title;
    await drill.update({ ...patch, version: drill.version + 1 }, { transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.drill-changed", targetType: "training-drill", targetId: drill.id, changes: { title: patch.title && patch.title !== title ? { from: title, to: patch.title } : title, edit: edit.slice(0, 300) } }, transaction);
    return true;
  });
}

/** A goal must be answerable on the scenario: an interface or service it names must exist there (said beside that field). */
export function assertGoal(document: DeviceModel, goal: DrillGoal): void {
  const [result] = checkExpectations(compileModel(document), [goal]);
  if (result.status === "unknown") {
    const field = /interface/.test(result.words) ? "interface" : /service/.test(result.words) ? "service" : /address|"to"|destination/.test(result.words) ? "to" : "from";
    throw new Refusal(result.words, 400, { field });
  }
}

/** The trainer's answer model of a fix drill, edited in the device editor's sections: invalid → refused with its issues, nothing saved. */
export async function editFixAnswer(ref: DrillRef, expectedVersion: number, apply: (document: ModelDocument) => ModelDocument, message: string, actor: AuditActor): Promise<boolean> {
  return changeDrill(
    ref,
    expectedVersion,
    (drill, scenario) => {
      if (drill.kind !== "fix") throw new Refusal("Only a fix drill has an answer model.", 409);
      const current = fixAnswerOf(drill, scenario);
      const validated = validateDocument(apply(current), EMPTY_LIBRARY);
      if (!validated.ok) throw invalidModel(validated.errors);
      if (canonicalJson(validated.document) === canonicalJson(current)) return null;
      return { answer: { document: validated.document } };
    },
    `answer model: ${message}`,
    actor,
  );
}

export async function deleteDrill(ref: DrillRef, actor: AuditActor): Promise<string> {
  return getDatabase().transaction(async (transaction) => {
    const drill = await findDrill(ref, transaction);
    const attempts = await TrainingAttempt.count({ where: { drillId: drill.id }, transaction });
    await drill.destroy({ transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.drill-deleted", targetType: "training-drill", targetId: drill.id, changes: { title: drill.title, attempts } }, transaction);
    return drill.title;
  });
}

// ---------------------------------------------------------------------------------------------
// Attempts

/** The script a new attempt is graded against, or a refusal that says what the trainer must fix first. */
export function drillScriptOf(drill: TrainingDrill, document: DeviceModel): DrillScript {
  const notReady = (why: string) => new Refusal(`${why} A trainer needs to finish the drill first.`, 409);
  switch (drill.kind) {
    case "predict": {
      const probes = predictScript(document, drill.seed, drill.count);
      if (probes.length === 0) throw notReady("This scenario gives no probe to predict.");
      return { kind: "predict", document, probes, answers: [] };
    }
    case "spot": {
      const answer = spotAnswerOf(drill);
      const found = answer ? spotFindings(document).find((entry) => entry.key === answer.findingKey) : undefined;
      if (!found) throw notReady("The finding this drill asks about is not on the scenario any more.");
      const { finding } = found;
      return { kind: "spot", document, finding: { key: found.key, code: finding.code, title: finding.title, detail: finding.detail, severity: finding.severity }, cause: found.cause, elements: spotElements(document), answers: [] };
    }
    case "fix": {
      const goals = goalsOf(drill);
      if (goals.length === 0) throw notReady("This drill has no goals yet.");
      return { kind: "fix", document, goals, answer: fixAnswerOf(drill, document), sandbox: document, checks: [] };
    }
    case "order": {
      const goals = goalsOf(drill);
      if (goals.length === 0) throw notReady("This drill has no goals yet.");
      const answerOrder = orderAnswerOf(drill, document);
      const best = bestExposure(document, answerOrder, goals);
      if (!best?.goalsHold) throw notReady("The trainer's order does not meet every goal.");
      return { kind: "order", document, goals, order: document.inboundRules.map((rule) => rule.id), best: best.exposed.toString(), checks: [] };
    }
  }
}

/** Begins a drill; `assignmentId` is the member's open assignment of it, if any (openAssignmentFor), so the attempt counts for it. */
export async function startDrillAttempt(ref: DrillRef, userId: string, options: { assignmentId?: string | null } = {}): Promise<TrainingAttempt> {
  const drill = await findDrill(ref);
  const scenario = await findScenario({ organisationId: ref.organisationId, scenarioId: drill.scenarioId });
  const script = drillScriptOf(drill, scenario.document);
  return TrainingAttempt.create({
    organisationId: ref.organisationId,
    userId,
    kind: "drill",
    lessonId: null,
    lessonVersion: null,
    drillId: drill.id,
    assignmentId: options.assignmentId ?? null,
    title: drill.title,
    script,
    questionCount: drillQuestionCount(script),
    points: 0,
    possible: script.kind === "fix" || script.kind === "order" ? drillQuestionCount(script) : script.kind === "spot" ? 1 : 0,
    finishedAt: null,
  });
}

/** A drill attempt, for the member who made it or a trainer (404 otherwise, and for a lesson's attempt). */
export async function findDrillAttempt(ref: AttemptRef, viewer: Viewer, transaction?: Transaction): Promise<TrainingAttempt> {
  const attempt = await findAttempt(ref, viewer, transaction);
  if (attempt.kind !== "drill") throw new Refusal("No such drill attempt in this organisation.", 404);
  return attempt;
}

export function drillScriptOfAttempt(attempt: TrainingAttempt): DrillScript {
  return attempt.script as DrillScript;
}

/**
 * One change of the attempt's script by its taker, in a transaction: only the member taking the
 * drill answers (403 for a trainer looking on); a finished attempt takes no more answers (409).
 */
async function answer<T>(ref: AttemptRef, viewer: Viewer, change: (script: DrillScript, transaction: Transaction, attempt: TrainingAttempt) => Promise<{ script: DrillScript; result: T }>): Promise<T> {
  return getDatabase().transaction(async (transaction) => {
    const attempt = await findDrillAttempt(ref, viewer, transaction);
    if (attempt.userId !== viewer.userId) throw new Refusal("Only the member taking this drill answers it.", 403);
    if (attempt.finishedAt) throw new Refusal("This attempt is finished: begin the drill again to take it once more.", 409);
    const { script, result } = await change(drillScriptOfAttempt(attempt), transaction, attempt);
    const score = drillScore(script);
    const now = new Date();
    await attempt.update({ script, points: score.points, possible: score.possible, lastActivityAt: now, finishedAt: score.finished ? now : null }, { transaction });
    return result;
  });
}

function wrongKind(): Refusal {
  return new Refusal("That answer is not for this kind of drill.", 400);
}

/** A predict answer for the probe the attempt is at (an answer to any other probe: 409). Also a prediction row, so progress reads the wrong layers. */
export async function answerPredict(ref: AttemptRef, viewer: Viewer, index: number, given: PredictAnswer) {
  return answer(ref, viewer, async (script, transaction, attempt) => {
    if (script.kind !== "predict") throw wrongKind();
    if (index !== script.answers.length) throw new Refusal("That probe was already answered or is not reached yet: the page shows the current one.", 409);
    const probe = script.probes[index];
    const grade = gradePredict(probe, given);
    await TrainingPrediction.create(
      {
        attemptId: attempt.id,
        position: index + 1,
        step: index,
        layerIndex: probe.trace.layers.length - 1,
        layer: grade.expected.layer,
        verdict: "stop",
        outcome: given.outcome,
        actualVerdict: "stop",
        actualOutcome: grade.expected.outcome,
        points: grade.points,
        possible: grade.possible,
      },
      { transaction },
    );
    return { script: { ...script, answers: [...script.answers, grade] }, result: grade };
  });
}

export async function answerSpot(ref: AttemptRef, viewer: Viewer, picked: string) {
  return answer(ref, viewer, async (script) => {
    if (script.kind !== "spot") throw wrongKind();
    if (!script.elements.some((element) => element.ref === picked)) throw new Refusal("Pick one of the model's elements.", 400, { field: "element" });
    const grade = gradeSpot(script.cause, picked);
    return { script: { ...script, answers: [grade] }, result: grade };
  });
}

/** An edit of the fix drill's sandbox copy: invalid → refused with its issues beside the fields, nothing saved. */
export async function editSandbox(ref: AttemptRef, viewer: Viewer, apply: (document: ModelDocument) => ModelDocument) {
  return answer(ref, viewer, async (script) => {
    if (script.kind !== "fix") throw wrongKind();
    const validated = validateDocument(apply(script.sandbox), EMPTY_LIBRARY);
    if (!validated.ok) throw invalidModel(validated.errors);
    const changed = canonicalJson(validated.document) !== canonicalJson(script.sandbox);
    return { script: { ...script, sandbox: validated.document }, result: changed };
  });
}

export async function checkFix(ref: AttemptRef, viewer: Viewer) {
  return answer(ref, viewer, async (script) => {
    if (script.kind !== "fix") throw wrongKind();
    const grade = gradeFix(script.sandbox, script.answer, script.goals);
    return { script: { ...script, checks: [...script.checks, grade] }, result: grade };
  });
}

export async function moveRule(ref: AttemptRef, viewer: Viewer, ruleId: string, direction: "up" | "down") {
  return answer(ref, viewer, async (script) => {
    if (script.kind !== "order") throw wrongKind();
    if (!script.order.includes(ruleId)) throw new Refusal("That rule is not in this drill's list.", 400);
    return { script: { ...script, order: moveInOrder(script.order, ruleId, direction) }, result: null };
  });
}

export async function checkOrder(ref: AttemptRef, viewer: Viewer) {
  return answer(ref, viewer, async (script) => {
    if (script.kind !== "order") throw wrongKind();
    const grade = gradeOrder(script.document, script.order, script.goals, BigInt(script.best));
    if (!grade) throw new Refusal("That order does not name each rule once: reload the drill.", 409);
    return { script: { ...script, checks: [...script.checks, { ...grade, order: [...script.order] }] }, result: grade };
  });
}

export type DrillAttemptRow = { id: string; name: string; startedAt: string; finishedAt: string | null; points: number; possible: number };

/** A drill's attempts: all of them for a trainer, the viewer's own otherwise. Newest first. */
export async function attemptsOfDrill(ref: DrillRef, viewer: Viewer): Promise<DrillAttemptRow[]> {
  const attempts = await TrainingAttempt.findAll({
    where: { organisationId: ref.organisationId, drillId: ref.drillId, kind: "drill", ...(viewer.trainer ? {} : { userId: viewer.userId }) },
    include: [{ model: User, as: "user", attributes: ["id", "name"] }],
    order: [["startedAt", "DESC"]],
    limit: 200,
  });
  return attempts.map((attempt) => ({ id: attempt.id, name: attempt.user?.name ?? "", startedAt: attempt.startedAt.toISOString(), finishedAt: attempt.finishedAt?.toISOString() ?? null, points: attempt.points, possible: attempt.possible }));
}
