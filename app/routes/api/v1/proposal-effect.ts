import type { Route } from "./+types/proposal-effect";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET /api/v1/devices/{device}/proposals/{proposal}/effect — server/api/v1/proposals.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/proposals/{proposal}/effect", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/proposals/{proposal}/effect", args);
