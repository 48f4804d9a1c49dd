// The organisation's devices as the fleet table and the API's device list show them: the
// current revision's facts, the active findings by severity (dismissed ones are accepted risks
// and leave the counts, as on the device overview) and the open proposals. One home, so the
// page and the API never disagree. Reads only short stored rows: a fleet of large devices costs
// what a fleet of small ones does (issue 14).
import { LRUCache } from "lru-cache";
import { listDevices, type DeviceRow } from "./devices.server.ts";
import { lastFieldChecks, type FieldCheckSummary } from "./field-checks.server.ts";
import { siteNames } from "./sites.server.ts";
import { activeFindingsBySeverity } from "./findings.server.ts";
import { openProposalCounts } from "./proposals.server.ts";

export type FleetDeviceRow = DeviceRow & { openProposals: number };

/**
 * Every device of the organisation, by name, with its active findings and open proposals. The
 * fleet page passes `wait: false`: a large revision still being analysed shows as such (`analysing`).
 */
export async function fleetDeviceRows(organisationId: string, options: { wait?: boolean } = {}): Promise<FleetDeviceRow[]> {
  const [listed, proposals] = await Promise.all([listDevices(organisationId, options), openProposalCounts(organisationId)]);
  const active = await activeFindingsBySeverity(
    organisationId,
    listed.map(({ row, record }) => ({ deviceId: row.id, revisionId: record.revisionId, hasFindingKeys: record.hasFindingKeys, findingsBySeverity: row.analysing ? null : row.findingsBySeverity })),
  );
  return listed.map(({ row }) => ({ ...row, findingsBySeverity: active.get(row.id) ?? row.findingsBySeverity, openProposals: proposals.get(row.id) ?? 0 }));
}

/** A fleet table row: the device's row with its last field check. */
export type FleetTableRow = FleetDeviceRow & { fieldCheck: FieldCheckSummary | null };
export type FleetTable = { rows: readonly FleetTableRow[]; sites: ReadonlyArray<{ id: string; name: string }> };

// The fleet table of each organisation, kept under the organisation's fleet stamp (a counter
// database triggers raise with every change to what the table shows: docs/decisions/026). The
// session's query reads the stamp with the organisation, so a request whose stamp matches costs
// no query here; any change — from this process, another one, a job or a script — gives the
// next request a new stamp and a fresh read. Per process, a few hundred organisations at most.
const fleetTables = new LRUCache<string, { stamp: string; table: FleetTable }>({ max: 200 });

/**
 * The organisation's fleet table (rows by name, sites by name), from the cache when its stamp
 * is the one the request began with. `reuse: false` (after an action in the same request, whose
 * writes the stamp read at its start cannot show) reads afresh. A fleet with a device still
 * being analysed is not kept: the read queues lost analyses again and shows them once stored.
 */
export async function fleetTable(organisation: { id: string; fleetStamp: string }, options: { reuse: boolean }): Promise<FleetTable> {
  const kept = options.reuse ? fleetTables.get(organisation.id) : undefined;
  if (kept && kept.stamp === organisation.fleetStamp) return kept.table;
  const [rows, sites, fieldChecks] = await Promise.all([fleetDeviceRows(organisation.id, { wait: false }), siteNames(organisation.id), lastFieldChecks(organisation.id)]);
  // Frozen: every request shares them.
  const table: FleetTable = Object.freeze({
    rows: Object.freeze(rows.map((row) => Object.freeze({ ...row, fieldCheck: fieldChecks.get(row.id) ?? null }))),
    sites: Object.freeze(sites),
  });
  if (options.reuse && !rows.some((row) => row.analysing)) fleetTables.set(organisation.id, { stamp: organisation.fleetStamp, table });
  else fleetTables.delete(organisation.id);
  return table;
}
