import type { Route } from "./+types/reach";
import { requireDevice } from "../../../../../server/http/device-access.server";
import { EmptyState } from "~/components/ui/empty-state";

// Being built; see the analysis issue.
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireDevice(request, params);
  return null;
}

export default function Placeholder() {
  return <EmptyState title="Coming">This analysis page is being built.</EmptyState>;
}
