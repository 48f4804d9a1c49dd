import { Op } from "sequelize";
import { Invitation, Membership, type Organisation, User } from "#models/index.ts";
import type { Role } from "../auth/roles.ts";
import { createToken, hashToken } from "../auth/tokens.server.ts";
import { getDatabase } from "../db/database.server.ts";
import { Refusal } from "../errors.ts";
import { sendInvitationMail } from "../mail/messages.server.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

export const INVITATION_LIFETIME_MS = 7 * 24 * 60 * 60 * 1000;

export type MemberRow = { membershipId: string; userId: string; name: string; email: string; role: Role; trainer: boolean; since: string; /** Whether they have a second factor on (docs/decisions/019). */ secondFactor: boolean };

export async function listMembers(organisationId: string): Promise<MemberRow[]> {
  const memberships = await Membership.findAll({
    where: { organisationId },
    include: [{ model: User, as: "user", required: true }],
    order: [[{ model: User, as: "user" }, "name", "ASC"]],
  });
  return memberships.map((membership) => ({
    membershipId: membership.id,
    userId: membership.user!.id,
    name: membership.user!.name,
    email: membership.user!.email,
    role: membership.role,
    trainer: membership.trainer,
    since: membership.createdAt.toISOString(),
    secondFactor: membership.user!.secondFactorEnabledAt !== null,
  }));
}

export type PendingInvitation = { id: string; email: string; role: Role; expiresAt: string };

export async function listPendingInvitations(organisationId: string): Promise<PendingInvitation[]> {
  const invitations = await Invitation.findAll({
    where: { organisationId, acceptedAt: null, revokedAt: null, expiresAt: { [Op.gt]: new Date() } },
    order: [["createdAt", "DESC"]],
  });
  return invitations.map((invitation) => ({ id: invitation.id, email: invitation.email, role: invitation.role, expiresAt: invitation.expiresAt.toISOString() }));
}

// Only an owner may hand out or take away the owner role.
function assertMayAssign(actorRole: Role, role: Role): void {
  if (role === "owner" && actorRole !== "owner") throw new Refusal("Only an owner can make someone an owner.", 403);
}

export async function inviteMember(
  organisation: Organisation,
  input: { email: string; role: Role },
  actor: AuditActor & { role: Role; name: string },
  appOrigin: string,
): Promise<void> {
  assertMayAssign(actor.role, input.role);
  const existing = await Membership.findOne({ where: { organisationId: organisation.id }, include: [{ model: User, as: "user", where: { email: input.email }, required: true }] });
  if (existing) throw new Refusal(`${input.email} is already a member of ${organisation.name}.`, 409);
  const token = createToken();
  await getDatabase().transaction(async (transaction) => {
    // A new invitation to the same address replaces the older ones.
    await Invitation.update({ revokedAt: new Date() }, { where: { organisationId: organisation.id, email: input.email, acceptedAt: null, revokedAt: null }, transaction });
    const created = await Invitation.create(
      { organisationId: organisation.id, invitedById: actor.userId!, email: input.email, role: input.role, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + INVITATION_LIFETIME_MS), acceptedAt: null, revokedAt: null },
      { transaction },
    );
    await recordAuditEvent(actor, { organisationId: organisation.id, action: "invitation.sent", targetType: "invitation", targetId: created.id, changes: { email: input.email, role: input.role } }, transaction);
  });
  // After the commit: the link works once the mail is out. The link's origin is configured, never the request's Host.
  await sendInvitationMail({ to: input.email, organisationName: organisation.name, inviterName: actor.name, role: input.role, link: `${appOrigin}/invitations/${token}` });
}

export async function revokeInvitation(organisation: Organisation, invitationId: string, actor: AuditActor): Promise<void> {
  const invitation = await Invitation.findOne({ where: { id: invitationId, organisationId: organisation.id, acceptedAt: null, revokedAt: null } });
  if (!invitation) throw new Refusal("That invitation is no longer open.", 404);
  await getDatabase().transaction(async (transaction) => {
    await invitation.update({ revokedAt: new Date() }, { transaction });
    await recordAuditEvent(actor, { organisationId: organisation.id, action: "invitation.revoked", targetType: "invitation", targetId: invitation.id, changes: { email: invitation.email } }, transaction);
  });
}

async function countOwners(organisationId: string): Promise<number> {
  return Membership.count({ where: { organisationId, role: "owner" } });
}

