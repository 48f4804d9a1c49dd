// The security headers' middleware (server/http/security.ts): a fresh CSP nonce on every response,
// also across the refills of its stock of random bytes, inside an unchanged policy.
import type { NextFunction, Request, Response } from "express";
import { describe, expect, it } from "vitest";
import { securityHeaders } from "#server/http/security.ts";

function headersOf(middleware: ReturnType<typeof securityHeaders>) {
  const headers = new Map<string, string>();
  const response = { locals: {} as Record<string, unknown>, setHeader: (name: string, value: string) => headers.set(name, value) };
  middleware({} as Request, response as unknown as Response, (() => undefined) as NextFunction);
  return { headers, nonce: String(response.locals.cspNonce) };
}

describe("security headers", () => {
  it("gives every response its own 128-bit nonce, across refills of the random stock, and names it in script-src", () => {
    const middleware = securityHeaders({ development: false });
    const nonces = new Set<string>();
    for (let index = 0; index < 1_000; index++) {
      const { headers, nonce } = headersOf(middleware);
      // 16 random bytes in base64 (W3C CSP Level 3 §2.3.1 asks for at least 128 bits).
      expect(Buffer.from(nonce, "base64")).toHaveLength(16);
      expect(headers.get("Content-Security-Policy")).toBe(
        `default-src 'self'; script-src 'self' 'nonce-${nonce}'; style-src 'self' 'unsafe-inline'; img-src 'self' data: blob:; font-src 'self'; connect-src 'self'; object-src 'none'; base-uri 'self'; form-action 'self'; frame-ancestors 'none'`,
      );
      nonces.add(nonce);
    }
    expect(nonces.size).toBe(1_000);
  });

  it("allows inline scripts and the development server's socket only in development", () => {
    const { headers } = headersOf(securityHeaders({ development: true }));
    expect(headers.get("Content-Security-Policy")).toContain("script-src 'self' 'unsafe-inline' 'unsafe-eval'; ");
    expect(headers.get("Content-Security-Policy")).toContain("connect-src 'self' ws: wss:; ");
  });
});
