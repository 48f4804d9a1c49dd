import { Op } from "sequelize";
import { Membership, Organisation, User } from "#models/index.ts";
import { hashPassword } from "../auth/password.server.ts";
import type { Role } from "../auth/roles.ts";
import { getDatabase } from "../db/database.server.ts";
import { Refusal } from "../errors.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

// Letters that Unicode decomposition leaves alone.
const TRANSLITERATIONS: Record<string, string> = { æ: "ae", ø: "o", ß: "ss", œ: "oe", ð: "d", þ: "th", ł: "l" };

/** A URL slug from a name: lower-case letters, digits and single dashes. */
export function slugFromName(name: string): string {
  const slug = name
    .toLowerCase()
    .replace(/[æøßœðþł]/g, (letter) => TRANSLITERATIONS[letter] ?? letter)
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 48)
    .replace(/-+$/g, "");
  return slug || "organisation";
}

async function findFreeSlug(name: string): Promise<string> {
  const base = slugFromName(name);
  const taken = new Set(
    (await Organisation.findAll({ where: { slug: { [Op.like]: `${base}%` } }, attributes: ["slug"] })).map((organisation) => organisation.slug),
  );
  if (!taken.has(base)) return base;
  for (let suffix = 2; ; suffix++) if (!taken.has(`${base}-${suffix}`)) return `${base}-${suffix}`;
}

/** Sign-up with an e-mail address that has an account already. */
export function emailTaken(): Refusal {
  return new Refusal("An account with this e-mail address exists already. Sign in, or reset the password.", 409, { field: "email" });
}

/** Sign-up: a new user and a new organisation in which that user is the owner. */
export async function createUserWithOrganisation(
  input: { email: string; name: string; password: string; organisationName: string },
  clientAddress: string,
): Promise<{ user: User; organisation: Organisation }> {
  const passwordHash = await hashPassword(input.password);
  const result = await getDatabase().transaction(async (transaction) => {
    if (await User.findOne({ where: { email: input.email }, transaction })) throw emailTaken();
    const user = await User.create({ email: input.email, name: input.name, passwordHash }, { transaction });
    const organisation = await Organisation.create({ name: input.organisationName, slug: await findFreeSlug(input.organisationName) }, { transaction });
    await Membership.create({ organisationId: organisation.id, userId: user.id, role: "owner" }, { transaction });
    return { user, organisation };
  });
  const actor: AuditActor = { userId: result.user.id, email: result.user.email, clientAddress };
  await recordAuditEvent(actor, { organisationId: result.organisation.id, action: "organisation.created", targetType: "organisation", targetId: result.organisation.id, changes: { name: result.organisation.name } });
  return result;
}

/** A further organisation whose owner is an existing user. */
export async function createOrganisationForUser(user: User, name: string, clientAddress: string): Promise<Organisation> {
  const organisation = await getDatabase().transaction(async (transaction) => {
    const created = await Organisation.create({ name, slug: await findFreeSlug(name) }, { transaction });
    await Membership.create({ organisationId: created.id, userId: user.id, role: "owner" }, { transaction });
    return created;
  });
  await recordAuditEvent({ userId: user.id, email: user.email, clientAddress }, { organisationId: organisation.id, action: "organisation.created", targetType: "organisation", targetId: organisation.id, changes: { name } });
  return organisation;
}

export type OrganisationSummary = { slug: string; name: string; role: Role };

export async function listOrganisationsOfUser(userId: string): Promise<OrganisationSummary[]> {
  const memberships = await Membership.findAll({
    where: { userId },
    include: [{ model: Organisation, as: "organisation", required: true }],
    order: [[{ model: Organisation, as: "organisation" }, "name", "ASC"]],
  });
  return memberships.map((membership) => ({ slug: membership.organisation!.slug, name: membership.organisation!.name, role: membership.role }));
}

export async function renameOrganisation(organisation: Organisation, name: string, actor: AuditActor): Promise<void> {
  const before = organisation.name;
  await organisation.update({ name });
  await recordAuditEvent(actor, { organisationId: organisation.id, action: "organisation.renamed", targetType: "organisation", targetId: organisation.id, changes: { name: { from: before, to: name } } });
}

/** The organisation's change policy: approvals a proposal needs, and whether changes must go through proposals. */
export type ChangePolicy = { approvalsRequired: number; changesThroughProposals: boolean };

export async function updateChangePolicy(organisation: Organisation, policy: ChangePolicy, actor: AuditActor): Promise<boolean> {
  const before: ChangePolicy = { approvalsRequired: organisation.approvalsRequired, changesThroughProposals: organisation.changesThroughProposals };
  if (before.approvalsRequired === policy.approvalsRequired && before.changesThroughProposals === policy.changesThroughProposals) return false;
  await getDatabase().transaction(async (transaction) => {
    await organisation.update(policy, { transaction });
    await recordAuditEvent(
      actor,
      {
        organisationId: organisation.id,
        action: "organisation.change-policy-changed",
        targetType: "organisation",
        targetId: organisation.id,
        changes: { approvalsRequired: { from: before.approvalsRequired, to: policy.approvalsRequired }, changesThroughProposals: { from: before.changesThroughProposals, to: policy.changesThroughProposals } },
      },
      transaction,
    );
  });
  return true;
}
