import type { Route } from "./+types/exposure.csv";
import { OUTCOME_LABELS, OUTCOMES } from "#server/engine/vocabulary";
import { exposureEntriesAt, exposureQueryOf, filterEntries } from "#server/analysis/exposure.server";
import { requireDevice } from "#server/http/device-access.server";
import { addressCount } from "#server/analysis/address-grids";
import { toCsv } from "#server/formats/csv";
import { downloadName } from "#app/utils/analysis";

// The exposure map at one instant as CSV: one row per CIDR, with that CIDR's address count, so
// the counts of one entry sum to its family's size (2^32 or 2^128). Same filters as the page.
// The outcome code is for programs; the label beside it is the screens' wording.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const query = exposureQueryOf(new URL(request.url));
  const answer = exposureEntriesAt(access.analysis.compiled, query.at);
  if (!answer.ok) return new Response(`at: ${answer.error}\n`, { status: 400, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  const rows: string[][] = [["interface", "to", "service", "outcome", "outcome_label", "count", "cidr"]];
  for (const entry of filterEntries(answer.entries, query)) {
    for (const outcome of OUTCOMES) {
      if (query.outcome && outcome !== query.outcome) continue;
      for (const cidr of entry.ranges[outcome]) rows.push([entry.interface, entry.to, entry.service, outcome, OUTCOME_LABELS[outcome], addressCount([cidr]).toString(), cidr]);
    }
  }
  const fileName = `${downloadName(access.device.name, "exposure-map")}.csv`;
  return new Response(toCsv(rows), { headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` } });
}
