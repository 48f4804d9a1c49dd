import type { Route } from "./+types/api.trace";
import { probeInputOf, probeQueryOf, ProbeQuerySchema } from "#server/analysis/probe";
import { trace } from "#server/engine/index";
import { requireDevice } from "#server/http/device-access.server";
import { refusedJson } from "#server/http/refusals.server";

// GET …/api/trace?from=&interface=&service=[&to=&at=&account=] → the engine's trace, the same
// JSON as `sallyport trace --json`; input errors are 400 with {"error": "…"}.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const parsed = ProbeQuerySchema.safeParse(probeQueryOf(new URL(request.url).searchParams));
  if (!parsed.success) return Response.json({ error: parsed.error.issues[0].message }, { status: 400 });
  try {
    return Response.json(trace(access.analysis.compiled, probeInputOf(parsed.data)), { headers: { "X-Sallyport-Revision": String(access.revision.number) } });
  } catch (error) {
    return refusedJson(error);
  }
}
