import type { Route } from "./+types/revision-export";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET /api/v1/devices/{device}/revisions/{revision}/export — server/api/v1/revisions.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/revisions/{revision}/export", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/revisions/{revision}/export", args);
