// Assignments and progress (issue 12 point 5, docs/decisions/016 "Assignments and progress"). A
// trainer gives a lesson or a drill to members with a due date; each assignee is e-mailed a link
// from APP_ORIGIN; each change writes its audit entry in its transaction. Progress reads
// training_attempts, training_predictions and training_assignments alone.
import { Op, type Transaction } from "sequelize";
import { Membership, TrainingAssignment, TrainingAttempt, TrainingDrill, TrainingLesson, TrainingPrediction, User } from "#models/index.ts";
import type { AssignmentKind } from "#models/training.ts";
import { getDatabase } from "../db/database.server.ts";
import { Refusal } from "../errors.ts";
import { sendAssignmentMail } from "../mail/messages.server.ts";
import { assignmentStatus, traineeProgress, scoresOverTime, type AssignmentInput, type AssignmentStatus, type AttemptFacts, type Person, type ScorePoint, type TraineeProgress } from "../training/progress.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { startAttempt, type Viewer } from "./training-lessons.server.ts";

export type AssignmentRef = { organisationId: string; assignmentId: string };
export type Target = { kind: AssignmentKind; id: string };
export type TargetRow = Target & { title: string; detail: string };

/** The page of what was assigned, under /o/<slug>/training: a lesson's, or a drill's (the drill pages link the same way). */
export function targetPath(base: string, target: Target): string {
  return `${base}/${target.kind === "lesson" ? "lessons" : "drills"}/${target.id}`;
}

function targetOf(assignment: TrainingAssignment): Target {
  return assignment.kind === "lesson" ? { kind: "lesson", id: assignment.lessonId! } : { kind: "drill", id: assignment.drillId! };
}

/** Everything a trainer may assign: lessons, then drills, each by title. */
export async function assignableTargets(organisationId: string): Promise<TargetRow[]> {
  const [lessons, drills] = await Promise.all([
    TrainingLesson.findAll({ where: { organisationId }, attributes: ["id", "title", "steps"], order: [["title", "ASC"]] }),
    TrainingDrill.findAll({ where: { organisationId }, attributes: ["id", "title", "kind"], order: [["title", "ASC"]] }),
  ]);
  return [
    ...lessons.map((lesson) => ({ kind: "lesson" as const, id: lesson.id, title: lesson.title, detail: `lesson, ${Array.isArray(lesson.steps) ? lesson.steps.length : 0} probes` })),
    ...drills.map((drill) => ({ kind: "drill" as const, id: drill.id, title: drill.title, detail: `${drill.kind} drill` })),
  ];
}

/** The title of a lesson or drill of this organisation, or a refusal beside the form's field. */
async function targetTitle(organisationId: string, target: Target, transaction?: Transaction): Promise<string> {
  const row = target.kind === "lesson" ? await TrainingLesson.findOne({ where: { id: target.id, organisationId }, attributes: ["title"], transaction }) : await TrainingDrill.findOne({ where: { id: target.id, organisationId }, attributes: ["title"], transaction });
  if (!row) throw new Refusal(`Choose one of this organisation's ${target.kind === "lesson" ? "lessons" : "drills"}.`, 404, { field: "target" });
  return row.title;
}

export async function organisationMembers(organisationId: string): Promise<Array<Person & { role: string }>> {
  const memberships = await Membership.findAll({ where: { organisationId }, include: [{ model: User, as: "user", required: true, attributes: ["id", "name", "email"] }], order: [[{ model: User, as: "user" }, "name", "ASC"]] });
  return memberships.map((membership) => ({ userId: membership.userId, name: membership.user!.name, email: membership.user!.email, role: membership.role }));
}

export type CreatedAssignments = { title: string; count: number; emailed: number };

/**
 * One assignment per assignee, in one transaction with an audit entry each; then one e-mail each
 * with a link built from `appOrigin` (never the request's Host). A mail that cannot be sent is
 * logged and leaves `emailed_at` empty; the assignment stands.
 */
