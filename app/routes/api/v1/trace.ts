import type { Route } from "./+types/trace";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET /api/v1/devices/{device}/trace — server/api/v1/analysis.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/trace", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/trace", args);
