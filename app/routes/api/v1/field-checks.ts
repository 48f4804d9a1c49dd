import type { Route } from "./+types/field-checks";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET and POST /api/v1/devices/{device}/field-checks — server/api/v1/field-checks.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/field-checks", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/field-checks", args);
