// The OpenAPI 3.1 document of an API version, generated from its endpoint definitions by
// @asteasolutions/zod-to-openapi: the same zod schemas validate the calls and describe them, so
// the document cannot drift from what the routes accept and answer (docs/decisions/014).
import { OpenAPIRegistry, OpenApiGeneratorV31 } from "@asteasolutions/zod-to-openapi";
import type { z } from "zod";
import { ROLES } from "#models/roles.ts";
import { sizeWords } from "../validation/limits.ts";
import { API_PREFIX, type ApiEndpoint } from "./endpoint.server.ts";
import { API_REFERENCE_PATH, PROBLEM_CONTENT_TYPE, PROBLEMS, ProblemSchema, problemCodeOf } from "./problems.ts";

/** The document's own shape, as far as the reference page reads it. */
export type OpenApiDocument = ReturnType<OpenApiGeneratorV31["generateDocument"]>;

/** Statuses every endpoint may answer with: bad input, no valid token, scope or role, not found, rate limit. */
const COMMON_REFUSALS = [400, 401, 403, 404, 429] as const;

const RATE_HEADERS = {
  "RateLimit-Limit": { description: "Calls this token may make per minute.", schema: { type: "integer" as const } },
  "RateLimit-Remaining": { description: "Calls left in the current minute.", schema: { type: "integer" as const } },
  "RateLimit-Reset": { description: "Seconds until the minute's count starts again.", schema: { type: "integer" as const } },
};

function refusalDescription(status: number): string {
  if (status === 403) return "The token's scope or role does not allow this";
  const codes = Object.entries(PROBLEMS).filter(([, problem]) => problem.status === status);
  return codes[0]?.[1].title ?? problemCodeOf(status);
}

function register(registry: OpenAPIRegistry, endpoint: ApiEndpoint): void {
  const statuses = [...new Set([...COMMON_REFUSALS, ...endpoint.refusals])].sort((a, b) => a - b);
  const refusals = Object.fromEntries(
    statuses.map((status) => [
      String(status),
      {
        description: refusalDescription(status),
        ...(status === 401 ? { headers: { "WWW-Authenticate": { description: "The bearer challenge (RFC 6750 §3).", schema: { type: "string" as const } } } } : {}),
        ...(status === 429 ? { headers: { "Retry-After": { description: "Seconds to wait (RFC 9110 §10.2.3).", schema: { type: "integer" as const } } } } : {}),
        content: { [PROBLEM_CONTENT_TYPE]: { schema: ProblemSchema } },
      },
    ]),
  );
  const success = {
    description: endpoint.response.description,
    headers: {
      ...RATE_HEADERS,
      ...(endpoint.response.etag ? { ETag: { description: "Send it back as If-None-Match: an unchanged answer is a 304 without a body.", schema: { type: "string" as const } } } : {}),
      ...(endpoint.response.status === 201 ? { Location: { description: "Where the new resource is.", schema: { type: "string" as const } } } : {}),
    },
    content: { "application/json": { schema: endpoint.response.schema } },
  };
  const scopeWords = endpoint.scope === "write" ? "a token with the **write** scope" : "any token (read or write scope)";
  registry.registerPath({
    method: endpoint.method,
    path: endpoint.path,
    operationId: endpoint.operationId,
    summary: endpoint.summary,
    description: `${endpoint.description}\n\nNeeds ${scopeWords} acting as **${endpoint.role}** or higher.`,
    tags: [endpoint.tag],
    security: [{ bearerToken: endpoint.scope === "write" ? ["write"] : [] }],
    "x-sallyport-scope": endpoint.scope,
    "x-sallyport-role": endpoint.role,
    request: {
      ...(endpoint.params ? { params: endpoint.params } : {}),
      ...(endpoint.query ? { query: endpoint.query } : {}),
      ...(endpoint.body ? { body: { required: true, description: `JSON, at most ${sizeWords(endpoint.bodyLimit)}.`, content: { "application/json": { schema: endpoint.body as z.ZodType<unknown> } } } } : {}),
    },
    responses: {
      [String(endpoint.response.status)]: success,
      ...(endpoint.response.etag ? { "304": { description: "Not modified: the If-None-Match ETag is still current." } } : {}),
      ...refusals,
    },
  });
}

/** The document for these endpoints; `extra` holds schemas only referenced by `$ref` (the model document). */
export function openApiDocument(endpoints: readonly ApiEndpoint[], extra: readonly z.ZodType[], info: { version: string; description: string }): OpenApiDocument {
  const registry = new OpenAPIRegistry();
  registry.registerComponent("securitySchemes", "bearerToken", {
    type: "http",
    scheme: "bearer",
    description: "An API token: a personal one from your account page, or an organisation's service token from its settings. Send it as `Authorization: Bearer <token>`.",
  });
  registry.registerPath({
    method: "get",
    path: "/openapi.json",
    operationId: "getOpenApiDocument",
    summary: "This document",
    description: "The OpenAPI 3.1 document of this API. Needs no token.",
    tags: ["Token"],
    security: [],
    responses: { "200": { description: "The document.", content: { "application/json": { schema: { type: "object" } } } } },
  });
  for (const endpoint of endpoints) register(registry, endpoint);
  const generator = new OpenApiGeneratorV31([...registry.definitions, ...extra]);
  return generator.generateDocument({
    openapi: "3.1.0",
    info: { title: "Sallyport API", version: info.version, description: info.description },
    // Relative to where the document is served: no host is named (RFC 3986 §4.2).
    servers: [{ url: API_PREFIX }],
    security: [{ bearerToken: [] }],
    tags: [
      { name: "Token", description: "The token you call with, and this document." },
      { name: "Devices", description: "The organisation's devices." },
      { name: "Revisions", description: "A device's saved revisions; they never change." },
      { name: "Analysis", description: "Trace, reach, the exposure map and findings of a device's current revision." },
      { name: "Fleet", description: "Answers across every device of the organisation." },
      { name: "Field checks", description: "What was observed from a vantage point, compared with the model." },
      { name: "Proposals", description: "Changes reviewed before they land." },
    ],
    externalDocs: { description: "Problem types and the reference in the app", url: API_REFERENCE_PATH },
    "x-sallyport-roles": [...ROLES],
  });
}
