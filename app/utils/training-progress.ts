// The progress table's columns (docs/decisions/016, "Assignments and progress"): what each sorts
// by, for tableRows and urlSort (app/components/ui/table-rows.ts) — the URL says the sort, so the
// table sorts without JavaScript. A member with no answer yet sorts below every score, one never
// active before every instant.
import { LAYER_LABELS } from "#server/engine/vocabulary";
import type { TraineeProgress } from "#server/training/progress";
import { nameTie, tableRows, urlSort, type ColumnDef } from "#app/components/ui/table-rows";

export type ProgressRow = {
  userId: string;
  name: string;
  email: string;
  attempts: number;
  finished: number;
  points: number;
  possible: number;
  score: number | null;
  timeSpentMs: number;
  lastActivity: string | null;
  wrongLayers: Array<{ layer: string; label: string; count: number }>;
  late: number;
};

export const PROGRESS_COLUMNS = [
  { id: "name", accessorFn: (row) => row.name, sortingFn: (a, b) => a.original.name.localeCompare(b.original.name) },
  { id: "attempts", accessorFn: (row) => row.attempts },
  { id: "score", accessorFn: (row) => row.score ?? -1 },
  { id: "time", accessorFn: (row) => row.timeSpentMs },
  { id: "last", accessorFn: (row) => (row.lastActivity ? Date.parse(row.lastActivity) : 0) },
  { id: "wrong", accessorFn: (row) => row.wrongLayers.reduce((sum, entry) => sum + entry.count, 0) },
] as const satisfies readonly ColumnDef<ProgressRow>[];

export type ProgressColumn = (typeof PROGRESS_COLUMNS)[number]["id"];

/** A trainee's progress as the page and the CSV export sort it (instants as ISO text, layers with their labels). */
export function progressRowOf(row: TraineeProgress): ProgressRow {
  return {
    userId: row.userId,
    name: row.name,
    email: row.email,
    attempts: row.attempts,
    finished: row.finished,
    points: row.points,
    possible: row.possible,
    score: row.score,
    timeSpentMs: row.timeSpentMs,
    lastActivity: row.lastActivity?.toISOString() ?? null,
    wrongLayers: row.wrongLayers.map((entry) => ({ layer: entry.layer, label: LAYER_LABELS[entry.layer], count: entry.count })),
    late: row.late,
  };
}

/** The rows in the order the URL asks for (?sort=…&dir=…; by name unless it names a column), ties by name. */
export function sortedProgress(rows: readonly TraineeProgress[], params: URLSearchParams): { sort: ProgressColumn; descending: boolean; rows: ProgressRow[] } {
  const { sort, descending, sorting } = urlSort(params, PROGRESS_COLUMNS);
  return { sort, descending, rows: tableRows(rows.map(progressRowOf), [...PROGRESS_COLUMNS, nameTie<ProgressRow>()], { sorting }) };
}
