import { Op, UniqueConstraintError } from "sequelize";
import { PasswordReset, User } from "#models/index.ts";
import { hashPassword } from "../auth/password.server.ts";
import { endAllSessions } from "../auth/session.server.ts";
import { createToken, hashToken } from "../auth/tokens.server.ts";
import { getDatabase } from "../db/database.server.ts";
import { sendPasswordResetMail } from "../mail/messages.server.ts";
import { recordAuditEvent } from "./audit.server.ts";
import { emailTaken } from "./organisations.server.ts";

export const PASSWORD_RESET_LIFETIME_MS = 30 * 60 * 1000;

/** A user created from an invitation link (no organisation of their own). */
export async function createUser(input: { email: string; name: string; password: string }): Promise<User> {
  if (await User.findOne({ where: { email: input.email } })) throw emailTaken();
  try {
    return await User.create({ email: input.email, name: input.name, passwordHash: await hashPassword(input.password) });
  } catch (error) {
    // The same address signed up a moment earlier: the unique index decides.
    if (error instanceof UniqueConstraintError) throw emailTaken();
    throw error;
  }
}

/**
 * Sends a single-use reset link when the address belongs to a user. The caller answers the
 * same either way, so the form does not reveal which addresses have accounts.
 */
export async function requestPasswordReset(email: string, appOrigin: string, clientAddress: string): Promise<void> {
  const user = await User.findOne({ where: { email } });
  if (!user) return;
  const token = createToken();
  await getDatabase().transaction(async (transaction) => {
    await PasswordReset.create({ userId: user.id, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + PASSWORD_RESET_LIFETIME_MS), usedAt: null }, { transaction });
    await recordAuditEvent({ userId: user.id, email: user.email, clientAddress }, { organisationId: null, action: "password.reset-requested", targetType: "user", targetId: user.id }, transaction);
  });
  // The link's origin is the configured APP_ORIGIN, never the request's Host (docs/decisions/013).
  await sendPasswordResetMail({ to: user.email, name: user.name, link: `${appOrigin}/reset-password/${token}`, minutes: PASSWORD_RESET_LIFETIME_MS / 60_000 });
}

/** The user behind a reset link that is unused and unexpired. */
export async function findUserForResetToken(token: string): Promise<User | null> {
  if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) return null;
  const reset = await PasswordReset.findOne({ where: { tokenHash: hashToken(token), usedAt: null, expiresAt: { [Op.gt]: new Date() } } });
  if (!reset) return null;
  return User.findByPk(reset.userId);
}

/** Sets the new password, spends the link (and any other open ones) and signs out everywhere. */
export async function completePasswordReset(token: string, password: string, clientAddress: string): Promise<User | null> {
  const passwordHash = await hashPassword(password);
  const user = await getDatabase().transaction(async (transaction) => {
    const reset = await PasswordReset.findOne({ where: { tokenHash: hashToken(token), usedAt: null, expiresAt: { [Op.gt]: new Date() } }, transaction, lock: transaction.LOCK.UPDATE });
    if (!reset) return null;
    await PasswordReset.update({ usedAt: new Date() }, { where: { userId: reset.userId, usedAt: null }, transaction });
    const found = await User.findByPk(reset.userId, { transaction });
    if (!found) return null;
    await found.update({ passwordHash }, { transaction });
    await recordAuditEvent({ userId: found.id, email: found.email, clientAddress }, { organisationId: null, action: "password.reset-completed", targetType: "user", targetId: found.id }, transaction);
    return found;
  });
  if (!user) return null;
  await endAllSessions(user.id);
  return user;
}
