import type { Route } from "./+types/audit.csv";
import { requireRole } from "#server/auth/guard.server";
import { auditLogRows, parseAuditQuery } from "#server/services/audit.server";
import { toCsv } from "#server/formats/csv";
import { auditActionLabel, auditSentence, auditTargetLabel } from "#app/utils/audit-words";
import { downloadName } from "#app/utils/analysis";

// Codes for programs, each followed by its label as the page shows it; the recorded values as
// JSON in the last column for anyone who needs them exactly.
const AUDIT_CSV_HEADER = ["at_utc", "actor_name", "actor_email", "action", "action_label", "target_type", "target_type_label", "target_id", "target_name", "summary", "client_address", "api_token", "changes_json"] as const;

// The audit log under the page's filters (the same URL search parameters), newest first.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context, "reviewer");
  const query = parseAuditQuery(new URL(request.url).searchParams);
  const rows = await auditLogRows(access.organisation.id, query);
  const lines = rows.map((row) => [
    row.at.toISOString(),
    row.actorName ?? "",
    row.actorEmail,
    row.action,
    auditActionLabel(row.action),
    row.targetType,
    auditTargetLabel(row.targetType),
    row.targetId,
    row.targetName ?? "",
    auditSentence(row),
    row.clientAddress,
    row.apiTokenName,
    JSON.stringify(row.changes),
  ]);
  const fileName = `${downloadName(access.organisation.slug, "audit-log", new Date().toISOString().slice(0, 10))}.csv`;
  return new Response(toCsv([AUDIT_CSV_HEADER, ...lines]), {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` },
  });
}
