// Lessons and attempts (docs/decisions/016). Lessons change under a version number, with their
// audit entry in the change's transaction; an attempt snapshots its script when it begins, and
// its predictions are graded in order, one transaction each.
import { Op, type Transaction } from "sequelize";
import { TrainingAttempt, TrainingLesson, TrainingPrediction, TrainingScenario, User } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { compileModel, isLayer, isOutcome, ProbeError, trace, type DeviceModel } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { trainingExample } from "../training/examples.ts";
import { grade, LessonStepsSchema, MAX_LESSON_STEPS, questionAt, questionCount, scriptOf, stepProbe, type Graded, type LessonStep, type Prediction, type Script, type Verdict } from "../training/lessons.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { findScenario } from "./training-scenarios.server.ts";

export type LessonRef = { organisationId: string; lessonId: string };
export type LessonDetails = { title: string; introduction: string };

export async function findLesson(ref: LessonRef, transaction?: Transaction): Promise<TrainingLesson> {
  const lesson = await TrainingLesson.findOne({ where: { id: ref.lessonId, organisationId: ref.organisationId }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined });
  if (!lesson) throw new Refusal("No such lesson in this organisation.", 404);
  return lesson;
}

/** A lesson's steps as stored; a row that does not read back is a bug, not a refusal. */
export function stepsOf(lesson: TrainingLesson): LessonStep[] {
  return LessonStepsSchema.parse(lesson.steps).map((step) => ({ probe: stepProbe(step.probe), notes: step.notes }));
}

export type LessonRow = { id: string; title: string; scenarioId: string; scenarioTitle: string; probes: number; updatedAt: string };

export async function listLessons(organisationId: string, where: { scenarioId?: string } = {}): Promise<LessonRow[]> {
  const lessons = await TrainingLesson.findAll({ where: { organisationId, ...where }, include: [{ model: TrainingScenario, as: "scenario", attributes: ["id", "title"] }], order: [["title", "ASC"]] });
  return lessons.map((lesson) => {
    const scenario = (lesson as TrainingLesson & { scenario?: TrainingScenario }).scenario;
    return { id: lesson.id, title: lesson.title, scenarioId: lesson.scenarioId, scenarioTitle: scenario?.title ?? "", probes: Array.isArray(lesson.steps) ? lesson.steps.length : 0, updatedAt: lesson.updatedAt.toISOString() };
  });
}

async function assertTitleFree(organisationId: string, title: string, transaction: Transaction, except?: string): Promise<void> {
  const taken = await TrainingLesson.findOne({ where: { organisationId, title, ...(except ? { id: { [Op.ne]: except } } : {}) }, transaction });
  if (taken) throw new Refusal(`A lesson is already called “${title}”: choose another title.`, 409, { field: "title" });
}

/** Every step must trace on the scenario as it is now: a probe that does not is said beside its field. */
function assertSteps(document: DeviceModel, steps: readonly LessonStep[]): void {
  if (steps.length > MAX_LESSON_STEPS) throw new Refusal(`A lesson holds at most ${MAX_LESSON_STEPS} probes.`, 400);
  const device = compileModel(document);
  for (const [index, step] of steps.entries()) {
    try {
      trace(device, step.probe);
    } catch (error) {
      if (!(error instanceof ProbeError)) throw error;
      const field = /interface/.test(error.message) ? "interface" : /account/.test(error.message) ? "account" : /service/.test(error.message) ? "service" : /time|date|instant|"at"/i.test(error.message) ? "at" : /"to"|destination|not an address of/.test(error.message) ? "to" : "from";
      throw new Refusal(`Probe ${index + 1}: ${error.message}`, 400, { field });
    }
  }
}

export async function createLesson(organisationId: string, input: LessonDetails & { scenarioId: string; withExampleProbes: boolean }, actor: AuditActor): Promise<TrainingLesson> {
  return getDatabase().transaction(async (transaction) => {
    const scenario = await findScenario({ organisationId, scenarioId: input.scenarioId }, transaction).catch((error: unknown) => {
      if (error instanceof Refusal && error.status === 404) throw new Refusal("Choose one of this organisation's scenarios.", 404, { field: "scenarioId" });
      throw error;
    });
    await assertTitleFree(organisationId, input.title, transaction);
    // The example's probes, those that still trace on the scenario as the trainer left it.
    const example = input.withExampleProbes && scenario.exampleKey ? trainingExample(scenario.exampleKey) : undefined;
    const device = compileModel(scenario.document);
    const steps = (example?.probes ?? []).filter((step) => {
      try {
        trace(device, step.probe);
        return true;
      } catch (error) {
        if (error instanceof ProbeError) return false;
        throw error;
      }
    });
    const lesson = await TrainingLesson.create(
      { organisationId, scenarioId: scenario.id, title: input.title, introduction: input.introduction, steps: steps.map((step) => ({ probe: stepProbe(step.probe), notes: step.notes })), createdByUserId: actor.userId, createdByEmail: actor.email },
      { transaction },
    );
    await recordAuditEvent(actor, { organisationId, action: "training.lesson-created", targetType: "training-lesson", targetId: lesson.id, changes: { title: lesson.title, scenario: scenario.title, probes: steps.length } }, transaction);
    return lesson;
  });
}

