import type { Route } from "./+types/proposal-submit";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// POST /api/v1/devices/{device}/proposals/{proposal}/submit — server/api/v1/proposals.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/proposals/{proposal}/submit", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/proposals/{proposal}/submit", args);
