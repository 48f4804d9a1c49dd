// Errors of the REST API as problem details (RFC 9457): a JSON object with `type`, `title`,
// `status` and `detail`, sent as application/problem+json. Each kind of problem has a short code;
// its `type` is a reference to the problem's entry on the API reference page (relative, so it
// never names a host: RFC 9457 §3.1.1 allows a URI reference). Extension members carry what a
// program can act on: `issues` (input problems with their paths), `reasons` (why a change is
// blocked), `conflict` (the device moved on). Pure: the runner and the document share it.
import { z } from "zod";

/** Where the reference page documents each problem (`#problem-<code>`). */
export const API_REFERENCE_PATH = "/docs/api";
export const PROBLEM_CONTENT_TYPE = "application/problem+json";

/** Every kind of problem the API answers with, its status and its title (the same for every occurrence: RFC 9457 §3.1.3). */
export const PROBLEMS = {
  "invalid-request": { status: 400, title: "The request is not valid", explains: "A path parameter, query parameter or body field is missing or malformed; `issues` lists each one with its path." },
  unauthorized: { status: 401, title: "A valid API token is needed", explains: "The Authorization header is missing, or its bearer token is malformed, unknown, revoked or expired. The answer never says which." },
  "insufficient-scope": { status: 403, title: "The token's scope does not allow this", explains: "A read token called an endpoint that changes something; make a token with the write scope." },
  forbidden: { status: 403, title: "The token's role does not allow this", explains: "The role the token acts with (its owner's, or the service token's) is too low, or the product refused the step for that actor." },
  "not-found": { status: 404, title: "Not found", explains: "No such endpoint, or no such device, revision or proposal in the token's organisation (another organisation's is answered the same way)." },
  "method-not-allowed": { status: 405, title: "Method not allowed", explains: "The path exists but not with this method; the Allow header lists the ones it takes." },
  conflict: { status: 409, title: "The request conflicts with the current state", explains: "A name is taken, the device changed since, or a proposal is not in a state that allows the step." },
  "content-too-large": { status: 413, title: "The request body is too large", explains: "Bodies are limited: 9 MiB with a model document (a document exports to at most 8 MiB), 64 KiB otherwise; `detail` says the limit." },
  "unsupported-media-type": { status: 415, title: "Send the body as JSON", explains: "Request bodies are JSON with Content-Type: application/json." },
  "unprocessable": { status: 422, title: "The request cannot be carried out", explains: "The input is well-formed but the product refuses it; `detail` says why." },
  "rate-limited": { status: 429, title: "Too many calls with this token", explains: "The token's calls per minute are used up; the Retry-After header says when to call again (RFC 6585 §4)." },
} as const;

export type ProblemCode = keyof typeof PROBLEMS;
export type ProblemStatus = (typeof PROBLEMS)[ProblemCode]["status"];

export function problemType(code: ProblemCode): string {
  return `${API_REFERENCE_PATH}#problem-${code}`;
}

/** The code a refusal of this status is reported with (403 from a service is the role kind). */
export function problemCodeOf(status: number): ProblemCode {
  const found = (Object.keys(PROBLEMS) as ProblemCode[]).find((code) => PROBLEMS[code].status === status && code !== "insufficient-scope");
  return found ?? "invalid-request";
}

const IssueSchema = z.object({ path: z.string(), message: z.string() }).meta({ id: "Issue", description: "One problem with the input: where (a dotted path into the body or the parameter's name) and what." });

/** The problem details object (RFC 9457 §3) with this API's extension members. */
export const ProblemSchema = z
  .object({
    type: z.string().meta({ description: "A reference to this kind of problem on the API reference page." }),
    title: z.string(),
    status: z.number().int().min(400).max(599),
    detail: z.string().meta({ description: "This occurrence in words." }),
    instance: z.string().optional().meta({ description: "The path that was called." }),
    issues: z.array(IssueSchema).optional(),
    reasons: z.array(z.object({ kind: z.string(), words: z.string(), details: z.array(z.string()) })).optional().meta({ description: "Why a change is blocked (the lockout guard, a failing expectation)." }),
    conflict: z
      .object({
        currentNumber: z.number().int(),
        changes: z.array(z.object({ section: z.string(), change: z.enum(["added", "removed", "changed", "moved"]), element: z.string(), details: z.array(z.string()) })),
      })
      .optional()
      .meta({ description: "The device's current revision and what changed since the one the request was based on." }),
    retryAfter: z.number().int().optional().meta({ description: "Seconds until the rate limit's window resets (also in Retry-After)." }),
  })
  .meta({ id: "Problem", description: "Problem details (RFC 9457)." });

export type Problem = z.infer<typeof ProblemSchema>;
export type ProblemExtras = Omit<Problem, "type" | "title" | "status" | "detail">;

/** The problem details object: the code's type, title and status, this occurrence's detail. */
export function problemBody(code: ProblemCode, detail: string, extras: ProblemExtras = {}, status: number = PROBLEMS[code].status): Problem {
  return { type: problemType(code), title: PROBLEMS[code].title, status, detail, ...extras };
}

/** A problem details response. */
export function problemResponse(code: ProblemCode, detail: string, extras: ProblemExtras = {}, headers: Record<string, string> = {}, status: number = PROBLEMS[code].status): Response {
  return new Response(JSON.stringify(problemBody(code, detail, extras, status)), { status, headers: { ...headers, "Content-Type": PROBLEM_CONTENT_TYPE, "Cache-Control": "no-store" } });
}
