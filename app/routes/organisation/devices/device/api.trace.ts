import { data } from "react-router";
import type { Route } from "./+types/api.trace";
import { compiledCurrentRevision } from "#server/analysis/compiled-revisions.server";
import { probeInputOf, probeQueryOf, ProbeQuerySchema } from "#server/analysis/probe";
import { requireMember } from "#server/auth/guard.server";
import { ProbeError, trace } from "#server/engine/index";

// GET …/api/trace?from=&interface=&service=[&to=&at=&account=] → the engine's trace, the same
// JSON as `sallyport trace --json`; input errors are 400 with {"error": "…"}.
export async function loader({ request, params }: Route.LoaderArgs) {
  const access = await requireMember(request, params.organisation);
  const revision = await compiledCurrentRevision(access.organisation.id, params.device);
  if (!revision) throw data({ error: "No such device in this organisation." }, { status: 404 });
  const parsed = ProbeQuerySchema.safeParse(probeQueryOf(new URL(request.url).searchParams));
  if (!parsed.success) return Response.json({ error: parsed.error.issues[0].message }, { status: 400 });
  try {
    return Response.json(trace(revision.compiled, probeInputOf(parsed.data)), { headers: { "X-Sallyport-Revision": String(revision.revisionNumber) } });
  } catch (error) {
    if (error instanceof ProbeError) return Response.json({ error: error.message }, { status: 400 });
    throw error;
  }
}
