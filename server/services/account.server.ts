// A signed-in user's own account: their name, their sign-in e-mail (changed only when a link
// sent to the new address is followed) and their password (the current one required). Each
// change writes its audit entry in the change's transaction.
import { Op, UniqueConstraintError } from "sequelize";
import { AuditEvent, EmailChange, PasswordReset, Session, User } from "#models/index.ts";
import { hashPassword, verifyPassword } from "../auth/password.server.ts";
import { beginPasswordAttempt } from "../auth/throttle.server.ts";
import { createToken, hashToken } from "../auth/tokens.server.ts";
import { getDatabase } from "../db/database.server.ts";
import { formatDuration } from "../engine/format.ts";
import { Refusal } from "../errors.ts";
import { sendEmailChangedNotice, sendEmailChangeMail } from "../mail/messages.server.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

/** How long a confirmation link for a new e-mail address works. */
export const EMAIL_CHANGE_LIFETIME_HOURS = 24;

const TOKEN_PATTERN = /^[A-Za-z0-9_-]{20,100}$/;

const actorOf = (user: User, clientAddress: string): AuditActor => ({ userId: user.id, email: user.email, clientAddress });

/**
 * The current password, checked with the sign-in throttle (PCI DSS v4.0 8.3.4), so a borrowed
 * session cannot be used to guess it. Refused on the "currentPassword" field.
 */
export async function requireCurrentPassword(user: User, password: string, clientAddress: string): Promise<void> {
  const attempt = await beginPasswordAttempt(user.email, clientAddress);
  const { verdict } = attempt;
  if (verdict.throttled) {
    throw new Refusal(`Too many wrong passwords. Try again in ${formatDuration(Math.ceil(verdict.retryAfterSeconds / 60), "minute")}.`, 429, {
      field: "currentPassword",
      headers: { "Retry-After": String(verdict.retryAfterSeconds) },
    });
  }
  const valid = await verifyPassword(user.passwordHash, password);
  await attempt.settle(valid);
  if (!valid) throw new Refusal("That is not your current password.", 400, { field: "currentPassword" });
}

/** Changes the user's display name; false when it is the same. */
export async function renameUser(user: User, name: string, clientAddress: string): Promise<boolean> {
  const before = user.name;
  if (before === name) return false;
  await getDatabase().transaction(async (transaction) => {
    await user.update({ name }, { transaction });
    await recordAuditEvent(actorOf(user, clientAddress), { organisationId: null, action: "user.renamed", targetType: "user", targetId: user.id, changes: { name: { from: before, to: name } } }, transaction);
  });
  return true;
}

/**
 * Sends a confirmation link to the new address; nothing changes until it is followed. A newer
 * request supersedes older ones. Refused when the address is already this user's or another's.
 */
export async function requestEmailChange(user: User, input: { newEmail: string; currentPassword: string }, appOrigin: string, clientAddress: string): Promise<void> {
  if (input.newEmail === user.email) throw new Refusal("That is already your e-mail address.", 400, { field: "newEmail" });
  await requireCurrentPassword(user, input.currentPassword, clientAddress);
  if (await User.findOne({ where: { email: input.newEmail }, attributes: ["id"] })) throw new Refusal("Another account uses this e-mail address already.", 409, { field: "newEmail" });
  const token = createToken();
  await getDatabase().transaction(async (transaction) => {
    await EmailChange.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
    await EmailChange.create(
      { userId: user.id, newEmail: input.newEmail, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + EMAIL_CHANGE_LIFETIME_HOURS * 60 * 60 * 1000), usedAt: null },
      { transaction },
    );
    await recordAuditEvent(actorOf(user, clientAddress), { organisationId: null, action: "user.email-change-requested", targetType: "user", targetId: user.id, changes: { newEmail: input.newEmail } }, transaction);
  });
  await sendEmailChangeMail({ to: input.newEmail, name: user.name, link: `${appOrigin}/confirm-email/${token}`, lifetime: formatDuration(EMAIL_CHANGE_LIFETIME_HOURS, "hour") });
}

