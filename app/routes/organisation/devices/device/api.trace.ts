import type { Route } from "./+types/api.trace";
import { probeInputOf, probeQueryOf, ProbeQuerySchema } from "#server/analysis/probe";
import { isSourceBlock, trace, traceGroups } from "#server/engine/index";
import { requireDevice } from "#server/http/device-access.server";
import { refusedJson } from "#server/http/refusals.server";
import { traceSubjectOf } from "#server/http/trace-subject.server";

// GET …/api/trace?from=&interface=&service=[&to=&at=&account=] → the engine's trace, the same
// JSON as `sallyport trace --json`; a CIDR block as `from` answers per group of sources with the
// same answer (`traceGroups`, as the CLI prints it). Input errors are 400 with {"error": "…"}. On
// the current revision by default; `&proposal=<id>[&side=draft|base]` traces on a side of a change
// proposal (read-only; server/http/trace-subject.server.ts). The X-Sallyport-Revision header names
// the revision traced (absent for a draft not yet applied).
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const url = new URL(request.url);
  const parsed = ProbeQuerySchema.safeParse(probeQueryOf(url.searchParams));
  if (!parsed.success) return Response.json({ error: parsed.error.issues[0].message }, { status: 400 });
  try {
    const subject = await traceSubjectOf(access, url.searchParams);
    const probe = probeInputOf(parsed.data);
    const answer = isSourceBlock(probe.from) ? traceGroups(subject.compiled, probe) : trace(subject.compiled, probe);
    return Response.json(answer, { headers: subject.revision === null ? {} : { "X-Sallyport-Revision": String(subject.revision) } });
  } catch (error) {
    return refusedJson(error);
  }
}
