// One REST API endpoint (docs/decisions/014): its method and path, the zod schemas of its path
// parameters, query, body and answer, the scope and least role it needs, and its handler. The
// same definition serves the call (`serveApi`) and writes the OpenAPI document (openapi.ts), so
// what is validated is what is documented. A call goes, in order: bearer token (401) → the
// token's rate limit (429) → scope (403) → role (403) → path parameters (400) → the device in the
// path, when the endpoint names one (404) → query (400) → body (415, 413, 400) → handler →
// answer (with an ETag where asked, 304 on If-None-Match) → audit entry. Every failure is a
// problem details response (problems.ts).
import { isUuid } from "../validation/ids.ts";
import { createHash } from "node:crypto";
import type { z } from "zod";
import { hasAtLeastRole, type Role } from "../auth/roles.ts";
import { getEnvironment } from "../config.server.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { ProbeError } from "../engine/index.ts";
import { Refusal, type RefusalStatus } from "../errors.ts";
import { clientAddressOf, type RequestContext } from "../http/request-context.server.ts";
import { sizeWords } from "../validation/limits.ts";
import { findTextProblem, textProblemMessage } from "../validation/text.ts";
import { authenticateApiToken, countApiCall, type ApiPrincipal, type RateVerdict } from "../services/api-tokens.server.ts";
import { recordAuditEvent } from "../services/audit.server.ts";
import type { ProposalActor } from "../services/proposals.server.ts";
import type { ApiTokenScope } from "#models/api-token-words.ts";
import { problemCodeOf, problemResponse, type ProblemCode, type ProblemExtras } from "./problems.ts";

/** The API's version prefix: every endpoint's path is below it. */
export const API_PREFIX = "/api/v1";
/** The largest request body of an endpoint that takes no model document. */
export const API_BODY_LIMIT = 64 * 1024;

export type ApiTag = "Token" | "Devices" | "Revisions" | "Analysis" | "Proposals" | "Fleet" | "Field checks";
type AnyObject = z.ZodObject;
type NoFields = z.ZodObject<Record<string, never>>;

/** What a handler gets: the validated input, who is calling, and the device when the path names one. */
export type ApiCall<Params, Query, Body, WithDevice extends boolean> = {
  params: Params;
  query: Query;
  body: Body;
  principal: ApiPrincipal;
  /** For the services: the token's person (or the service token itself), its role, and the token for the audit log. */
  actor: ProposalActor;
  device: WithDevice extends true ? DeviceAtRevision : null;
  request: Request;
};

/** A handler's answer: the body (typed by the endpoint's answer schema) and, for a 201, its Location. */
export type ApiAnswer<Body> = { body: Body; status?: 200 | 201; headers?: Record<string, string> };

/** A schema's type with read-only arrays and fields accepted, as the engine's answers are typed. */
type Readable<T> = T extends readonly (infer Item)[] ? readonly Readable<Item>[] : T extends object ? { readonly [K in keyof T]: Readable<T[K]> } : T;

/** What the document says of an endpoint besides its schemas. */
type EndpointFacts = {
  method: "get" | "post";
  /** The OpenAPI path below /api/v1, with `{name}` parameters named as in app/routes.ts. */
  path: string;
  operationId: string;
  summary: string;
  description: string;
  tag: ApiTag;
  /** "write" for any endpoint that changes something: a read token is refused (403). */
  scope: ApiTokenScope;
  /** The least organisation role the token must act with (403 below it). */
  role: Role;
};

export type EndpointSpec<P extends AnyObject, Q extends AnyObject, B extends z.ZodType, R extends z.ZodType, D extends boolean> = EndpointFacts & {
  params?: P;
  query?: Q;
  body?: B;
  /** True when `params.device` names a device of the token's organisation (404 otherwise); the handler gets it at its current revision. */
  device?: D;
  response: { status: 200 | 201; description: string; schema: R; etag?: boolean };
  /** The largest body it takes (API_BODY_LIMIT; MAX_DOCUMENT_REQUEST_BYTES for a body with a model document). */
  bodyLimit?: number;
  /** Statuses this endpoint answers with beyond the ones every endpoint may (400, 401, 403, 404, 429). */
  refusals?: readonly RefusalStatus[];
  handle: (call: ApiCall<z.output<P>, z.output<Q>, z.output<B>, D>) => Promise<ApiAnswer<Readable<z.input<R>>>> | ApiAnswer<Readable<z.input<R>>>;
};

