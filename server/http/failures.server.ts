// What a request that failed for a reason outside its own control answers (docs/decisions/013):
// the database unreachable → 503 with Retry-After; a unique constraint that a concurrent request
// won → 409. Anything else stays the 500 it is. API routes answer with RFC 9457 problem details,
// pages with a small HTML page of our own (it needs neither the database nor the app's scripts),
// and React Router's data requests with text the error panel shows.
import { AsyncLocalStorage } from "node:async_hooks";
import { ConnectionError, DatabaseError, UniqueConstraintError } from "sequelize";
import { getDatabase } from "../db/database.server.ts";
import type { Middleware } from "./request-context.server.ts";

export type FailureKind = "outage" | "conflict";

/** Seconds a client should wait before trying again while the database is unreachable. */
export const OUTAGE_RETRY_AFTER_SECONDS = 5;

/** PostgreSQL's SQLSTATEs for a server going away or not accepting connections (Appendix A: class 08, 57P01–57P03). */
const OUTAGE_STATES = /^(08...|57P0[123])$/;

/** The kind of failure a thrown value is, or null for anything else (a bug, a 500). */
export function failureKindOf(error: unknown): FailureKind | null {
  if (error instanceof UniqueConstraintError) return "conflict";
  if (error instanceof ConnectionError) return "outage";
  if (error instanceof DatabaseError) {
    const code = (error.original as { code?: unknown } | undefined)?.code;
    if (typeof code === "string" && OUTAGE_STATES.test(code)) return "outage";
    if (/Connection terminated|ECONNREFUSED|ECONNRESET/.test(error.message)) return "outage";
  }
  return null;
}

type Notes = { failure: FailureKind | null };
const current = new AsyncLocalStorage<Notes>();

/** Called by the server entry's error hook: remembers why this request failed, for the middleware below. */
export function noteFailure(error: unknown): FailureKind | null {
  const kind = failureKindOf(error);
  const notes = current.getStore();
  if (notes && kind && !notes.failure) notes.failure = kind;
  return kind;
}

let lastProbe: { at: number; reachable: Promise<boolean> } | null = null;

/** Whether the database answers now (one probe a second at most, bounded to 2 s). */
export function databaseReachable(): Promise<boolean> {
  const now = Date.now();
  if (lastProbe && now - lastProbe.at < 1_000) return lastProbe.reachable;
  const reachable = Promise.race([
    getDatabase()
      .query("SELECT 1")
      .then(() => true)
      .catch(() => false),
    new Promise<boolean>((resolve) => setTimeout(() => resolve(false), 2_000).unref()),
  ]);
  lastProbe = { at: now, reachable };
  return reachable;
}

/** Whether the request is an API call (JSON answers) rather than a page. */
export function isApiRequest(request: Request): boolean {
  const { pathname } = new URL(request.url);
  if (pathname.includes("/api/") || pathname.endsWith(".json")) return true;
  const accept = request.headers.get("Accept") ?? "";
  return /application\/(problem\+)?json/.test(accept) && !accept.includes("text/html");
}

const WORDS: Record<FailureKind, { status: 503 | 409; title: string; detail: string }> = {
  outage: { status: 503, title: "Service Unavailable", detail: "Sallyport cannot reach its database just now. Nothing was changed by this request; try again in a few seconds." },
  conflict: { status: 409, title: "Conflict", detail: "Someone else made the same change at the same moment (a name or address that must be unique is now taken). Nothing was changed by this request; reload and try again." },
};

/** The response for a failure of this kind, shaped for the request. */
export function failureResponse(request: Request, kind: FailureKind): Response {
  const { status, title, detail } = WORDS[kind];
  const headers = new Headers({ "Cache-Control": "no-store" });
  if (kind === "outage") headers.set("Retry-After", String(OUTAGE_RETRY_AFTER_SECONDS));
  const { pathname } = new URL(request.url);
  if (isApiRequest(request)) {
    headers.set("Content-Type", "application/problem+json");
    // RFC 9457 §3: "about:blank" says the status explains it; title is the status phrase.
    return new Response(JSON.stringify({ type: "about:blank", title, status, detail, instance: pathname }), { status, headers });
  }
  if (pathname.endsWith(".data")) {
    // React Router's client shows this text in the page's error panel.
    headers.set("Content-Type", "text/plain; charset=utf-8");
    return new Response(detail, { status, headers });
  }
  headers.set("Content-Type", "text/html; charset=utf-8");
  return new Response(failurePage(status, kind === "outage" ? "Not available just now" : "Changed meanwhile", detail), { status, headers });
}

function failurePage(status: number, heading: string, detail: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${heading} · Sallyport</title>
<style>
  :root { color-scheme: light dark; font-family: system-ui, sans-serif; }
  body { margin: 0; min-height: 100vh; display: grid; place-items: center; background: Canvas; color: CanvasText; }
  main { max-width: 34rem; padding: 2rem 1.5rem; }
  p.status { font-size: .75rem; letter-spacing: .05em; text-transform: uppercase; opacity: .7; }
  a { color: inherit; }
</style>
</head>
<body>
<main>
<p class="status">Error ${status}</p>
<h1>${heading}</h1>
<p>${detail}</p>
<p><a href="">Try again</a></p>
</main>
</body>
</html>
`;
}

/**
 * The root middleware around everything: a 500 caused by the database being unreachable (noted by
 * the error hook, or found by a probe) becomes a 503, one caused by a unique constraint a 409.
 */
export const failureStatusMiddleware: Middleware = async ({ request }, next) => {
  const notes: Notes = { failure: null };
  let response: Response;
  try {
    response = await current.run(notes, () => next());
  } catch (error) {
    const kind = failureKindOf(error);
    if (!kind) throw error;
    return failureResponse(request, kind);
  }
  if (response.status !== 500) return response;
  const kind = notes.failure ?? ((await databaseReachable()) ? null : "outage");
  return kind ? failureResponse(request, kind) : response;
};
