import { randomBytes } from "node:crypto";
import type { NextFunction, Request, Response } from "express";
import { PROBLEM_CONTENT_TYPE, problemBody } from "../api/problems.ts";
import { textProblem } from "../validation/text.ts";

/** The REST API's prefix (server/api/endpoint.server.ts says the same). */
const API_PREFIX = "/api/v1";

/** Random bytes drawn 4 KiB at a time: one call into the crypto library per 256 nonces (a call per response was ≈ 26 µs of the trace JSON route's profile). */
const NONCE_BYTES = 16;
let nonceStock = Buffer.alloc(0);
let nonceOffset = 0;
function freshNonce(): string {
  if (nonceOffset + NONCE_BYTES > nonceStock.length) {
    nonceStock = randomBytes(NONCE_BYTES * 256);
    nonceOffset = 0;
  }
  const nonce = nonceStock.toString("base64", nonceOffset, nonceOffset + NONCE_BYTES);
  nonceOffset += NONCE_BYTES;
  return nonce;
}

/** Security headers on every response; the CSP nonce lets only our own inline scripts run. */
export function securityHeaders(options: { development: boolean }) {
  const connectSource = options.development ? `'self' ws: wss:` : `'self'`;
  // The policy around the script source, built once; only the nonce changes per response.
  const policy = (scriptSource: string) =>
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
    ].join("; ");
  const [beforeNonce, afterNonce] = policy("'self' 'nonce-\u0000'").split("\u0000");
  const developmentPolicy = policy(`'self' 'unsafe-inline' 'unsafe-eval'`);
  return (_request: Request, response: Response, next: NextFunction) => {
    const nonce = freshNonce();
    response.locals.cspNonce = nonce;
    response.setHeader("Content-Security-Policy", options.development ? developmentPolicy : `${beforeNonce}${nonce}${afterNonce}`);
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
 * Origin (or, failing that, a Referer) equal to this site's configured origin — scheme, host and
 * port (RFC 6454 §5) — never compared with the request's own Host, which a client chooses.
 * SameSite=Lax cookies are the second line.
 */
export function sameOriginGuard(siteOrigin: string) {
  const expected = new URL(siteOrigin).origin;
  return (request: Request, response: Response, next: NextFunction) => {
    if (SAFE_METHODS.has(request.method)) return next();
    // The REST API takes only bearer tokens, never the session cookie: a browser never sends a
    // bearer token by itself, so a forged cross-site request has nothing to ride on (docs/decisions/014).
    if (isApiPath(request.path)) return next();
    const origin = request.headers.origin ?? refererOrigin(request.headers.referer);
    if (origin && origin !== "null") {
      try {
        if (new URL(origin).origin === expected) return next();
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

/**
 * Every request is seen by the app as addressed to APP_ORIGIN (docs/decisions/013): the Host,
 * X-Forwarded-Host and X-Forwarded-Proto a client sends never decide the scheme, host or port of
 * `request.url`, so no link, redirect or origin comparison downstream (React Router's own action
 * check included) can be steered by them.
 */
export function canonicalOrigin(siteOrigin: string) {
  const url = new URL(siteOrigin);
  const protocol = url.protocol.replace(/:$/, "");
  return (request: Request, _response: Response, next: NextFunction) => {
    request.headers.host = url.host;
    delete request.headers["x-forwarded-host"];
    // Own properties shadow Express's getters for this request only.
    Object.defineProperty(request, "protocol", { value: protocol, configurable: true });
    Object.defineProperty(request, "hostname", { value: url.hostname, configurable: true });
    next();
  };
}

/**
 * 400 for a request whose path or query holds a character that may not be stored (NUL, other
 * control characters, a broken percent-encoding), naming the parameter — before any route or
 * query sees it (server/validation/text.ts).
 */
export function requestTextGuard() {
  return (request: Request, response: Response, next: NextFunction) => {
    const url = request.originalUrl;
    const question = url.indexOf("?");
    const checks: Array<{ where: string; raw: string }> = [{ where: "path", raw: question === -1 ? url : url.slice(0, question) }];
    if (question !== -1) {
      for (const pair of url.slice(question + 1).split("&")) {
        const equals = pair.indexOf("=");
        const key = equals === -1 ? pair : pair.slice(0, equals);
        const where = `parameter “${printable(key)}”`;
        checks.push({ where, raw: key }, { where, raw: equals === -1 ? "" : pair.slice(equals + 1) });
      }
    }
    for (const { where, raw } of checks) {
      const decoded = decodedOrNull(raw.replace(/\+/g, " "));
      const problem = decoded === null ? "is not valid percent-encoded UTF-8 (RFC 3986 §2.1)." : textProblem(decoded);
      if (problem) {
        refuse(request, response, "invalid-request", `The ${where} of this address ${problem}`);
        return;
      }
    }
    next();
  };
}

function decodedOrNull(raw: string): string | null {
  try {
    return decodeURIComponent(raw);
  } catch {
    return null;
  }
}

/** A parameter's name for a message: decoded when it can be, printable ASCII only, short. */
function printable(key: string): string {
  return (decodedOrNull(key) ?? key).replace(/[^\x20-\x7e]/g, "?").slice(0, 60);
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
function refuse(request: Request, response: Response, code: "content-too-large" | "invalid-request" | "length-required", detail: string): void {
  const status = code === "content-too-large" ? 413 : code === "invalid-request" ? 400 : 411;
  if (isApiPath(request.path)) {
    const body = code === "length-required" ? { type: "about:blank", title: "Length Required", status, detail, instance: request.path } : problemBody(code, detail, { instance: request.path });
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
export function requestSizeLimit(maximumBytes: number, documents?: { paths: RegExp; maximumBytes: number }) {
  return (request: Request, response: Response, next: NextFunction) => {
    const limit = documents && documents.paths.test(request.path) ? Math.max(maximumBytes, documents.maximumBytes) : maximumBytes;
    if (!SAFE_METHODS.has(request.method) && request.headers["content-length"] === undefined && request.headers["transfer-encoding"] !== undefined) {
      refuse(request, response, "length-required", "Send the request body with a Content-Length header.");
      return;
    }
    const declared = Number(request.headers["content-length"] ?? 0);
    if (declared > limit) {
      refuse(request, response, "content-too-large", `The request body is ${declared} bytes; the limit is ${limit} bytes.`);
      return;
    }
    next();
  };
}