export async function createAssignments(organisation: { id: string; slug: string; name: string }, input: AssignmentInput, actor: AuditActor & { name: string }, appOrigin: string, now = new Date()): Promise<CreatedAssignments> {
  if (input.dueAt.getTime() <= now.getTime()) throw new Refusal("The due date must be in the future.", 400, { field: "dueAt" });
  const { title, created } = await getDatabase().transaction(async (transaction) => {
    const title = await targetTitle(organisation.id, input.target, transaction);
    const members = await Membership.findAll({ where: { organisationId: organisation.id, userId: input.assignees }, include: [{ model: User, as: "user", required: true, attributes: ["id", "name", "email"] }], transaction });
    if (members.length !== input.assignees.length) throw new Refusal("Choose members of this organisation only: someone chosen is not (or no longer) a member.", 400, { field: "assignees" });
    const created: Array<{ assignment: TrainingAssignment; user: User }> = [];
    for (const membership of members) {
      const assignment = await TrainingAssignment.create(
        {
          organisationId: organisation.id,
          kind: input.target.kind,
          lessonId: input.target.kind === "lesson" ? input.target.id : null,
          drillId: input.target.kind === "drill" ? input.target.id : null,
          assigneeUserId: membership.userId,
          assignedByUserId: actor.userId,
          assignedByEmail: actor.email,
          dueAt: input.dueAt,
          note: input.note,
          emailedAt: null,
        },
        { transaction },
      );
      await recordAuditEvent(actor, { organisationId: organisation.id, action: "training.assigned", targetType: "training-assignment", targetId: assignment.id, changes: { title, kind: input.target.kind, assignee: membership.user!.email, due: input.dueAt.toISOString() } }, transaction);
      created.push({ assignment, user: membership.user! });
    }
    return { title, created };
  });
  let emailed = 0;
  for (const { assignment, user } of created) {
    try {
      await sendAssignmentMail({ to: user.email, name: user.name, organisationName: organisation.name, trainerName: actor.name, title, kind: assignment.kind, dueAt: assignment.dueAt, note: assignment.note, link: `${appOrigin}/o/${organisation.slug}/training/assignments/${assignment.id}` });
      await assignment.update({ emailedAt: new Date() });
      emailed += 1;
    } catch (error) {
      console.error(`assignment e-mail to ${user.email} could not be sent:`, error);
    }
  }
  return { title, count: created.length, emailed };
}

/**
 * The assignment, for its assignee or a trainer; for anyone else 404, exactly as for one that does
 * not exist (another member's assignment is not theirs to know of).
 */
export async function findAssignment(ref: AssignmentRef, viewer: Viewer, transaction?: Transaction): Promise<TrainingAssignment> {
  const assignment = await TrainingAssignment.findOne({ where: { id: ref.assignmentId, organisationId: ref.organisationId }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined });
  if (!assignment || (assignment.assigneeUserId !== viewer.userId && !viewer.trainer)) throw new Refusal("No such assignment in this organisation.", 404);
  return assignment;
}

