import type { Route } from "./+types/export";
import { requireDevice, revisionNumberOf } from "#server/http/device-access.server";

// The revision as a self-contained model document: the device's own elements plus the shared
// objects it used, with the values they had then (docs/decisions/003).
export async function loader({ request, params }: Route.LoaderArgs) {
  const access = await requireDevice(request, params, "trainee", revisionNumberOf(params.revision));
  const fileName = `${access.device.name}-r${access.revision.number}.sallyport.json`.replace(/[^A-Za-z0-9._-]/g, "_");
  return new Response(`${JSON.stringify(access.effective, null, 2)}\n`, {
    headers: { "Content-Type": "application/json; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` },
  });
}
