import type { Route } from "./+types/revisions";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET /api/v1/devices/{device}/revisions — server/api/v1/revisions.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/revisions", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/revisions", args);
