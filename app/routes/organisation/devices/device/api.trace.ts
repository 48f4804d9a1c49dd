import type { Route } from "./+types/api.trace";
import { probeInputOf, probeQueryOf, ProbeQuerySchema } from "#server/analysis/probe";
import { isSourceBlock, trace, traceGroups } from "#server/engine/index";
import { requireDevice } from "#server/http/device-access.server";
import { refusedJson } from "#server/http/refusals.server";

// GET …/api/trace?from=&interface=&service=[&to=&at=&account=] → the engine's trace, the same
// JSON as `sallyport trace --json`; a CIDR block as `from` answers per group of sources with the
// same answer (`traceGroups`, as the CLI prints it). Input errors are 400 with {"error": "…"}.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const parsed = ProbeQuerySchema.safeParse(probeQueryOf(new URL(request.url).searchParams));
  if (!parsed.success) return Response.json({ error: parsed.error.issues[0].message }, { status: 400 });
  try {
    const probe = probeInputOf(parsed.data);
    const answer = isSourceBlock(probe.from) ? traceGroups(access.analysis.compiled, probe) : trace(access.analysis.compiled, probe);
    return Response.json(answer, { headers: { "X-Sallyport-Revision": String(access.revision.number) } });
  } catch (error) {
    return refusedJson(error);
  }
}
