// Assignments and progress (issue 12 point 5, docs/decisions/016 "Assignments and progress"):
// where an assignment stands, and each trainee's attempts summed up for the trainer. Pure: the
// services hand it rows read from training_attempts, training_predictions and
// training_assignments, and the pages, the CSV export and the tests share what it answers.
import { z } from "zod";
import { isLayer, LAYERS, type Layer } from "../engine/index.ts";
import { LAYER_LABELS } from "../engine/vocabulary.ts";
import { formatDuration } from "../engine/format.ts";
import type { CsvValue } from "../formats/csv.ts";
import { lineText, paragraphText } from "./schemas.ts";
import { IdSchema, isUuid } from "../validation/ids.ts";

/** An attempt as progress reads it: what it is of, when, and its running score. */
export type AttemptFacts = {
  id: string;
  userId: string;
  kind: "lesson" | "drill";
  title: string;
  assignmentId: string | null;
  startedAt: Date;
  finishedAt: Date | null;
  lastActivityAt: Date;
  points: number;
  possible: number;
};

/**
 * Late means finished after the due date (finished_at > due_at): an answer after it is accepted
 * and marked, never refused. An attempt still open is not late yet — it is overdue.
 */
export function isLate(finishedAt: Date | null, dueAt: Date): boolean {
  return finishedAt !== null && finishedAt.getTime() > dueAt.getTime();
}

export type AssignmentState = "not-started" | "in-progress" | "done" | "done-late";
export type AssignmentStatus = {
  state: AssignmentState;
  /** Not finished and the due date has passed. */
  overdue: boolean;
  /** The attempt that answers it: the first finished one, else the one begun last. */
  attemptId: string | null;
  points: number | null;
  possible: number | null;
  finishedAt: Date | null;
};

/** Where one assignment stands, from the attempts made for it (`assignment_id` = it). */
export function assignmentStatus(dueAt: Date, attempts: readonly AttemptFacts[], now: Date): AssignmentStatus {
  const finished = attempts.filter((attempt) => attempt.finishedAt !== null).sort((a, b) => a.finishedAt!.getTime() - b.finishedAt!.getTime());
  const answer = finished[0];
  if (answer) {
    return { state: isLate(answer.finishedAt, dueAt) ? "done-late" : "done", overdue: false, attemptId: answer.id, points: answer.points, possible: answer.possible, finishedAt: answer.finishedAt };
  }
  const overdue = now.getTime() > dueAt.getTime();
  const open = [...attempts].sort((a, b) => b.startedAt.getTime() - a.startedAt.getTime())[0];
  if (open) return { state: "in-progress", overdue, attemptId: open.id, points: open.points, possible: open.possible, finishedAt: null };
  return { state: "not-started", overdue, attemptId: null, points: null, possible: null, finishedAt: null };
}

export const ASSIGNMENT_STATE_LABELS: Record<AssignmentState, string> = {
  "not-started": "Not started",
  "in-progress": "In progress",
  done: "Done",
  "done-late": "Done late",
};

// ---------------------------------------------------------------------------------------------
// A trainee's progress

/** A prediction that did not earn every point it could: its attempt and the layer it was about. */
export type Miss = { attemptId: string; layer: string };
export type Person = { userId: string; name: string; email: string };

export type TraineeProgress = Person & {
  attempts: number;
  finished: number;
  points: number;
  possible: number;
  /** points / possible over every answered question, 0…1; null before any answer. */
  score: number | null;
  /** Summed over attempts: from starting to the last answer. */
  timeSpentMs: number;
  lastActivity: Date | null;
  /** Lessons' layers answered wrong, most often first (ties in the layers' order). */
  wrongLayers: Array<{ layer: Layer; count: number }>;
  /** How many of the attempts were finished after their assignment's due date. */
  late: number;
};

/**
 * One row per person: every person given (the trainees the page lists, even with nothing done),
 * then anyone else with an attempt. Wrong layers count lesson attempts' misses only — a drill's
 * questions are about outcomes, not a layer at a time.
 */
