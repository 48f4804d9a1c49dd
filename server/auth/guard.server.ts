import { data } from "react-router";
import { Membership, Organisation, type User } from "#models/index.ts";
import { ensureDatabase } from "../db/database.server.ts";
import { hasAtLeastRole, type Role } from "./roles.ts";
import { requireSignedIn, type SignedInSession } from "./session.server.ts";

export type OrganisationAccess = SignedInSession & {
  organisation: Organisation;
  membership: Membership;
  role: Role;
};

/**
 * The one guard every organisation loader and action begins with: a signed-in member of the
 * organisation in the URL with at least `minimumRole`. Not signed in → redirect to sign-in;
 * not a member (or no such organisation) → 404, so outsiders learn nothing; role too low → 403.
 */
export async function requireMember(request: Request, organisationSlug: string | undefined, minimumRole: Role = "trainee"): Promise<OrganisationAccess> {
  const signedIn = await requireSignedIn(request);
  const membership = await findMembership(signedIn.user, organisationSlug);
  if (!membership?.organisation) throw data({ message: "Organisation not found." }, { status: 404 });
  if (!hasAtLeastRole(membership.role, minimumRole)) {
    throw data({ message: `This needs the ${minimumRole} role or higher; you are ${membership.role}.` }, { status: 403 });
  }
  return { ...signedIn, organisation: membership.organisation, membership, role: membership.role };
}

async function findMembership(user: User, organisationSlug: string | undefined): Promise<Membership | null> {
  ensureDatabase();
  if (!organisationSlug || !/^[a-z0-9-]{1,63}$/.test(organisationSlug)) return null;
  return Membership.findOne({
    where: { userId: user.id },
    include: [{ model: Organisation, as: "organisation", where: { slug: organisationSlug }, required: true }],
  });
}
