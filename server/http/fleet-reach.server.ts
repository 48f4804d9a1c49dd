// The fleet reach question from a URL, answered, or the messages per field: what the fleet
// reach page and its CSV share (an API route validates FleetReachQuerySchema itself and calls
// fleetReachOf directly).
import { FleetReachQuerySchema, fleetReachQueryOf, type FleetReachParams, type FleetReachResult } from "../analysis/fleet-reach.ts";
import type { RefusalStatus } from "../errors.ts";
import { fleetReachOf } from "../services/fleet-reach.server.ts";
import { fieldErrorsOf, type FieldErrors } from "./form.server.ts";
import { refusalOf } from "./refusals.server.ts";

export type FleetReachAsked = { params: FleetReachParams } & ({ ok: true; result: FleetReachResult } | { ok: false; status: RefusalStatus; errors: FieldErrors });

export async function askFleetReach(organisationId: string, searchParams: URLSearchParams): Promise<FleetReachAsked> {
  const params = fleetReachQueryOf(searchParams);
  const parsed = FleetReachQuerySchema.safeParse(params);
  if (!parsed.success) {
    // The list fields' messages carry their index in the path; the form shows them under the list's name.
    return { params, ok: false, status: 400, errors: fieldErrorsOf(parsed.error) };
  }
  try {
    return { params, ok: true, result: await fleetReachOf(organisationId, parsed.data) };
  } catch (error) {
    const refusal = refusalOf(error);
    return { params, ok: false, status: refusal.status, errors: { [refusal.field ?? "form"]: refusal.message } };
  }
}