/** The newest open request, for the account page. */
export async function pendingEmailChange(userId: string): Promise<{ newEmail: string; expiresAt: Date } | null> {
  const open = await EmailChange.findOne({ where: { userId, usedAt: null, expiresAt: { [Op.gt]: new Date() } }, order: [["createdAt", "DESC"]] });
  return open ? { newEmail: open.newEmail, expiresAt: open.expiresAt } : null;
}

/** The request behind a link that is unused and unexpired. */
export async function findEmailChange(token: string): Promise<{ newEmail: string; userId: string } | null> {
  if (!TOKEN_PATTERN.test(token)) return null;
  const open = await EmailChange.findOne({ where: { tokenHash: hashToken(token), usedAt: null, expiresAt: { [Op.gt]: new Date() } } });
  return open ? { newEmail: open.newEmail, userId: open.userId } : null;
}

/**
 * Follows a confirmation link: the user's e-mail becomes the new address, the link and every
 * other open e-mail change and password reset link of the user are spent (those went to the
 * old address), and the old address is told. Null when the link is unknown, used or expired.
 */
export async function confirmEmailChange(token: string, clientAddress: string): Promise<{ userId: string; from: string; to: string } | null> {
  if (!TOKEN_PATTERN.test(token)) return null;
  try {
    const changed = await getDatabase().transaction(async (transaction) => {
      const open = await EmailChange.findOne({ where: { tokenHash: hashToken(token), usedAt: null, expiresAt: { [Op.gt]: new Date() } }, transaction, lock: transaction.LOCK.UPDATE });
      if (!open) return null;
      const user = await User.findByPk(open.userId, { transaction, rejectOnEmpty: true });
      if (await User.findOne({ where: { email: open.newEmail, id: { [Op.ne]: user.id } }, attributes: ["id"], transaction })) {
        throw new Refusal("Another account has started using this e-mail address since the link was sent. Choose another address on your account page.", 409);
      }
      const from = user.email;
      await EmailChange.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
      await PasswordReset.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
      await user.update({ email: open.newEmail }, { transaction });
      await recordAuditEvent({ userId: user.id, email: open.newEmail, clientAddress }, { organisationId: null, action: "user.email-changed", targetType: "user", targetId: user.id, changes: { email: { from, to: open.newEmail } } }, transaction);
      return { userId: user.id, name: user.name, from, to: open.newEmail };
    });
    if (!changed) return null;
    await sendEmailChangedNotice({ to: changed.from, name: changed.name, newEmail: changed.to });
    return { userId: changed.userId, from: changed.from, to: changed.to };
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new Refusal("Another account uses this e-mail address already.", 409);
    throw error;
  }
}

/**
 * Sets a new password after checking the current one; spends open reset links and signs out
 * every other session of the user (this one stays). Returns how many sessions were ended.
 */
export async function changePassword(user: User, currentSessionId: string, input: { currentPassword: string; newPassword: string }, clientAddress: string): Promise<number> {
  await requireCurrentPassword(user, input.currentPassword, clientAddress);
  const passwordHash = await hashPassword(input.newPassword);
  return getDatabase().transaction(async (transaction) => {
    await user.update({ passwordHash }, { transaction });
    await PasswordReset.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
    const ended = await Session.destroy({ where: { userId: user.id, id: { [Op.ne]: currentSessionId } }, transaction });
    await recordAuditEvent(actorOf(user, clientAddress), { organisationId: null, action: "user.password-changed", targetType: "user", targetId: user.id, changes: { otherSessionsEnded: ended } }, transaction);
    return ended;
  });
}

/** The user's own recent account events (sign-ins, changes), newest first. */
export async function recentAccountActivity(userId: string, limit = 10): Promise<AuditEvent[]> {
  return AuditEvent.findAll({ where: { actorUserId: userId, organisationId: null }, order: [["id", "DESC"]], limit });
}
