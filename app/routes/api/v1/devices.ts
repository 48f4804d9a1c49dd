import type { Route } from "./+types/devices";
import { serveApi } from "#server/api/endpoint.server";
import { API_V1 } from "#server/api/v1/index";

// GET (list) and POST (create from a document) /api/v1/devices — server/api/v1/devices.ts.
export const loader = (args: Route.LoaderArgs) => serveApi(API_V1, "/devices", args);
export const action = (args: Route.ActionArgs) => serveApi(API_V1, "/devices", args);