export function traineeProgress(people: readonly Person[], attempts: readonly AttemptFacts[], misses: readonly Miss[], dueDates: ReadonlyMap<string, Date>): TraineeProgress[] {
  const lessonAttempts = new Set(attempts.filter((attempt) => attempt.kind === "lesson").map((attempt) => attempt.id));
  const ownerOf = new Map(attempts.map((attempt) => [attempt.id, attempt.userId]));
  const rows = new Map<string, TraineeProgress>();
  const rowOf = (person: Person) => {
    let row = rows.get(person.userId);
    if (!row) {
      row = { ...person, attempts: 0, finished: 0, points: 0, possible: 0, score: null, timeSpentMs: 0, lastActivity: null, wrongLayers: [], late: 0 };
      rows.set(person.userId, row);
    }
    return row;
  };
  for (const person of people) rowOf(person);
  const wrong = new Map<string, Map<Layer, number>>();
  for (const attempt of attempts) {
    const row = rows.get(attempt.userId);
    if (!row) continue;
    row.attempts += 1;
    if (attempt.finishedAt) row.finished += 1;
    row.points += attempt.points;
    row.possible += attempt.possible;
    row.timeSpentMs += Math.max(0, attempt.lastActivityAt.getTime() - attempt.startedAt.getTime());
    if (!row.lastActivity || attempt.lastActivityAt > row.lastActivity) row.lastActivity = attempt.lastActivityAt;
    const due = attempt.assignmentId ? dueDates.get(attempt.assignmentId) : undefined;
    if (due && isLate(attempt.finishedAt, due)) row.late += 1;
  }
  for (const miss of misses) {
    const userId = ownerOf.get(miss.attemptId);
    if (!userId || !lessonAttempts.has(miss.attemptId) || !isLayer(miss.layer)) continue;
    const counts = wrong.get(userId) ?? new Map<Layer, number>();
    counts.set(miss.layer, (counts.get(miss.layer) ?? 0) + 1);
    wrong.set(userId, counts);
  }
  for (const row of rows.values()) {
    row.score = row.possible > 0 ? row.points / row.possible : null;
    const counts = wrong.get(row.userId);
    row.wrongLayers = counts ? LAYERS.filter((layer) => counts.has(layer)).map((layer) => ({ layer, count: counts.get(layer)! })).sort((a, b) => b.count - a.count) : [];
  }
  return [...rows.values()];
}

/** "Inbound rules ×2, Listener" — the wrong layers in words. */
export function wrongLayerWords(wrongLayers: TraineeProgress["wrongLayers"]): string {
  return wrongLayers.map((entry) => (entry.count > 1 ? `${LAYER_LABELS[entry.layer]} ×${entry.count}` : LAYER_LABELS[entry.layer])).join(", ");
}

/** The score as a whole percentage, or null before any answer. */
export function scorePercent(points: number, possible: number): number | null {
  return possible > 0 ? Math.round((100 * points) / possible) : null;
}

// ---------------------------------------------------------------------------------------------
// The CSV export

export const PROGRESS_CSV_HEADER = [
  "member_name",
  "member_email",
  "attempts",
  "finished",
  "points",
  "possible",
  "score_percent",
  "time_spent_minutes",
  "last_activity_utc",
  "late",
  "wrong_layers",
  "wrong_layers_label",
] as const;

/** The progress rows as CSV records (codes, and their labels beside them); toCsv neutralises formulas. */
export function progressCsvRows(rows: readonly TraineeProgress[]): CsvValue[][] {
  return [
    [...PROGRESS_CSV_HEADER],
    ...rows.map((row) => [
      row.name,
      row.email,
      row.attempts,
      row.finished,
      row.points,
      row.possible,
      scorePercent(row.points, row.possible),
      Math.round(row.timeSpentMs / 60_000),
      row.lastActivity?.toISOString() ?? null,
      row.late,
      row.wrongLayers.map((entry) => `${entry.layer}:${entry.count}`).join(" "),
      wrongLayerWords(row.wrongLayers),
    ]),
  ];
}

