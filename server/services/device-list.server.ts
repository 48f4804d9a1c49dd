// The organisation's devices as the fleet table and the API's device list show them: the
// current revision's facts, the active findings by severity (dismissed ones are accepted risks
// and leave the counts, as on the device overview) and the open proposals. One home, so the
// page and the API never disagree. Reads only short stored rows: a fleet of large devices costs
// what a fleet of small ones does (issue 14).
import { listDevices, type DeviceRow } from "./devices.server.ts";
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
