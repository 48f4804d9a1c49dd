import { apiV1Document } from "#server/api/v1/index";

// GET /api/v1/openapi.json: the OpenAPI 3.1 document, generated from the routes' own zod schemas. Needs no token.
export function loader() {
  return Response.json(apiV1Document(), { headers: { "Cache-Control": "public, max-age=300" } });
}
