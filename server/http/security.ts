import { randomBytes } from "node:crypto";
import type { NextFunction, Request, Response } from "express";
import { PROBLEM_CONTENT_TYPE, problemBody } from "../api/problems.ts";

/** The REST API's prefix (server/api/endpoint.server.ts says the same). */
const API_PREFIX = "/api/v1";

/** Security headers on every response; the CSP nonce lets only our own inline scripts run. */
export function securityHeaders(options: { development: boolean }) {
  return (_request: Request, response: Response, next: NextFunction) => {
    const nonce = randomBytes(16).toString("base64");
    response.locals.cspNonce = nonce;
    const scriptSource = options.development ? `'self' 'unsafe-inline' 'unsafe-eval'` : `'self' 'nonce-${nonce}'`;
    const connectSource = options.development ? `'self' ws: wss:` : `'self'`;
    response.setHeader(
      "Content-Security-Policy",
      [
        "default-src 'self'",
        `script-src ${scriptSource}`,
        // The canvas library positions nodes with inline styles.
        "style-src 'self' 'unsafe-inline'",
        "img-src 'self' data: blob:",
        "font-src 'self'",
        `connect-src ${connectSource}`,
        "object-src 'none'",
        "base-uri 'self'",
        "form-action 'self'",
        "frame-ancestors 'none'",
      ].join("; "),
    );
    response.setHeader("X-Content-Type-Options", "nosniff");
    response.setHeader("Referrer-Policy", "strict-origin-when-cross-origin");
    response.setHeader("X-Frame-Options", "DENY");
    response.setHeader("Cross-Origin-Opener-Policy", "same-origin");
    response.setHeader("Permissions-Policy", "camera=(), microphone=(), geolocation=(), payment=()");
    next();
  };
}

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Cross-site request forgery guard (OWASP ASVS 4.2.2): a state-changing request must carry an
 * Origin (or, failing that, a Referer) of this very host. SameSite=Lax cookies are the second line.
 */
export function sameOriginGuard() {
  return (request: Request, response: Response, next: NextFunction) => {
    if (SAFE_METHODS.has(request.method)) return next();
    // The REST API takes only bearer tokens, never the session cookie: a browser never sends a
    // bearer token by itself, so a forged cross-site request has nothing to ride on (docs/decisions/014).
    if (isApiPath(request.path)) return next();
    const host = request.headers.host;
    const origin = request.headers.origin ?? refererOrigin(request.headers.referer);
    if (host && origin && origin !== "null") {
      try {
        if (new URL(origin).host === host) return next();
      } catch {
        // fall through to the refusal
      }
    }
    response
      .status(403)
      .type("text/plain")
      .send("Refused: this request did not come from a Sallyport page (its Origin header is missing or belongs to another site). Reload the page and try again.");
  };
}

function refererOrigin(referer: string | undefined): string | undefined {
  if (!referer) return undefined;
  try {
    return new URL(referer).origin;
  } catch {
    return undefined;
  }
}

/** Paths of the REST API, whose refusals are problem details (server/api/problems.ts). */
function isApiPath(path: string): boolean {
  return path === API_PREFIX || path.startsWith(`${API_PREFIX}/`);
}

/** A refusal before routing: problem details for the API, a plain sentence for everything else. */
function refuse(request: Request, response: Response, code: "content-too-large" | "length-required", detail: string): void {
  const status = code === "content-too-large" ? 413 : 411;
  if (isApiPath(request.path)) {
    const body = code === "content-too-large" ? problemBody(code, detail, { instance: request.path }) : { type: "about:blank", title: "Length Required", status, detail, instance: request.path };
    response.status(status).type(PROBLEM_CONTENT_TYPE).send(JSON.stringify(body));
    return;
  }
  response.status(status).type("text/plain").send(`Refused: ${detail}`);
}

export function clientAddressOf(request: Request): string {
  return (request.ip ?? request.socket.remoteAddress ?? "unknown").replace(/^::ffff:/, "");
}

/**
 * 413 for a request body over the limit, before anything reads it. A body without a declared
 * length (chunked) is refused with 411: browsers always declare it for forms and uploads, and
 * an undeclared body could not be held to the limit without reading it.
 */
export function requestSizeLimit(maximumBytes: number) {
  return (request: Request, response: Response, next: NextFunction) => {
    if (!SAFE_METHODS.has(request.method) && request.headers["content-length"] === undefined && request.headers["transfer-encoding"] !== undefined) {
      refuse(request, response, "length-required", "Send the request body with a Content-Length header.");
      return;
    }
    const declared = Number(request.headers["content-length"] ?? 0);
    if (declared > maximumBytes) {
      refuse(request, response, "content-too-large", `The request body is ${declared} bytes; the limit is ${maximumBytes} bytes.`);
      return;
    }
    next();
  };
}