/** Withdraws (deletes) it; attempts already made stay, no longer tied to it. */
export async function withdrawAssignment(ref: AssignmentRef, actor: AuditActor): Promise<string> {
  return getDatabase().transaction(async (transaction) => {
    const assignment = await findAssignment(ref, { userId: "", trainer: true }, transaction);
    const title = await targetTitle(ref.organisationId, targetOf(assignment), transaction).catch(() => "");
    const assignee = await User.findByPk(assignment.assigneeUserId, { attributes: ["email"], transaction });
    await assignment.destroy({ transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.assignment-withdrawn", targetType: "training-assignment", targetId: assignment.id, changes: { title, kind: assignment.kind, assignee: assignee?.email ?? "" } }, transaction);
    return title;
  });
}

function factsOf(attempt: TrainingAttempt): AttemptFacts {
  return { id: attempt.id, userId: attempt.userId, kind: attempt.kind, title: attempt.title, assignmentId: attempt.assignmentId ?? null, startedAt: attempt.startedAt, finishedAt: attempt.finishedAt, lastActivityAt: attempt.lastActivityAt, points: attempt.points, possible: attempt.possible };
}

export type AssignmentRow = {
  id: string;
  target: Target;
  title: string;
  assignee: Person;
  assignedBy: string;
  dueAt: Date;
  note: string;
  emailedAt: Date | null;
  createdAt: Date;
  status: AssignmentStatus;
};

/** Assignments with their targets' titles and where each stands. */
async function assignmentRows(organisationId: string, where: { assigneeUserId?: string; id?: string }, now: Date): Promise<AssignmentRow[]> {
  const assignments = await TrainingAssignment.findAll({ where: { organisationId, ...where }, include: [{ model: User, as: "assignee", attributes: ["id", "name", "email"] }], order: [["dueAt", "ASC"], ["createdAt", "ASC"]], limit: 1000 });
  if (assignments.length === 0) return [];
  const lessonIds = assignments.flatMap((assignment) => (assignment.lessonId ? [assignment.lessonId] : []));
  const drillIds = assignments.flatMap((assignment) => (assignment.drillId ? [assignment.drillId] : []));
  const [lessons, drills, attempts] = await Promise.all([
    lessonIds.length ? TrainingLesson.findAll({ where: { id: lessonIds }, attributes: ["id", "title"] }) : [],
    drillIds.length ? TrainingDrill.findAll({ where: { id: drillIds }, attributes: ["id", "title"] }) : [],
    TrainingAttempt.findAll({ where: { organisationId, assignmentId: assignments.map((assignment) => assignment.id) }, attributes: { exclude: ["script"] } }),
  ]);
  const titles = new Map([...lessons, ...drills].map((row) => [row.id, row.title]));
  return assignments.map((assignment) => {
    const target = targetOf(assignment);
    return {
      id: assignment.id,
      target,
      title: titles.get(target.id) ?? "",
      assignee: { userId: assignment.assigneeUserId, name: assignment.assignee?.name ?? "", email: assignment.assignee?.email ?? "" },
      assignedBy: assignment.assignedByEmail,
      dueAt: assignment.dueAt,
      note: assignment.note,
      emailedAt: assignment.emailedAt,
      createdAt: assignment.createdAt,
      status: assignmentStatus(assignment.dueAt, attempts.filter((attempt) => attempt.assignmentId === assignment.id).map(factsOf), now),
    };
  });
}

export async function assignmentRow(ref: AssignmentRef, viewer: Viewer, now = new Date()): Promise<AssignmentRow> {
  const assignment = await findAssignment(ref, viewer);
  const [row] = await assignmentRows(ref.organisationId, { id: assignment.id }, now);
  return row;
}

/** Every assignment of the organisation (a trainer's list), soonest due first. */
export function listAssignments(organisationId: string, now = new Date()): Promise<AssignmentRow[]> {
  return assignmentRows(organisationId, {}, now);
}

/**
 * The member's open assignment of this lesson or drill — not yet finished, soonest due first — so
 * beginning it from its own page counts for the assignment too. The drill pages call it the same way.
 */
export async function openAssignmentFor(organisationId: string, userId: string, target: Target, now = new Date()): Promise<string | null> {
  const mine = await assignmentRows(organisationId, { assigneeUserId: userId }, now);
  return mine.find((row) => row.target.kind === target.kind && row.target.id === target.id && (row.status.state === "not-started" || row.status.state === "in-progress"))?.id ?? null;
}

/** Begins the assigned lesson as its assignee; the attempt records the assignment. */
export async function startAssignedLesson(ref: AssignmentRef, viewer: Viewer): Promise<TrainingAttempt> {
  const assignment = await findAssignment(ref, viewer);
  if (assignment.assigneeUserId !== viewer.userId) throw new Refusal("Only the member it is assigned to begins it.", 403);
  if (assignment.kind !== "lesson" || !assignment.lessonId) throw new Refusal("This assignment is a drill: begin it from the drill's page.", 409);
  return startAttempt({ organisationId: ref.organisationId, lessonId: assignment.lessonId }, viewer.userId, { assignmentId: assignment.id });
}

/** A member's own training: what they were given, and their attempts not made for an assignment. */
export async function myTraining(organisationId: string, userId: string, now = new Date()): Promise<{ assigned: AssignmentRow[]; attempts: AttemptFacts[] }> {
  const [assigned, attempts] = await Promise.all([
    assignmentRows(organisationId, { assigneeUserId: userId }, now),
    TrainingAttempt.findAll({ where: { organisationId, userId, assignmentId: null }, attributes: { exclude: ["script"] }, order: [["startedAt", "DESC"]], limit: 200 }),
  ]);
  return { assigned, attempts: attempts.map(factsOf) };
}

export type Progress = { rows: TraineeProgress[]; scores: ScorePoint[] };

/**
 * Each member's progress (every trainee-role member, and anyone else with an attempt), and the
 * scores of finished attempts over time.
 */
export async function trainingProgress(organisationId: string): Promise<Progress> {
  const [members, attempts, assignments] = await Promise.all([
    organisationMembers(organisationId),
    TrainingAttempt.findAll({ where: { organisationId }, attributes: { exclude: ["script"] }, order: [["startedAt", "ASC"]] }),
    TrainingAssignment.findAll({ where: { organisationId }, attributes: ["id", "dueAt", "assigneeUserId"] }),
  ]);
  const misses = attempts.length
    ? await TrainingPrediction.findAll({ where: { attemptId: attempts.map((attempt) => attempt.id), points: { [Op.lt]: getDatabase().col("possible") } }, attributes: ["attemptId", "layer"] })
    : [];
  const active = new Set([...attempts.map((attempt) => attempt.userId), ...assignments.map((assignment) => assignment.assigneeUserId)]);
  const people = members.filter((member) => member.role === "trainee" || active.has(member.userId));
  const dueDates = new Map(assignments.map((assignment) => [assignment.id, assignment.dueAt]));
  const facts = attempts.map(factsOf);
  return { rows: traineeProgress(people, facts, misses.map((miss) => ({ attemptId: miss.attemptId, layer: miss.layer })), dueDates), scores: scoresOverTime(people, facts, dueDates) };
}

/** An assignment as pages show it: instants as ISO text, and the paths it links to. */
export function assignmentView(row: AssignmentRow, base: string) {
  return {
    id: row.id,
    kind: row.target.kind,
    title: row.title,
    assignee: row.assignee,
    assignedBy: row.assignedBy,
    dueAt: row.dueAt.toISOString(),
    note: row.note,
    emailed: row.emailedAt !== null,
    path: `${base}/assignments/${row.id}`,
    targetPath: targetPath(base, row.target),
    status: { ...row.status, finishedAt: row.status.finishedAt?.toISOString() ?? null, attemptPath: row.status.attemptId ? `${base}/attempts/${row.status.attemptId}` : null },
  };
}
export type AssignmentView = ReturnType<typeof assignmentView>;
