import type { Route } from "./+types/fleet-reach";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET /api/v1/reach — fleet reach, server/api/v1/analysis.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/reach", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/reach", args);
