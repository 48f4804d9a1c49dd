// What a request carries through React Router's middleware (docs/decisions/005): facts from
// the HTTP server, then — resolved once per request by the route middleware — the signed-in
// user, their membership of the organisation in the URL, and the device in the URL.
import { createContext, RouterContextProvider, type MiddlewareFunction, type RouterContext } from "react-router";
import type { OrganisationAccess } from "../auth/guard.server.ts";
import type { SignedInSession } from "../auth/session.server.ts";
import type { DeviceAtRevision } from "../devices/index.ts";

/** Facts the HTTP server knows before routing. */
export type RequestFacts = {
  /** The client's address (X-Forwarded-For only when TRUST_PROXY=1). */
  clientAddress: string;
  /** Per-response nonce for the Content-Security-Policy script-src. */
  cspNonce: string;
};

/**
 * A context key that every copy of this module shares. The HTTP server sets the request facts
 * from its own copy (loaded by Node), the app reads them from the copy inside the build; keys
 * are compared by identity, so both must be the same object. No default: a missing value throws.
 */
function keyedByName<T>(name: string): RouterContext<T> {
  const registry = globalThis as typeof globalThis & Record<symbol, RouterContext<T> | undefined>;
  const symbol = Symbol.for(`sallyport.request-context.${name}`);
  registry[symbol] ??= createContext<T>();
  return registry[symbol];
}

export const requestFactsContext = keyedByName<RequestFacts>("request-facts");
export const signedInContext = createContext<SignedInSession | null>(null);
export const organisationContext = createContext<OrganisationAccess | null>(null);
export const deviceContext = createContext<DeviceAtRevision | null>(null);

/** The router context the HTTP server hands React Router for one request. */
export function createRequestContext(facts: RequestFacts): RouterContextProvider {
  const context = new RouterContextProvider();
  context.set(requestFactsContext, facts);
  return context;
}

export type RequestContext = Readonly<RouterContextProvider>;
export type Middleware = MiddlewareFunction<Response>;

export function clientAddressOf(context: RequestContext): string {
  return context.get(requestFactsContext).clientAddress;
}
