// The REST API from a test's side: a client that sends a bearer token (and a distinct client
// address, as TestClient does), tokens made through the service for a team's members, and a
// checker that validates real answers against the served OpenAPI document.
import { randomBytes } from "node:crypto";
import { Validator } from "@seriousme/openapi-schema-validator";
import { Ajv2020 } from "ajv/dist/2020.js";
import addFormatsModule from "ajv-formats";
import { expect, inject } from "vitest";
import type { Role } from "#server/auth/roles";
import { createApiToken, type NewApiToken } from "#server/services/api-tokens.server";

export type ApiResult = { status: number; headers: Headers; text: string; json: unknown };

function documentationAddress(): string {
  const hex = randomBytes(8).toString("hex");
  return `2001:db8:${hex.match(/.{4}/g)?.join(":")}::2`;
}

/** Calls the API with a bearer token (or none), never with cookies. */
export class ApiClient {
  readonly baseUrl = inject("baseUrl");
  readonly clientAddress = documentationAddress();

  constructor(readonly token: string | null) {}

  async call(method: string, path: string, options: { body?: unknown; raw?: string; contentType?: string; headers?: Record<string, string> } = {}): Promise<ApiResult> {
    const headers = new Headers(options.headers);
    if (this.token) headers.set("Authorization", `Bearer ${this.token}`);
    headers.set("X-Forwarded-For", this.clientAddress);
    let body: string | undefined;
    if (options.raw !== undefined) body = options.raw;
    else if (options.body !== undefined) body = JSON.stringify(options.body);
    if (body !== undefined) headers.set("Content-Type", options.contentType ?? "application/json");
    const response = await fetch(`${this.baseUrl}/api/v1${path}`, { method, headers, body, redirect: "manual" });
    const text = await response.text();
    let json: unknown = null;
    try {
      json = text ? JSON.parse(text) : null;
    } catch {
      json = null;
    }
    return { status: response.status, headers: response.headers, text, json };
  }

  get(path: string, headers?: Record<string, string>): Promise<ApiResult> {
    return this.call("GET", path, { headers });
  }

  post(path: string, body: unknown): Promise<ApiResult> {
    return this.call("POST", path, { body });
  }
}

/** A token made through the service for a member of the organisation (personal) or the organisation (service). */
export async function makeToken(organisationId: string, maker: { userId: string; email: string; role: Role }, input: Partial<NewApiToken> & { name: string }): Promise<{ secret: string; id: string }> {
  const { secret, token } = await createApiToken(organisationId, { kind: "personal", scope: "write", lifetimeDays: 30, ...input }, { ...maker, clientAddress: "192.0.2.10" });
  return { secret, id: token.id };
}

type JsonObject = Record<string, unknown>;
const isObject = (value: unknown): value is JsonObject => typeof value === "object" && value !== null && !Array.isArray(value);
/** A JSON pointer segment (RFC 6901 §4). */
const pointer = (segment: string) => segment.replace(/~/g, "~0").replace(/\//g, "~1");

/**
 * Validates real answers against the OpenAPI document the server serves: the document itself
 * against the OpenAPI 3.1 schema (@seriousme/openapi-schema-validator), each answer's status
 * and media type against the operation's responses, and its body against their JSON Schema
 * 2020-12 (Ajv, the dialect OpenAPI 3.1 uses). It remembers which operation × status it saw.
 */
export class Conformance {
  readonly seen = new Set<string>();
  private readonly ajv: Ajv2020;
  private constructor(readonly document: JsonObject) {
    this.ajv = new Ajv2020({ strict: false, allErrors: true, validateSchema: false });
    // ajv-formats is CommonJS: its default export arrives as the module object under some loaders.
    const addFormats = ("default" in addFormatsModule ? addFormatsModule.default : addFormatsModule) as unknown as (ajv: Ajv2020) => void;
    addFormats(this.ajv);
    this.ajv.addSchema({ ...document, $id: "sallyport-openapi" });
  }

  static async load(): Promise<Conformance> {
    const response = await fetch(`${inject("baseUrl")}/api/v1/openapi.json`);
    expect(response.status).toBe(200);
    const document = (await response.json()) as JsonObject;
    const verdict = await new Validator().validate(document);
    expect(verdict.errors ?? [], "the document is valid OpenAPI 3.1").toEqual([]);
    expect(verdict.valid).toBe(true);
    return new Conformance(document);
  }

  /** Every operation in the document as "METHOD /path". */
  operations(): string[] {
    const paths = isObject(this.document.paths) ? this.document.paths : {};
    return Object.entries(paths).flatMap(([path, item]) => (isObject(item) ? Object.keys(item).map((method) => `${method.toUpperCase()} ${path}`) : []));
  }

  /** The statuses the document lists for an operation. */
  statuses(operation: string): string[] {
    const [method, path] = operation.split(" ");
    const paths = isObject(this.document.paths) ? this.document.paths : {};
    const item = isObject(paths[path]) ? paths[path] : {};
    const entry = isObject(item[method.toLowerCase()]) ? item[method.toLowerCase()] : {};
    return Object.keys(isObject((entry as JsonObject).responses) ? ((entry as JsonObject).responses as JsonObject) : {});
  }

  /** Checks one real answer of `operation` ("GET /devices/{device}") against the document. */
  check(operation: string, result: ApiResult): ApiResult {
    const [method, path] = operation.split(" ");
    const status = String(result.status);
    expect(this.statuses(operation), `${operation} documents ${status} (${result.text.slice(0, 200)})`).toContain(status);
    const base = `/paths/${pointer(path)}/${method.toLowerCase()}/responses/${status}`;
    const responses = ((this.document.paths as JsonObject)[path] as JsonObject)[method.toLowerCase()] as JsonObject;
    const documented = (responses.responses as JsonObject)[status] as JsonObject;
    const content = isObject(documented.content) ? documented.content : null;
    if (!content) {
      expect(result.text, `${operation} ${status} has no body`).toBe("");
    } else {
      const mediaType = (result.headers.get("Content-Type") ?? "").split(";")[0].trim();
      expect(Object.keys(content), `${operation} ${status} media type`).toContain(mediaType);
      const validate = this.ajv.compile({ $ref: `sallyport-openapi#${base}/content/${pointer(mediaType)}/schema` });
      const valid = validate(result.json);
      expect(validate.errors ?? [], `${operation} ${status} body: ${result.text.slice(0, 300)}`).toEqual([]);
      expect(valid).toBe(true);
    }
    this.seen.add(`${operation} ${status}`);
    return result;
  }
}
