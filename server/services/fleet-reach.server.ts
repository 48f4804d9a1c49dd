// Fleet reach for an organisation: every device at its current revision asked by the engine
// (server/engine/fleet-reach.ts) which of its interfaces × services one source — or each group
// of a block of sources — reaches, and how. The result is FleetReachResultSchema's shape, for a
// page, its CSV or an API endpoint to return as it is. Reads only; nothing to audit.
import { deviceRevisions } from "../devices/index.ts";
import { fleetReach, ProbeError } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import type { FleetReachQuery, FleetReachResult } from "../analysis/fleet-reach.ts";

/**
 * Asks every current device of the organisation (or of one site). A malformed source or time
 * is a 400 beside its field — the source's message says what is wrong with it (a prefix wider
 * than its family, host bits set).
 */
export async function fleetReachOf(organisationId: string, query: FleetReachQuery, nowMs: number = Date.now()): Promise<FleetReachResult> {
  const current = (await deviceRevisions.current(organisationId)).filter((entry) => query.site === undefined || entry.device.siteId === query.site);
  const byId = new Map(current.map((entry) => [entry.device.id, entry]));
  let answer;
  try {
    answer = fleetReach(
      current.map((entry) => ({ id: entry.device.id, name: entry.device.name, compiled: entry.analysis.compiled })),
      query.from,
      { at: query.at, roles: query.roles, services: query.services, nowMs },
    );
  } catch (error) {
    if (!(error instanceof ProbeError)) throw error;
    // The engine checks the source and the time even for an empty fleet; its source messages start "from: ".
    if (error.message.startsWith("from: ")) throw new Refusal(error.message.slice("from: ".length), 400, { field: "from" });
    throw new Refusal(`${error.message}. Use e.g. 2026-12-02T10:00 (each device's own clock) or 2026-12-02T10:00Z.`, 400, { field: "at" });
  }
  return {
    from: answer.from,
    count: answer.count,
    at: query.at === undefined || query.at === "" ? null : query.at,
    devices: answer.devices,
    rows: answer.rows.map((row) => {
      const entry = byId.get(row.deviceId);
      return { ...row, site: entry?.device.site.name ?? "", revision: entry?.revision.number ?? 0, eligibleAccounts: [...row.eligibleAccounts], sources: [...row.sources] };
    }),
  };
}
