// The request guard, in two halves (docs/decisions/005). Middleware resolves who is asking
// once per request — the signed-in user (root), their membership of the organisation in the
// URL (organisation layout) — and every loader and action then begins with one line that
// checks the role it needs: `const access = requireRole(context, "engineer");`.
import { data, redirect } from "react-router";
import type { Membership, Organisation } from "#models/index.ts";
import { organisationContext, signedInContext, type Middleware, type RequestContext } from "../http/request-context.server.ts";
import { hasAtLeastRole, type Role } from "./roles.ts";
import { getSignedInSession, type SignedInSession } from "./session.server.ts";

export type OrganisationAccess = SignedInSession & {
  organisation: Organisation;
  membership: Membership;
  role: Role;
};

/** Where a member who must enrol a second factor is sent, and the only page (with sign-out) they may use until then. */
export const SECOND_FACTOR_PATH = "/account/second-factor";

// What a member who must enrol may still reach: the enrolment page, sign-out, the theme switch,
// the health check, the local outbox, and the REST API (bearer tokens, not the session; docs/decisions/019).
const OPEN_WHILE_ENROLLING = /^\/(?:account\/second-factor(?:\.data)?|logout(?:\.data)?|theme(?:\.data)?|healthz|outbox(?:\.data)?|api\/.*)$/;

/**
 * Root middleware: the signed-in session of this request, or null, for every route below. A
 * member without a second factor in an organisation that requires one is sent to enrol, whatever
 * they asked for, until they have (docs/decisions/019).
 */
export const signedInMiddleware: Middleware = async ({ request, context }, next) => {
  const signedIn = await getSignedInSession(request);
  context.set(signedInContext, signedIn);
  if (signedIn?.enrolmentRequired && !OPEN_WHILE_ENROLLING.test(new URL(request.url).pathname)) throw redirect(SECOND_FACTOR_PATH);
  return next();
};

/**
 * Organisation layout middleware: a signed-in member of the organisation in the URL. Not signed
 * in → redirect to sign-in; not a member (or no such organisation) → 404, so outsiders learn
 * nothing. The role is checked by each loader and action.
 */
export const organisationMiddleware: Middleware = async ({ request, params, context }, next) => {
  const signedIn = requireSignedIn(context, request);
  const membership = findMembership(signedIn, params.organisation);
  if (!membership) throw data({ message: "Organisation not found." }, { status: 404 });
  context.set(organisationContext, { ...signedIn, organisation: membership.organisation, membership, role: membership.role });
  return next();
};

/** The signed-in user of this request; otherwise a redirect to sign-in that comes back here. */
export function requireSignedIn(context: RequestContext, request: Request): SignedInSession {
  const signedIn = context.get(signedInContext);
  if (signedIn) return signedIn;
  const url = new URL(request.url);
  throw redirect(`/login?redirectTo=${encodeURIComponent(`${url.pathname}${url.search}`)}`);
}

/** The signed-in session, or null, as the root middleware resolved it. */
export function signedInOf(context: RequestContext): SignedInSession | null {
  return context.get(signedInContext);
}

/** The member's access, with at least `minimumRole` (else 403). The first line of every organisation loader and action. */
export function requireRole(context: RequestContext, minimumRole: Role = "trainee"): OrganisationAccess {
  const access = context.get(organisationContext);
  // Only a route outside the organisation layout can get here without the middleware.
  if (!access) throw new Error("requireRole used outside the organisation routes");
  if (!hasAtLeastRole(access.role, minimumRole)) {
    throw data({ message: `This needs the ${minimumRole} role or higher; you are ${access.role}.` }, { status: 403 });
  }
  return access;
}

/** The user's membership of the organisation with this slug, from those read with the session (no query of its own). */
function findMembership(signedIn: SignedInSession, organisationSlug: string | undefined): (Membership & { organisation: Organisation }) | null {
  if (!organisationSlug || !/^[a-z0-9-]{1,63}$/.test(organisationSlug)) return null;
  return signedIn.memberships.find((membership) => membership.organisation.slug === organisationSlug) ?? null;
}
