import "react-router";

/** What the HTTP server hands every loader and action besides the request. */
export type SallyportLoadContext = {
  /** The client's address (X-Forwarded-For only when TRUST_PROXY=1). */
  clientAddress: string;
  /** Per-response nonce for the Content-Security-Policy script-src. */
  cspNonce: string;
};

declare module "react-router" {
  // eslint-disable-next-line @typescript-eslint/no-empty-object-type -- declaration merging: an empty interface is how react-router's AppLoadContext takes our fields
  interface AppLoadContext extends SallyportLoadContext {}
}
