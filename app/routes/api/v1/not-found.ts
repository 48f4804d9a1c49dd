import type { Route } from "./+types/not-found";
import { problemResponse } from "#server/api/problems";

// Any other path under /api/v1: a problem details 404 (not the app's HTML page), whatever the method.
function notFound({ request }: Route.LoaderArgs | Route.ActionArgs) {
  const path = new URL(request.url).pathname;
  return problemResponse("not-found", `There is no endpoint ${path.slice(0, 200)}; /api/v1/openapi.json lists them.`, { instance: path });
}

export const loader = notFound;
export const action = notFound;
