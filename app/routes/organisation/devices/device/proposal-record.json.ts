import type { Route } from "./+types/proposal-record.json";
import { requireDevice } from "#server/http/device-access.server";
import { PROPOSAL_READ_ROLE } from "#server/auth/roles";
import { proposalIdProblem } from "#server/http/proposal-steps.server";
import { refusedJson } from "#server/http/refusals.server";
import { changeRecord } from "#server/services/change-record.server";
import { downloadName } from "#app/utils/analysis";

// GET …/proposals/:proposal/record.json → the proposal's change record as a file
// ({"format": "sallyport-change-record", "version": 2, …}; server/services/change-record.server.ts).
export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireDevice(context, PROPOSAL_READ_ROLE);
  const idProblem = proposalIdProblem(params.proposal);
  if (idProblem) return Response.json(idProblem, { status: 400 });
  try {
    const record = await changeRecord({ organisationId: access.organisation.id, deviceId: access.device.id, proposalId: params.proposal }, access.device, { userId: access.user.id, role: access.role });
    return new Response(`${JSON.stringify(record, null, 2)}\n`, {
      headers: {
        "Content-Type": "application/json; charset=utf-8",
        "Content-Disposition": `attachment; filename="${downloadName(access.device.name, `change-record-${params.proposal.slice(0, 8)}`)}.json"`,
        "Cache-Control": "no-store",
      },
    });
  } catch (error) {
    return refusedJson(error);
  }
}