/** An endpoint with its types erased, as the registry, the router and the document hold it. */
export type ApiEndpoint = EndpointFacts & {
  params?: AnyObject;
  query?: AnyObject;
  body?: z.ZodType;
  device: boolean;
  response: { status: 200 | 201; description: string; schema: z.ZodType; etag: boolean };
  bodyLimit: number;
  refusals: readonly RefusalStatus[];
  /** Validates the input against the schemas and runs the handler; throws a Refusal for bad input. */
  run(input: RawInput): Promise<ApiAnswer<unknown>>;
};

type RawInput = { params: Record<string, string | undefined>; query: Record<string, string>; body: unknown; principal: ApiPrincipal; actor: ProposalActor; request: Request };

/** Zod's problems as a 400 with each one's path (prefixed with where it was: a parameter or the body). */
function invalid(error: z.ZodError, where: "path" | "query" | "body"): Refusal {
  const issues = error.issues.map((issue) => ({ path: [where === "body" ? "body" : "", ...issue.path.map(String)].filter(Boolean).join("."), message: issue.message }));
  const lead = where === "body" ? "The request body is not valid" : where === "path" ? "A path parameter is not valid" : "The query is not valid";
  return new Refusal(`${lead}: ${issues.map((issue) => `${issue.path || where}: ${issue.message}`).join(" · ")}`, 400, { issues });
}

function parsed<S extends z.ZodType>(schema: S | undefined, value: unknown, where: "path" | "query" | "body"): z.output<S> {
  if (!schema) return {} as z.output<S>;
  const result = schema.safeParse(value);
  if (!result.success) throw invalid(result.error, where);
  return result.data;
}

