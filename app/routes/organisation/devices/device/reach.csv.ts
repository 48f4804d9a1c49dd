import { data } from "react-router";
import type { Route } from "./+types/reach.csv";
import { requireDevice } from "../../../../../server/http/device-access.server";

// Being built; see the analysis issue.
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireDevice(request, params);
  throw data({ message: "Not available yet." }, { status: 404 });
}
