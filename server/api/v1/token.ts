// The token itself: who the call acts as, so a pipeline can check its token before it relies on it.
import { defineEndpoint } from "../endpoint.server.ts";
import { TokenInfoSchema } from "./schemas.ts";

export const tokenEndpoint = defineEndpoint({
  method: "get",
  path: "/token",
  operationId: "getToken",
  summary: "The token you call with",
  description: "The token's name, kind, scope, the role it acts with now, its organisation, its owner (personal tokens) and when it expires.",
  tag: "Token",
  scope: "read",
  role: "trainee",
  response: { status: 200, description: "The token.", schema: TokenInfoSchema },
  handle({ principal }) {
    return {
      body: {
        name: principal.token.name,
        kind: principal.token.kind,
        scope: principal.token.scope,
        role: principal.role,
        organisation: { slug: principal.organisation.slug, name: principal.organisation.name },
        owner: principal.user ? { name: principal.user.name, email: principal.user.email } : null,
        expiresAt: principal.token.expiresAt.toISOString(),
        rateLimitPerMinute: principal.token.ratePerMinute,
      },
    };
  },
});
