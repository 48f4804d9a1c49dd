// Fleet reach: which of an organisation's devices one source (or block of sources) reaches, and
// how — every device × interface × catalogue service the filter keeps, each split into the
// groups of sources with the same answer (source-groups.ts), most exposed first.

import type { CompiledModel } from "./compile.ts";
import { ProbeError } from "./compile.ts";
import { parseInstant } from "./schedules.ts";
import { parseSource, reachGroupRows, reachGroups } from "./source-groups.ts";
import type { ReachFilter, ReachGroupRow } from "./source-groups.ts";
import { outcomeRank } from "./vocabulary.ts";

/** One device of the fleet: the caller's id and name for it, and its compiled current revision. */
export interface FleetMember {
  readonly id: string;
  readonly name: string;
  readonly compiled: CompiledModel;
}

/** One row: a device × interface × service × group of sources with the same answer. */
export interface FleetReachRow extends ReachGroupRow {
  readonly deviceId: string;
  readonly device: string;
  /** The instant the device was asked at (a time without an offset is read on each device's own clock). */
  readonly at: string;
}

export interface FleetReach {
  readonly from: string;
  /** Addresses in the asked block, decimal. */
  readonly count: string;
  /** Devices asked. */
  readonly devices: number;
  readonly rows: readonly FleetReachRow[];
}

export interface FleetReachOptions extends Pick<ReachFilter, "roles" | "services"> {
  /** ISO 8601; without an offset it is read on each device's own clock (as everywhere in the product). Default now. */
  readonly at?: string;
  readonly nowMs?: number;
}

/**
 * Every member's reach from the source, as rows ordered most exposed first, then by device
 * name, interface order, catalogue order and the group's order. Input errors (a malformed
 * source or time) are ProbeErrors, raised even for an empty fleet.
 */
export function fleetReach(members: readonly FleetMember[], from: string, options: FleetReachOptions = {}): FleetReach {
  const nowMs = options.nowMs ?? Date.now();
  const source = parseSource(from);
  const at = options.at === undefined || options.at === "" ? undefined : options.at;
  if (at !== undefined && parseInstant(at, "UTC") === null) throw new ProbeError(`"${at}" is not an ISO 8601 date-time`);
  const sorted = [...members].sort((a, b) => a.name.localeCompare(b.name, "en") || a.id.localeCompare(b.id));
  const rows: { row: FleetReachRow; rank: number; device: number; cell: number; group: number }[] = [];
  sorted.forEach((member, device) => {
    const reach = reachGroups(member.compiled, source.text, at, { roles: options.roles, services: options.services }, nowMs);
    for (const { row, cell, group } of reachGroupRows(reach)) {
      rows.push({ rank: outcomeRank(row.outcome), device, cell, group, row: { ...row, deviceId: member.id, device: member.name, at: reach.at } });
    }
  });
  rows.sort((a, b) => b.rank - a.rank || a.device - b.device || a.cell - b.cell || a.group - b.group);
  return { from: source.text, count: (source.last - source.first + 1n).toString(), devices: members.length, rows: rows.map((entry) => entry.row) };
}