// ---------------------------------------------------------------------------------------------
// Scores over time (the chart and its table)

export type ScorePoint = { attemptId: string; userId: string; name: string; title: string; at: string; percent: number; late: boolean };

/** Every finished attempt with an answer, oldest first: what the chart draws and its table lists. */
export function scoresOverTime(people: readonly Person[], attempts: readonly AttemptFacts[], dueDates: ReadonlyMap<string, Date>): ScorePoint[] {
  const names = new Map(people.map((person) => [person.userId, person.name]));
  return attempts
    .filter((attempt) => attempt.finishedAt !== null && attempt.possible > 0 && names.has(attempt.userId))
    .sort((a, b) => a.finishedAt!.getTime() - b.finishedAt!.getTime())
    .map((attempt) => {
      const due = attempt.assignmentId ? dueDates.get(attempt.assignmentId) : undefined;
      return { attemptId: attempt.id, userId: attempt.userId, name: names.get(attempt.userId)!, title: attempt.title, at: attempt.finishedAt!.toISOString(), percent: scorePercent(attempt.points, attempt.possible)!, late: due ? isLate(attempt.finishedAt, due) : false };
    });
}

// ---------------------------------------------------------------------------------------------
// The assignment form

/** Most assignees in one go (a class, not the whole company). */
export const MAX_ASSIGNEES = 100;

/** `2026-12-09T17:00` as a datetime-local field sends it, read as UTC; null when it is not one. */
export function dueInstant(text: string): Date | null {
  const match = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})$/.exec(text);
  if (!match) return null;
  const [year, month, day, hour, minute] = match.slice(1).map(Number);
  const at = new Date(Date.UTC(year, month - 1, day, hour, minute));
  // 2026-02-31 rolls over into March: not a date anyone meant.
  if (at.getUTCMonth() !== month - 1 || at.getUTCDate() !== day || hour > 23 || minute > 59) return null;
  return at;
}

/** What the form posts; the due date is checked against the clock by the service (it must be in the future). */
export const AssignmentFormSchema = z.object({
  target: z.string({ message: "Choose a lesson or a drill." }).transform((value, context) => {
    const match = /^(lesson|drill):(.+)$/.exec(value);
    if (!match || !isUuid(match[2])) {
      context.addIssue({ code: "custom", message: "Choose a lesson or a drill." });
      return z.NEVER;
    }
    return { kind: match[1] as "lesson" | "drill", id: match[2] };
  }),
  // One checkbox per member: the ids arrive as repeated fields, joined by line breaks (formValuesWithLists).
  assignees: z
    .string()
    .default("")
    .transform((text) => [...new Set(text.split(/\s+/).filter(Boolean))])
    .pipe(z.array(IdSchema).min(1, "Choose at least one member.").max(MAX_ASSIGNEES, `Choose at most ${MAX_ASSIGNEES} members at a time.`)),
  dueAt: lineText("a due date", 16).transform((text, context) => {
    const at = dueInstant(text);
    if (!at) {
      context.addIssue({ code: "custom", message: "Enter the due date and time as the field shows it, e.g. 2026-12-09 17:00." });
      return z.NEVER;
    }
    return at;
  }),
  note: paragraphText(2000),
});
export type AssignmentInput = z.output<typeof AssignmentFormSchema>;

/** Time spent in words: "under a minute", "25 minutes", "1.5 hours". */
export function timeSpentWords(ms: number): string {
  const minutes = Math.round(ms / 60_000);
  if (minutes < 1) return ms > 0 ? "under a minute" : "none";
  if (minutes < 60) return formatDuration(minutes, "minute");
  return formatDuration(Math.round(ms / 360_000) / 10, "hour");
}
