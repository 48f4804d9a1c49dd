import type { Route } from "./+types/reach.csv";
import { requireRole } from "#server/auth/guard.server";
import { askFleetReach } from "#server/http/fleet-reach.server";
import { toCsv } from "#server/formats/csv";
import { LAYER_LABELS, OUTCOME_LABELS } from "#server/engine/vocabulary";
import { downloadName } from "#app/utils/analysis";

// Codes for programs, and beside each code column its label as the screens show it.
const FLEET_REACH_CSV_HEADER = [
  "device",
  "device_id",
  "site",
  "revision",
  "interface",
  "role",
  "to",
  "service",
  "sources",
  "source_count",
  "outcome",
  "outcome_label",
  "deciding_layer",
  "deciding_layer_label",
  "rule_id",
  "eligible_accounts",
  "at",
  "detail",
] as const;

// Fleet reach as CSV: every row of the page (all pages), most exposed first, with the same filters.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const asked = await askFleetReach(access.organisation.id, new URL(request.url).searchParams);
  if (!asked.ok) {
    const message = Object.entries(asked.errors).map(([field, text]) => `${field}: ${text}`).join("\n");
    return new Response(`${message}\n`, { status: asked.status, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  }
  const { result } = asked;
  const rows = result.rows.map((row) => [
    row.device,
    row.deviceId,
    row.site,
    row.revision,
    row.interface,
    row.role,
    row.to ?? "",
    row.service,
    row.sources.join(" "),
    row.count,
    row.outcome,
    OUTCOME_LABELS[row.outcome],
    row.layer,
    LAYER_LABELS[row.layer],
    row.ruleId ?? "",
    row.eligibleAccounts.join(" "),
    row.at,
    row.detail,
  ]);
  const fileName = `${downloadName(access.organisation.slug, "fleet-reach", result.from.replace(/[:./]/g, "_"))}.csv`;
  return new Response(toCsv([FLEET_REACH_CSV_HEADER, ...rows]), {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` },
  });
}
