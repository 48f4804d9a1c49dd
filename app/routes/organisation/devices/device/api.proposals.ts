import { data } from "react-router";
import { readJson } from "#server/http/form.server";
import type { Route } from "./+types/api.proposals";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { issuesOf } from "#server/http/proposal-steps.server";
import { refusedJson } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { ProposalDocumentSchema } from "#server/http/schemas";
import { createProposal } from "#server/services/proposals.server";

// POST …/api/proposals with {"title", "reason"?, "ticket"?, "windowStart", "windowEnd", "workFrom"?,
// "document"} → 201 {"id", "url", "edits"}: a proposal whose draft is the whole document, on
// the device's current revision. A malformed document is 400 with the engine's paths.

export async function loader({ context }: Route.LoaderArgs) {
  requireDevice(context);
  throw data({ message: "Proposals are created here with POST; the device's Proposals tab lists them." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireDevice(context, "engineer");
  // 400 for a body that is not JSON or holds text that may not be stored, naming where.
  const body = await readJson(request);
  const parsed = ProposalDocumentSchema.safeParse(body);
  if (!parsed.success) return Response.json({ error: "The request is not valid.", issues: issuesOf(parsed.error) }, { status: 400 });
  const { document, windowStart, windowEnd, ...details } = parsed.data;
  try {
    const proposal = await createProposal(
      { organisationId: access.organisation.id, deviceId: access.device.id },
      { ...details, window: { start: new Date(windowStart), end: new Date(windowEnd) } },
      { kind: "document", document },
      actorOf(access, clientAddressOf(context)),
    );
    const url = `/o/${access.organisation.slug}/devices/${access.device.id}/proposals/${proposal.id}`;
    return Response.json({ id: proposal.id, url, state: proposal.state, baseRevision: proposal.baseRevisionNumber }, { status: 201, headers: { Location: url } });
  } catch (error) {
    return refusedJson(error);
  }
}
