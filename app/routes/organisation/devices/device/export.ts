import type { Route } from "./+types/export";
import { requireDevice, requireDeviceRevision, revisionNumberOf } from "#server/http/device-access.server";

// The revision as a self-contained model document: the device's own elements plus the shared
// objects it used, with the values they had then (docs/decisions/003).
export async function loader({ params, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const revision = await requireDeviceRevision(access, revisionNumberOf(params.revision));
  const fileName = `${access.device.name}-r${revision.revision.number}.sallyport.json`.replace(/[^A-Za-z0-9._-]/g, "_");
  return new Response(`${JSON.stringify(revision.effective, null, 2)}\n`, {
    headers: { "Content-Type": "application/json; charset=utf-8", "Content-Disposition": `attachment; filename="${fileName}"` },
  });
}
