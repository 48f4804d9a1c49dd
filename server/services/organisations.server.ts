import { Op, UniqueConstraintError, type Transaction } from "sequelize";
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

async function findFreeSlug(name: string, transaction?: Transaction): Promise<string> {
  const base = slugFromName(name);
  const taken = new Set(
    (await Organisation.findAll({ where: { slug: { [Op.like]: `${base}%` } }, attributes: ["slug"], transaction })).map((organisation) => organisation.slug),
  );
  if (!taken.has(base)) return base;
  for (let suffix = 2; ; suffix++) if (!taken.has(`${base}-${suffix}`)) return `${base}-${suffix}`;
}

/** Sign-up with an e-mail address that has an account already. */
export function emailTaken(): Refusal {
  return new Refusal("An account with this e-mail address exists already. Sign in, or reset the password.", 409, { field: "email" });
}

/** Whether a unique-constraint error is the one on a column of a table (by PostgreSQL's constraint name). */
function violates(error: UniqueConstraintError, constraint: string): boolean {
  const original = error.original as { constraint?: unknown } | undefined;
  return original?.constraint === constraint || Object.keys(error.fields ?? {}).some((field) => constraint.endsWith(`_${field}_key`));
}

/**
 * A new organisation owned by `userId`, with its audit entry, in `transaction`. Two organisations
 * of one name at once both get one: the slug that lost the race is chosen again (a savepoint keeps
 * the transaction usable), a few times at most.
 */
async function createOwnedOrganisation(name: string, userId: string, actor: AuditActor, transaction: Transaction): Promise<Organisation> {
  for (let attempt = 1; ; attempt += 1) {
    try {
      const organisation = await getDatabase().transaction({ transaction }, async (savepoint) => Organisation.create({ name, slug: await findFreeSlug(name, savepoint) }, { transaction: savepoint }));
      await Membership.create({ organisationId: organisation.id, userId, role: "owner" }, { transaction });
      await recordAuditEvent(actor, { organisationId: organisation.id, action: "organisation.created", targetType: "organisation", targetId: organisation.id, changes: { name } }, transaction);
      return organisation;
    } catch (error) {
      if (!(error instanceof UniqueConstraintError && violates(error, "organisations_slug_key")) || attempt >= 5) throw error;
    }
  }
}

/**
 * Sign-up: a new user and a new organisation in which that user is the owner, with the audit
 * entry, in one transaction. A concurrent sign-up with the same e-mail that committed first makes
 * this one a 409 (the unique index decides, not the look-up before it).
 */
export async function createUserWithOrganisation(
  input: { email: string; name: string; password: string; organisationName: string },
  clientAddress: string,
): Promise<{ user: User; organisation: Organisation }> {
  const passwordHash = await hashPassword(input.password);
  try {
    return await getDatabase().transaction(async (transaction) => {
      if (await User.findOne({ where: { email: input.email }, transaction })) throw emailTaken();
      const user = await User.create({ email: input.email, name: input.name, passwordHash }, { transaction });
      const actor: AuditActor = { userId: user.id, email: user.email, clientAddress };
      const organisation = await createOwnedOrganisation(input.organisationName, user.id, actor, transaction);
      return { user, organisation };
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError && violates(error, "users_email_key")) throw emailTaken();
    throw error;
  }
}

/** A further organisation whose owner is an existing user. */
export async function createOrganisationForUser(user: User, name: string, clientAddress: string): Promise<Organisation> {
  return getDatabase().transaction((transaction) => createOwnedOrganisation(name, user.id, { userId: user.id, email: user.email, clientAddress }, transaction));
}

export type OrganisationSummary = { slug: string; name: string; role: Role };

export async function listOrganisationsOfUser(userId: string): Promise<OrganisationSummary[]> {
  const memberships = await Membership.findAll({
    where: { userId },
    include: [{ model: Organisation, as: "organisation", required: true }],
    order: [[{ model: Organisation, as: "organisation" }, "name", "ASC"]],
  });
  return organisationSummaries(memberships.map((membership) => ({ role: membership.role, organisation: membership.organisation! })));
}

/** The summaries of memberships already read with their organisations, in their order. */
export function organisationSummaries(memberships: ReadonlyArray<{ role: Role; organisation: { slug: string; name: string } }>): OrganisationSummary[] {
  return memberships.map((membership) => ({ slug: membership.organisation.slug, name: membership.organisation.name, role: membership.role }));
}

export async function renameOrganisation(organisation: Organisation, name: string, actor: AuditActor): Promise<void> {
  const before = organisation.name;
  await getDatabase().transaction(async (transaction) => {
    await organisation.update({ name }, { transaction });
    await recordAuditEvent(actor, { organisationId: organisation.id, action: "organisation.renamed", targetType: "organisation", targetId: organisation.id, changes: { name: { from: before, to: name } } }, transaction);
  });
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