function assertVersion(lesson: TrainingLesson, expected: number): void {
  if (lesson.version !== expected) throw new Refusal(`Not saved: someone changed this lesson since you opened it (now version ${lesson.version}). Your input is still in the form: reload, then save again.`, 409);
}

export async function updateLessonDetails(ref: LessonRef, expectedVersion: number, details: LessonDetails, actor: AuditActor): Promise<boolean> {
  return getDatabase().transaction(async (transaction) => {
    const lesson = await findLesson(ref, transaction);
    assertVersion(lesson, expectedVersion);
    if (lesson.title === details.title && lesson.introduction === details.introduction) return false;
    await assertTitleFree(ref.organisationId, details.title, transaction, lesson.id);
    const changes = { title: { from: lesson.title, to: details.title }, edit: "details" };
    await lesson.update({ title: details.title, introduction: details.introduction, version: lesson.version + 1 }, { transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.lesson-changed", targetType: "training-lesson", targetId: lesson.id, changes }, transaction);
    return true;
  });
}

/** One change of the steps (add, edit, move, delete), checked against the scenario as it is now. */
export async function editLessonSteps(ref: LessonRef, expectedVersion: number, change: (steps: LessonStep[]) => LessonStep[], message: string, actor: AuditActor): Promise<void> {
  await getDatabase().transaction(async (transaction) => {
    const lesson = await findLesson(ref, transaction);
    assertVersion(lesson, expectedVersion);
    const scenario = await findScenario({ organisationId: ref.organisationId, scenarioId: lesson.scenarioId }, transaction);
    const steps = change(stepsOf(lesson)).map((step) => ({ probe: stepProbe(step.probe), notes: Object.fromEntries(Object.entries(step.notes).filter(([layer, note]) => isLayer(layer) && note?.trim())) }));
    assertSteps(scenario.document, steps);
    await lesson.update({ steps: LessonStepsSchema.parse(steps), version: lesson.version + 1 }, { transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.lesson-changed", targetType: "training-lesson", targetId: lesson.id, changes: { title: lesson.title, edit: message.slice(0, 300), probes: steps.length } }, transaction);
  });
}

export async function deleteLesson(ref: LessonRef, actor: AuditActor): Promise<string> {
  return getDatabase().transaction(async (transaction) => {
    const lesson = await findLesson(ref, transaction);
    // Attempts go with it (their scores with them): the audit entry says how many.
    const attempts = await TrainingAttempt.count({ where: { lessonId: lesson.id }, transaction });
    await lesson.destroy({ transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.lesson-deleted", targetType: "training-lesson", targetId: lesson.id, changes: { title: lesson.title, attempts } }, transaction);
    return lesson.title;
  });
}

// ---------------------------------------------------------------------------------------------
// Attempts

export type Viewer = { userId: string; trainer: boolean };
export type AttemptRef = { organisationId: string; attemptId: string };

/**
 * Begins an attempt at the lesson's first probe, with the script it will be graded against; for an
 * assignment (checked by the caller to be this member's, of this lesson) it records which.
 */
export async function startAttempt(ref: LessonRef, userId: string, options: { assignmentId?: string | null; now?: number } = {}): Promise<TrainingAttempt> {
  const now = options.now ?? Date.now();
  const lesson = await findLesson(ref);
  const steps = stepsOf(lesson);
  if (steps.length === 0) throw new Refusal("This lesson has no probes yet: a trainer adds them first.", 409);
  const scenario = await findScenario({ organisationId: ref.organisationId, scenarioId: lesson.scenarioId });
  const scripted = scriptOf(scenario.document, steps, now);
  if (!scripted.ok) throw new Refusal(`${scripted.message} A trainer needs to fix the lesson first.`, 409);
  return TrainingAttempt.create({
    organisationId: ref.organisationId,
    userId,
    kind: "lesson",
    lessonId: lesson.id,
    lessonVersion: lesson.version,
    assignmentId: options.assignmentId ?? null,
    title: lesson.title,
    script: scripted.script,
    questionCount: questionCount(scripted.script),
    finishedAt: null,
  });
}

/**
 * The attempt, for the member who made it or a trainer; for anyone else 404, exactly as for an
 * attempt that does not exist (other trainees' results stay unseen).
 */
export async function findAttempt(ref: AttemptRef, viewer: Viewer, transaction?: Transaction): Promise<TrainingAttempt> {
  const attempt = await TrainingAttempt.findOne({ where: { id: ref.attemptId, organisationId: ref.organisationId }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined });
  if (!attempt || (attempt.userId !== viewer.userId && !viewer.trainer)) throw new Refusal("No such attempt in this organisation.", 404);
  return attempt;
}

export function scriptOfAttempt(attempt: TrainingAttempt): Script {
  return attempt.script as Script;
}

function gradedOf(prediction: TrainingPrediction): Graded {
  const verdict = prediction.verdict as Verdict;
  const outcome = isOutcome(prediction.outcome) ? prediction.outcome : null;
  const actualOutcome = isOutcome(prediction.actualOutcome) ? prediction.actualOutcome : null;
  const layer = isLayer(prediction.layer) ? prediction.layer : "arrival";
  const verdictCorrect = verdict === prediction.actualVerdict;
  return {
    step: prediction.step,
    layerIndex: prediction.layerIndex,
    layer,
    predicted: { verdict, outcome },
    actual: prediction.actualVerdict as Verdict,
    actualOutcome,
    verdictCorrect,
    outcomeCorrect: actualOutcome === null ? null : verdict === "stop" && outcome === actualOutcome,
    points: prediction.points,
    possible: prediction.possible,
  };
}

/** The attempt's graded predictions, in the order they were made. */
export async function predictionsOf(attempt: TrainingAttempt, transaction?: Transaction): Promise<Graded[]> {
  const predictions = await TrainingPrediction.findAll({ where: { attemptId: attempt.id }, order: [["position", "ASC"]], transaction });
  return predictions.map(gradedOf);
}

/**
 * Records the prediction for the question the attempt is at. Only the member taking it answers
 * (403 for a trainer looking on); an answer to any other question — already answered, or not
 * reached — is refused (409), so nothing is predicted after it was revealed.
 */
export async function predict(ref: AttemptRef, viewer: Viewer, question: { step: number; layerIndex: number }, prediction: Prediction): Promise<{ graded: Graded; finished: boolean }> {
  return getDatabase().transaction(async (transaction) => {
    const attempt = await findAttempt(ref, viewer, transaction);
    if (attempt.userId !== viewer.userId) throw new Refusal("Only the member taking this lesson answers its questions.", 403);
    const script = scriptOfAttempt(attempt);
    const answered = await TrainingPrediction.count({ where: { attemptId: attempt.id }, transaction });
    const current = questionAt(script, answered);
    if (!current) throw new Refusal("This attempt is finished: begin the lesson again to take it once more.", 409);
    if (current.step !== question.step || current.layerIndex !== question.layerIndex) throw new Refusal("That question was already answered or is not reached yet: the page shows the current one.", 409);
    const graded = grade(script, current.step, current.layerIndex, prediction);
    await TrainingPrediction.create(
      {
        attemptId: attempt.id,
        position: answered + 1,
        step: graded.step,
        layerIndex: graded.layerIndex,
        layer: graded.layer,
        verdict: graded.predicted.verdict,
        outcome: graded.predicted.outcome,
        actualVerdict: graded.actual,
        actualOutcome: graded.actualOutcome,
        points: graded.points,
        possible: graded.possible,
      },
      { transaction },
    );
    const finished = questionAt(script, answered + 1) === null;
    const now = new Date();
    await attempt.update({ points: attempt.points + graded.points, possible: attempt.possible + graded.possible, lastActivityAt: now, finishedAt: finished ? now : null }, { transaction });
    return { graded, finished };
  });
}

export type AttemptRow = { id: string; userId: string; name: string; startedAt: string; finishedAt: string | null; points: number; possible: number; misses: Array<{ probe: number; layer: string }> };

/** A lesson's attempts: all of them for a trainer, the viewer's own otherwise. Newest first. */
export async function attemptsOfLesson(ref: LessonRef, viewer: Viewer): Promise<AttemptRow[]> {
  const attempts = await TrainingAttempt.findAll({
    where: { organisationId: ref.organisationId, lessonId: ref.lessonId, ...(viewer.trainer ? {} : { userId: viewer.userId }) },
    include: [{ model: User, as: "user", attributes: ["id", "name"] }],
    order: [["startedAt", "DESC"]],
    limit: 200,
  });
  const misses = await TrainingPrediction.findAll({ where: { attemptId: attempts.map((attempt) => attempt.id), points: { [Op.lt]: getDatabase().col("possible") } }, order: [["position", "ASC"]] });
  return attempts.map((attempt) => ({
    id: attempt.id,
    userId: attempt.userId,
    name: attempt.user?.name ?? "",
    startedAt: attempt.startedAt.toISOString(),
    finishedAt: attempt.finishedAt?.toISOString() ?? null,
    points: attempt.points,
    possible: attempt.possible,
    misses: misses.filter((miss) => miss.attemptId === attempt.id).map((miss) => ({ probe: miss.step + 1, layer: miss.layer })),
  }));
}

/** The name of the member who made an attempt (for a trainer looking on). */
export async function attemptOwnerName(attempt: TrainingAttempt): Promise<string | null> {
  return (await User.findByPk(attempt.userId, { attributes: ["name"] }))?.name ?? null;
}
