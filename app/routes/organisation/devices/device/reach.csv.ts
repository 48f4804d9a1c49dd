import type { Route } from "./+types/reach.csv";
import { answerReach, reachQueryOf } from "#server/analysis/reach.server";
import { requireDevice } from "#server/http/device-access.server";
import { toCsv } from "#server/formats/csv";
import { downloadName } from "#app/utils/analysis";
import { isLayer, LAYER_LABELS, OUTCOME_LABELS } from "#server/engine/vocabulary";

// Codes for programs, and beside each code column its label as the screens show it. The sources
// of each row come last: the whole source for one address, a group's CIDRs for a block.
const REACH_CSV_HEADER = ["interface", "to", "service", "outcome", "outcome_label", "deciding_layer", "deciding_layer_label", "rule_id", "eligible_accounts", "detail", "sources", "source_count"] as const;

// The reach table as CSV, one row per interface × catalogue service (× group of sources for a block), in engine order.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const answer = answerReach(access.analysis.compiled, reachQueryOf(new URL(request.url)));
  if (!answer.ok) {
    const message = Object.entries(answer.errors).map(([field, text]) => `${field}: ${text}`).join("\n");
    return new Response(`${message}\n`, { status: 400, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  }
  const rows = answer.rows.map((row) => [
    row.interface,
    row.to ?? "",
    row.service,
    row.outcome,
    OUTCOME_LABELS[row.outcome],
    row.layer,
    isLayer(row.layer) ? LAYER_LABELS[row.layer] : row.layer,
    row.ruleId ?? "",
    row.eligibleAccounts.join(" "),
    row.detail,
    row.sources.join(" "),
    row.count,
  ]);
  const fileName = `${downloadName(access.device.name, "reach", answer.from.replace(/[:./]/g, "_"))}.csv`;
  return new Response(toCsv([REACH_CSV_HEADER, ...rows]), {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` },
  });
}
