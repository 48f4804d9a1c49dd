import type { Route } from "./+types/expectations.json";
import { requireDevice } from "#server/http/device-access.server";
import { refusedJson } from "#server/http/refusals.server";
import { exportExpectations } from "#server/services/expectations.server";
import { downloadName } from "#app/utils/analysis";

// The device's expectations as a file the Import form (and `sallyport diff --expectations`) reads.
export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  try {
    const file = await exportExpectations(access.organisation.id, access.device.id);
    return new Response(`${JSON.stringify(file, null, 2)}\n`, {
      headers: {
        "Content-Type": "application/json; charset=utf-8",
        "Content-Disposition": `attachment; filename="${downloadName(access.device.name, "expectations")}.json"`,
        "Cache-Control": "no-store",
      },
    });
  } catch (error) {
    return refusedJson(error);
  }
}