/** Defines an endpoint; its handler is typed by its schemas. */
export function defineEndpoint<P extends AnyObject = NoFields, Q extends AnyObject = NoFields, B extends z.ZodType = NoFields, R extends z.ZodType = z.ZodType, D extends boolean = false>(spec: EndpointSpec<P, Q, B, R, D>): ApiEndpoint {
  const { params: paramsSchema, query: querySchema, body: bodySchema, device: withDevice, response, bodyLimit, refusals, handle, ...facts } = spec;
  return {
    ...facts,
    params: paramsSchema,
    query: querySchema,
    body: bodySchema,
    device: withDevice === true,
    response: { ...response, etag: response.etag === true },
    bodyLimit: bodyLimit ?? API_BODY_LIMIT,
    refusals: refusals ?? [],
    async run(input) {
      const params = parsed(paramsSchema, input.params, "path");
      let device: DeviceAtRevision | null = null;
      if (withDevice) {
        device = await deviceRevisions.find(input.principal.organisation.id, String(input.params.device ?? ""));
        if (!device) throw new Refusal("No such device in this organisation.", 404);
      }
      const query = parsed(querySchema, input.query, "query");
      const body = parsed(bodySchema, input.body, "body");
      // The device is there exactly when the endpoint asked for it (D true).
      const call = { params, query, body, principal: input.principal, actor: input.actor, device, request: input.request } as ApiCall<z.output<P>, z.output<Q>, z.output<B>, D>;
      return handle(call);
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Serving a call

type RouteArgs = { request: Request; params: Record<string, string | undefined>; context: RequestContext };

/** The bearer token of the Authorization header (RFC 6750 §2.1), or null when there is none or it is not a bearer one. */
export function bearerTokenOf(request: Request): string | null {
  const header = request.headers.get("Authorization");
  const match = header ? /^Bearer +([A-Za-z0-9\-._~+/]+=*) *$/i.exec(header) : null;
  return match ? match[1] : null;
}

const REALM = 'Bearer realm="Sallyport API"';

/** CORS headers for an allowed Origin (API_CORS_ORIGINS); none when CORS is off or the origin is not listed. */
function corsHeaders(request: Request): Record<string, string> {
  const origin = request.headers.get("Origin");
  if (!origin || !getEnvironment().API_CORS_ORIGINS.includes(origin)) return {};
  return { "Access-Control-Allow-Origin": origin, Vary: "Origin", "Access-Control-Expose-Headers": "ETag, Link, Location, Retry-After, RateLimit-Limit, RateLimit-Remaining, RateLimit-Reset" };
}

function rateHeaders(verdict: RateVerdict): Record<string, string> {
  return { "RateLimit-Limit": String(verdict.limit), "RateLimit-Remaining": String(Math.max(0, verdict.limit - verdict.calls)), "RateLimit-Reset": String(verdict.resetSeconds) };
}

/** The weak ETag of a JSON body (weak: compression may re-encode the bytes, RFC 9110 §8.8.1). */
function etagOf(text: string): string {
  return `W/"${createHash("sha256").update(text).digest("base64url").slice(0, 32)}"`;
}

/** If-None-Match names this ETag (weak comparison, RFC 9110 §13.1.2), or is "*". */
function notModified(request: Request, etag: string): boolean {
  const header = request.headers.get("If-None-Match");
  if (!header) return false;
  const opaque = (tag: string) => tag.trim().replace(/^W\//, "");
  return header.split(",").some((tag) => tag.trim() === "*" || opaque(tag) === opaque(etag));
}

/**
 * The JSON body of a write call, within the endpoint's limit, every string in it storable; a
 * Refusal (415, 413, 400 naming the path) otherwise.
 */
async function jsonBodyOf(request: Request, limit: number): Promise<unknown> {
  const type = (request.headers.get("Content-Type") ?? "").split(";")[0].trim().toLowerCase();
  if (type !== "application/json") throw new Refusal("Send the body as JSON, with Content-Type: application/json.", 415);
  // Read whole before judging its size: the HTTP server has already refused anything over its own
  // limit (server/http/main.ts), and a body left unread resets the connection under the client,
  // which would then never see the 413.
  const text = await request.text();
  if (Buffer.byteLength(text) > limit) throw new Refusal(`The request body is larger than ${sizeWords(limit)}, this endpoint's limit.`, 413);
  let body: unknown;
  try {
    body = JSON.parse(text) as unknown;
  } catch {
    throw new Refusal("The request body is not valid JSON.", 400, { issues: [{ path: "body", message: "is not JSON" }] });
  }
  // NUL, control characters and lone surrogates are refused before anything is written (server/validation/text.ts).
  const found = findTextProblem(body);
  if (found) throw new Refusal(textProblemMessage(found, "body field"), 400, { issues: [{ path: `body.${found.path}`, message: found.problem }] });
  return body;
}

/** What the services need to know about the caller: the person (or the service token), the role and the token. */
function actorOf(principal: ApiPrincipal, clientAddress: string): ProposalActor {
  const apiToken = { id: principal.token.id, name: principal.token.name };
  if (principal.user) return { userId: principal.user.id, email: principal.user.email, name: principal.user.name, role: principal.role, clientAddress, apiToken };
  return { userId: null, email: `${principal.token.name} (service token)`, name: `the service token “${principal.token.name}”`, role: principal.role, clientAddress, apiToken };
}

function problemOfRefusal(refusal: Refusal): { code: ProblemCode; extras: ProblemExtras } {
  const extras: ProblemExtras = {
    ...(refusal.issues.length ? { issues: [...refusal.issues] } : {}),
    ...(refusal.reasons.length ? { reasons: refusal.reasons.map((reason) => ({ kind: reason.kind, words: reason.words, details: [...reason.details] })) } : {}),
    ...(refusal.conflict ? { conflict: { currentNumber: refusal.conflict.currentNumber, changes: refusal.conflict.changes.map((change) => ({ ...change, details: [...change.details] })) } } : {}),
  };
  return { code: problemCodeOf(refusal.status), extras };
}

/** The endpoints of one path, for the router: found by path, told apart by method. */
export type EndpointTable = ReadonlyMap<string, readonly ApiEndpoint[]>;

/**
 * Serves a call to `path` (an OpenAPI path of the table) from a React Router resource route:
 * `export const loader = (args: Route.LoaderArgs) => serveApi(API_V1_TABLE, "/devices", args);`
 */
export async function serveApi(table: EndpointTable, path: string, { request, params, context }: RouteArgs): Promise<Response> {
  const cors = corsHeaders(request);
  const instance = new URL(request.url).pathname;
  const candidates = table.get(path) ?? [];
  const method = request.method === "HEAD" ? "get" : request.method.toLowerCase();
  const allow = [...new Set(candidates.map((candidate) => candidate.method.toUpperCase()))].join(", ");
  if (request.method === "OPTIONS") {
    // A CORS preflight: answered only for a configured origin; otherwise there is no CORS at all.
    if (!cors["Access-Control-Allow-Origin"]) return problemResponse("method-not-allowed", "Cross-origin calls are not enabled for this origin.", { instance }, { Allow: allow });
    return new Response(null, { status: 204, headers: { ...cors, "Access-Control-Allow-Methods": allow, "Access-Control-Allow-Headers": "Authorization, Content-Type, If-None-Match", "Access-Control-Max-Age": "600" } });
  }
  const endpoint = candidates.find((candidate) => candidate.method === method);
  if (!endpoint) return problemResponse("method-not-allowed", `${instance} takes ${allow || "no method"}, not ${request.method}.`, { instance }, { ...cors, Allow: allow });

  const secret = bearerTokenOf(request);
  const principal = secret ? await authenticateApiToken(secret) : null;
  if (!principal) {
    // The same answer for a missing, malformed, unknown, revoked or expired token: no hint which (RFC 6750 §3.1).
    const challenge = secret ? `${REALM}, error="invalid_token"` : REALM;
    return problemResponse("unauthorized", "Send a valid API token as “Authorization: Bearer <token>”. Make one on your account page.", { instance }, { ...cors, "WWW-Authenticate": challenge });
  }
  const clientAddress = clientAddressOf(context);
  const actor = actorOf(principal, clientAddress);
  const endpointName = `${endpoint.method.toUpperCase()} ${endpoint.path}`;
  const deviceId = typeof params.device === "string" && isUuid(params.device) ? params.device : null;
  const query = Object.fromEntries(new URL(request.url).searchParams);
  const audit = (status: number) =>
    recordAuditEvent(actor, {
      organisationId: principal.organisation.id,
      action: "api.called",
      targetType: deviceId ? "device" : "organisation",
      targetId: deviceId ?? principal.organisation.id,
      changes: { endpoint: endpointName, status, ...(Object.keys(query).length ? { query: new URLSearchParams(query).toString().slice(0, 300) } : {}) },
    });

  const verdict = await countApiCall(principal.token, clientAddress);
  const rate = rateHeaders(verdict);
  if (!verdict.allowed) {
    // The first refusal of a window is audited; the rest are only counted (a runaway loop must not flood the log).
    if (verdict.calls === verdict.limit + 1) await audit(429);
    return problemResponse("rate-limited", `This token may make ${verdict.limit} calls a minute; try again in ${verdict.resetSeconds} s.`, { instance, retryAfter: verdict.resetSeconds }, { ...cors, ...rate, "Retry-After": String(verdict.resetSeconds) });
  }
  const refuse = async (code: ProblemCode, detail: string, extras: ProblemExtras = {}, headers: Record<string, string> = {}, status?: number) => {
    const response = problemResponse(code, detail, { instance, ...extras }, { ...cors, ...rate, ...headers }, status);
    await audit(response.status);
    return response;
  };
  if (endpoint.scope === "write" && principal.token.scope !== "write") {
    return refuse("insufficient-scope", `${endpointName} changes something; this token has the read scope. Make a token with the write scope.`, {}, { "WWW-Authenticate": `${REALM}, error="insufficient_scope", scope="write"` });
  }
  if (!hasAtLeastRole(principal.role, endpoint.role)) {
    return refuse("forbidden", `${endpointName} needs the ${endpoint.role} role or higher; this token acts as ${principal.role}.`);
  }

  let answer: ApiAnswer<unknown>;
  try {
    const body = endpoint.method === "post" && endpoint.body ? await jsonBodyOf(request, endpoint.bodyLimit) : undefined;
    answer = await endpoint.run({ params, query, body, principal, actor, request });
  } catch (error) {
    const refusal = error instanceof Refusal ? error : error instanceof ProbeError ? new Refusal(error.message, 400) : null;
    if (!refusal) throw error;
    const { code, extras } = problemOfRefusal(refusal);
    return refuse(code, refusal.message, extras, refusal.headers, refusal.status);
  }

  const status = answer.status ?? endpoint.response.status;
  const text = JSON.stringify(answer.body);
  const headers: Record<string, string> = { ...cors, ...rate, ...answer.headers, "Content-Type": "application/json; charset=utf-8" };
  const next = nextPageLink(request, answer.body);
  if (next) headers.Link = next;
  // A successful write is audited by the service that made the change, in its transaction, with the token's name.
  if (endpoint.scope === "read") await audit(status);
  if (endpoint.response.etag) {
    const etag = etagOf(text);
    Object.assign(headers, { ETag: etag, "Cache-Control": "private, no-cache" });
    if (notModified(request, etag)) {
      delete headers["Content-Type"];
      return new Response(null, { status: 304, headers });
    }
  } else {
    headers["Cache-Control"] = "no-store";
  }
  return new Response(text, { status, headers });
}

/** A page's `Link: <…>; rel="next"` (RFC 8288), relative to the request: never built from its Host. */
function nextPageLink(request: Request, body: unknown): string | null {
  if (typeof body !== "object" || body === null || !("nextCursor" in body) || typeof body.nextCursor !== "string") return null;
  const url = new URL(request.url);
  url.searchParams.set("cursor", body.nextCursor);
  return `<${url.pathname}?${url.searchParams.toString()}>; rel="next"`;
}

/** A table of endpoints by path, for `serveApi`. */
export function endpointTable(endpoints: readonly ApiEndpoint[]): EndpointTable {
  const table = new Map<string, ApiEndpoint[]>();
  for (const endpoint of endpoints) table.set(endpoint.path, [...(table.get(endpoint.path) ?? []), endpoint]);
  return table;
}
