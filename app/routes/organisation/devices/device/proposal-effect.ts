import type { Route } from "./+types/proposal-effect";
import { requireDevice } from "#server/http/device-access.server";
import { PROPOSAL_READ_ROLE } from "#server/auth/roles";
import { proposalIdProblem } from "#server/http/proposal-steps.server";
import { refusedJson } from "#server/http/refusals.server";
import { proposalEffect, proposalEffectSummary } from "#server/services/proposal-effect.server";
import { spaceQueryOf } from "#server/analysis/effect-space-params";

// GET …/proposals/:proposal/effect → the effect of the proposal's draft on its base revision
// (an applied proposal: of the revision it made), as the proposal page shows it:
//   {"proposal": {"id", "baseRevision", "draftVersion", "appliedRevision"}, "timezone",
//    "ok": true, "effect": {headline, changed, blocked, totals, groups, rules, findings,
//    lockout, workFrom, expectations, blocking, picture}}
// with "spaces" (the interface × service × family address spaces where some source moves) and
// "space" (one of them drawn as 16 × 16 cells of kinds of source: `?space-interface=&
// space-service=&space-family=4|6&space-block=<CIDR>`, the first by default),
// or "ok": false with "problems" when the draft no longer validates. `?summary=1` gives only
// the headline, totals and what blocks (the draft editor refreshes it after each edit);
// `?group=<before>>after>&offset=N&limit=M` pages one group's sources.

function integerParam(url: URL, name: string): number | undefined {
  const text = url.searchParams.get(name);
  if (text === null || text === "") return undefined;
  const value = Number(text);
  return Number.isInteger(value) && value >= 0 ? value : Number.NaN;
}

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireDevice(context, PROPOSAL_READ_ROLE);
  const idProblem = proposalIdProblem(params.proposal);
  if (idProblem) return Response.json(idProblem, { status: 400 });
  const url = new URL(request.url);
  const offset = integerParam(url, "offset");
  const limit = integerParam(url, "limit");
  const issues = [...(Number.isNaN(offset) ? [{ path: "offset", message: "must be a whole number, 0 or more" }] : []), ...(Number.isNaN(limit) ? [{ path: "limit", message: "must be a whole number, 0 or more" }] : [])];
  if (issues.length > 0) return Response.json({ error: "The request is not valid.", issues }, { status: 400 });
  const ref = { organisationId: access.organisation.id, deviceId: access.device.id, proposalId: params.proposal };
  try {
    const answer = url.searchParams.get("summary") === "1" ? await proposalEffectSummary(ref) : await proposalEffect(ref, { group: url.searchParams.get("group") ?? undefined, offset, limit }, spaceQueryOf(url.searchParams));
    const proposal = { id: params.proposal, baseRevision: answer.basis.baseRevision, draftVersion: answer.basis.draftVersion, appliedRevision: answer.basis.appliedRevision };
    const headers = { "Cache-Control": "no-store" };
    if (!answer.ok) return Response.json({ proposal, timezone: answer.basis.timezone, ok: false, problems: answer.problems }, { headers });
    if ("summary" in answer) return Response.json({ proposal, timezone: answer.basis.timezone, ok: true, effect: answer.summary }, { headers });
    return Response.json({ proposal, timezone: answer.basis.timezone, ok: true, effect: answer.view, spaces: answer.spaces, space: answer.space }, { headers });
  } catch (error) {
    return refusedJson(error);
  }
}