export async function changeMemberRole(organisation: Organisation, membershipId: string, role: Role, actor: AuditActor & { role: Role }): Promise<void> {
  const membership = await Membership.findOne({ where: { id: membershipId, organisationId: organisation.id }, include: [{ model: User, as: "user" }] });
  if (!membership) throw new Refusal("No such member in this organisation.", 404);
  assertMayAssign(actor.role, role);
  if (membership.role === "owner") {
    if (actor.role !== "owner") throw new Refusal("Only an owner can change an owner's role.", 403);
    if (role !== "owner" && (await countOwners(organisation.id)) <= 1) throw new Refusal("This is the last owner; make someone else an owner first.", 409);
  }
  if (membership.role === role) return;
  const before = membership.role;
  await getDatabase().transaction(async (transaction) => {
    await membership.update({ role }, { transaction });
    await recordAuditEvent(actor, { organisationId: organisation.id, action: "member.role-changed", targetType: "membership", targetId: membership.id, changes: { email: membership.user?.email, role: { from: before, to: role } } }, transaction);
  });
}

/** Gives or takes the trainer capability (docs/decisions/016); the audit entry in the same transaction. */
export async function setMemberTrainer(organisation: Organisation, membershipId: string, trainer: boolean, actor: AuditActor): Promise<void> {
  await getDatabase().transaction(async (transaction) => {
    const membership = await Membership.findOne({ where: { id: membershipId, organisationId: organisation.id }, include: [{ model: User, as: "user", required: true }], transaction, lock: { level: transaction.LOCK.UPDATE, of: Membership } });
    if (!membership) throw new Refusal("No such member in this organisation.", 404);
    if (membership.trainer === trainer) return;
    await membership.update({ trainer }, { transaction });
    await recordAuditEvent(actor, { organisationId: organisation.id, action: "member.trainer-changed", targetType: "membership", targetId: membership.id, changes: { email: membership.user?.email, trainer: { from: !trainer, to: trainer } } }, transaction);
  });
}

export async function removeMember(organisation: Organisation, membershipId: string, actor: AuditActor & { role: Role }): Promise<void> {
  const membership = await Membership.findOne({ where: { id: membershipId, organisationId: organisation.id }, include: [{ model: User, as: "user" }] });
  if (!membership) throw new Refusal("No such member in this organisation.", 404);
  if (membership.role === "owner") {
    if (actor.role !== "owner") throw new Refusal("Only an owner can remove an owner.", 403);
    if ((await countOwners(organisation.id)) <= 1) throw new Refusal("This is the last owner; an organisation always keeps one.", 409);
  }
  await getDatabase().transaction(async (transaction) => {
    await membership.destroy({ transaction });
    await recordAuditEvent(actor, { organisationId: organisation.id, action: "member.removed", targetType: "membership", targetId: membership.id, changes: { email: membership.user?.email, role: membership.role } }, transaction);
  });
}

export type OpenInvitation = { invitation: Invitation; organisationName: string; existingUser: User | null };

/** The invitation behind an e-mailed link, if it is still open. */
export async function findOpenInvitation(token: string): Promise<OpenInvitation | null> {
  if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) return null;
  const invitation = await Invitation.findOne({
    where: { tokenHash: hashToken(token), acceptedAt: null, revokedAt: null, expiresAt: { [Op.gt]: new Date() } },
    include: [{ association: "organisation", required: true }],
  });
  if (!invitation?.organisation) return null;
  const existingUser = await User.findOne({ where: { email: invitation.email } });
  return { invitation, organisationName: invitation.organisation.name, existingUser };
}

/** Joins the invited user to the organisation with the invited role; the link is then spent. */
export async function acceptInvitation(open: OpenInvitation, user: User, clientAddress: string): Promise<string> {
  const { invitation } = open;
  if (user.email !== invitation.email) throw new Refusal(`This invitation is for ${invitation.email}; you are signed in as ${user.email}.`, 403);
  await getDatabase().transaction(async (transaction) => {
    const [updated] = await Invitation.update({ acceptedAt: new Date() }, { where: { id: invitation.id, acceptedAt: null, revokedAt: null }, transaction });
    if (updated !== 1) throw new Refusal("This invitation has already been used.", 409);
    const existing = await Membership.findOne({ where: { organisationId: invitation.organisationId, userId: user.id }, transaction });
    if (!existing) await Membership.create({ organisationId: invitation.organisationId, userId: user.id, role: invitation.role }, { transaction });
    await recordAuditEvent({ userId: user.id, email: user.email, clientAddress }, { organisationId: invitation.organisationId, action: "invitation.accepted", targetType: "invitation", targetId: invitation.id, changes: { email: user.email, role: invitation.role } }, transaction);
  });
  return invitation.organisation!.slug;
}
