import type { Route } from "./+types/progress.csv";
import { toCsv } from "#server/formats/csv";
import { trainingProgress } from "#server/services/training-assignments.server";
import { requireTrainer } from "#server/training/access.server";
import { progressCsvRows } from "#server/training/progress";
import { downloadName } from "#app/utils/analysis";
import { sortedProgress } from "#app/utils/training-progress";

// The progress table as CSV, in the page's order (the same ?sort=…&dir=…). Trainers only (403
// otherwise). toCsv neutralises cells a spreadsheet would run as formulas (names are typed by people).
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const { rows } = await trainingProgress(access.organisation.id);
  const byId = new Map(rows.map((row) => [row.userId, row]));
  const ordered = sortedProgress(rows, new URL(request.url).searchParams).rows.map((row) => byId.get(row.userId)!);
  const fileName = `${downloadName(access.organisation.slug, "training-progress", new Date().toISOString().slice(0, 10))}.csv`;
  return new Response(toCsv(progressCsvRows(ordered)), { headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` } });
}
