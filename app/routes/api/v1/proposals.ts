import type { Route } from "./+types/proposals";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// POST /api/v1/devices/{device}/proposals — server/api/v1/proposals.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices/{device}/proposals", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices/{device}/proposals", args);
