import type { Route } from "./+types/token";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET /api/v1/token — server/api/v1/token.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/token", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/token", args);
