// Sallyport's own second factor (docs/decisions/019): enrolment with a TOTP secret shown as a QR
// code and as text, confirmed by a code before it counts; ten single-use recovery codes, hashed;
// the code check behind the sign-in throttle, each code accepted once; disabling with the
// password and a code; a lockout after repeated wrong codes; an admin's reset of a member's
// second factor; and the organisation setting that requires a second factor of every member.
// Each change writes its audit entry in the change's transaction.
import { Op, QueryTypes } from "sequelize";
import QRCode from "qrcode";
import { Membership, Organisation, RecoveryCode, Session, User } from "#models/index.ts";
import { hasAtLeastRole, type Role } from "../auth/roles.ts";
import { hashPassword, verifyPassword } from "../auth/password.server.ts";
import { openSecret, sealSecret } from "../auth/sealed-secret.server.ts";
import { beginCodeAttempt } from "../auth/throttle.server.ts";
import { acceptedStep, groupedSecret, looksLikeTotpCode, newRecoveryCodes, newTotpSecret, normaliseRecoveryCode, totpUri } from "../auth/totp.ts";
import { getDatabase } from "../db/database.server.ts";
import { formatDuration, formatInstant } from "../engine/format.ts";
import { sendSecondFactorResetMail } from "../mail/messages.server.ts";
import { Refusal } from "../errors.ts";
import { requireCurrentPassword } from "./account.server.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

/** How long a secret shown for enrolment may be confirmed; after that a new one is drawn. */
export const ENROLMENT_MINUTES = 30;

const actorOf = (user: User, clientAddress: string): AuditActor => ({ userId: user.id, email: user.email, clientAddress });

export function hasSecondFactor(user: User): boolean {
  return user.secondFactorEnabledAt !== null && user.secondFactorEnabledAt !== undefined;
}

export type EnrolmentOffer = { secret: string; grouped: string; uri: string; qrSvg: string; startedAt: string };

export type SecondFactorStatus = {
  enabled: boolean;
  enabledAt: string | null;
  recoveryCodesLeft: number;
  /** A secret drawn for enrolment and not confirmed yet. */
  offer: EnrolmentOffer | null;
  /** The user's organisations that require a second factor. */
  requiredBy: string[];
};

async function offerOf(user: User): Promise<EnrolmentOffer | null> {
  if (!user.secondFactorPendingSecret || !user.secondFactorPendingAt) return null;
  if (Date.now() - user.secondFactorPendingAt.getTime() > ENROLMENT_MINUTES * 60_000) return null;
  const secret = openSecret(user.secondFactorPendingSecret, user.id);
  if (!secret) return null;
  const uri = totpUri(secret, user.email);
  // Drawn on the server as SVG (no script, no request), so the page works without JavaScript.
  const qrSvg = await QRCode.toString(uri, { type: "svg", errorCorrectionLevel: "M", margin: 2, color: { dark: "#000000", light: "#ffffff" } });
  return { secret, grouped: groupedSecret(secret), uri, qrSvg, startedAt: user.secondFactorPendingAt.toISOString() };
}

export async function secondFactorStatus(user: User): Promise<SecondFactorStatus> {
  const [recoveryCodesLeft, requiring] = await Promise.all([
    RecoveryCode.count({ where: { userId: user.id, usedAt: null } }),
    Membership.findAll({ where: { userId: user.id }, include: [{ model: Organisation, as: "organisation", required: true, where: { requireSecondFactor: true }, attributes: ["name"] }] }),
  ]);
  const enabled = hasSecondFactor(user);
  return {
    enabled,
    enabledAt: user.secondFactorEnabledAt?.toISOString() ?? null,
    recoveryCodesLeft: enabled ? recoveryCodesLeft : 0,
    offer: enabled ? null : await offerOf(user),
    requiredBy: requiring.map((membership) => membership.organisation!.name).sort(),
  };
}

/** Draws a new secret to enrol (replacing one shown before and not confirmed). */
export async function startEnrolment(user: User): Promise<void> {
  if (hasSecondFactor(user)) throw new Refusal("You have a second factor already. Turn it off first to enrol another authenticator.", 409);
  await user.update({ secondFactorPendingSecret: sealSecret(newTotpSecret(), user.id), secondFactorPendingAt: new Date() });
}

const wrongCode = (field = "code") => new Refusal("That code is not right. Enter the current six-digit code from your authenticator app, or one of your recovery codes.", 400, { field });

async function hashedRecoveryCodes(userId: string): Promise<{ codes: string[]; rows: { userId: string; codeHash: string }[] }> {
  const codes = newRecoveryCodes();
  // argon2id as for passwords (NIST SP 800-63B §5.1.2.2: look-up secrets under 112 bits are stored salted and hashed with a key derivation function).
  const hashes = await Promise.all(codes.map((code) => hashPassword(normaliseRecoveryCode(code)!)));
  return { codes, rows: hashes.map((codeHash) => ({ userId, codeHash })) };
}

/**
 * Confirms enrolment with a code from the secret shown: the second factor is on from now, and the
 * ten recovery codes returned are shown once (only their hashes are kept).
 */
export async function confirmEnrolment(user: User, code: string, clientAddress: string, now = Date.now()): Promise<string[]> {
  if (hasSecondFactor(user)) throw new Refusal("You have a second factor already.", 409);
  const offer = await offerOf(user);
  if (!offer) throw new Refusal(`The secret shown for enrolment has expired (after ${formatDuration(ENROLMENT_MINUTES, "minute")}). Start again to get a new one.`, 409);
  const step = acceptedStep(offer.secret, code, now, null);
  if (step === null) throw new Refusal("That code does not match the secret shown. Check the clock of the device the app runs on and enter the code the app shows now.", 400, { field: "code" });
  const { codes, rows } = await hashedRecoveryCodes(user.id);
  await getDatabase().transaction(async (transaction) => {
    await user.update(
      { secondFactorSecret: sealSecret(offer.secret, user.id), secondFactorEnabledAt: new Date(now), secondFactorLastStep: String(step), secondFactorPendingSecret: null, secondFactorPendingAt: null },
      { transaction },
    );
    await RecoveryCode.destroy({ where: { userId: user.id }, transaction });
    await RecoveryCode.bulkCreate(rows, { transaction });
    await recordAuditEvent(actorOf(user, clientAddress), { organisationId: null, action: "user.second-factor-enabled", targetType: "user", targetId: user.id, changes: { recoveryCodes: codes.length } }, transaction);
  });
  return codes;
}

export type SecondFactorMethod = "authenticator" | "recovery code";

/** Accepts a TOTP code once: the step is stored only if it is newer than the stored one, so two parallel uses cannot both pass. */
async function acceptTotp(user: User, code: string, now: number): Promise<boolean> {
  if (!user.secondFactorSecret) return false;
  const secret = openSecret(user.secondFactorSecret, user.id);
  if (!secret) return false;
  const last = user.secondFactorLastStep === null || user.secondFactorLastStep === undefined ? null : Number(user.secondFactorLastStep);
  const step = acceptedStep(secret, code, now, last);
  if (step === null) return false;
  const [updated] = await User.update({ secondFactorLastStep: String(step) }, { where: { id: user.id, [Op.or]: [{ secondFactorLastStep: null }, { secondFactorLastStep: { [Op.lt]: step } }] } });
  return updated === 1;
}

/** Uses one of the user's unused recovery codes, once: the row is marked used only if it was unused. */
async function acceptRecoveryCode(user: User, code: string): Promise<boolean> {
  const normalised = normaliseRecoveryCode(code);
  if (!normalised) return false;
  const unused = await RecoveryCode.findAll({ where: { userId: user.id, usedAt: null } });
  for (const row of unused) {
    if (!(await verifyPassword(row.codeHash, normalised))) continue;
    const [used] = await RecoveryCode.update({ usedAt: new Date() }, { where: { id: row.id, usedAt: null } });
    return used === 1;
  }
  return false;
}

// The lockout (docs/decisions/019): this many wrong codes in a row, the first of them at most
// LOCKOUT_WINDOW_MINUTES ago, lock the account's second step for LOCKOUT_MINUTES. The same
// numbers as the throttle (PCI DSS v4.0 8.3.4: at most 10 attempts, locked 30 minutes or until
// an administrator confirms the identity; NIST SP 800-63B §5.2.2 allows up to 100) — the
// throttle's window slides, the lockout is a fixed term with an audit entry and a time to show.
export const LOCKOUT_FAILURES = 10;
export const LOCKOUT_WINDOW_MINUTES = 15;
export const LOCKOUT_MINUTES = 15;

/** Until when the user's second step is locked, read fresh from the database (another process may have locked it); null when it is not. */
export async function secondFactorLockedUntil(userId: string, now = Date.now()): Promise<Date | null> {
  const row = await User.findByPk(userId, { attributes: ["id", "secondFactorLockedUntil"] });
  const until = row?.secondFactorLockedUntil ?? null;
  return until && until.getTime() > now ? until : null;
}

/** The words of a locked second step: until when, in UTC and in minutes from now. */
export function lockedMessage(until: Date, now = Date.now()): string {
  const minutes = Math.max(1, Math.ceil((until.getTime() - now) / 60_000));
  return `Too many wrong codes for this account: its second step is locked until ${formatInstant(until)} (in ${formatDuration(minutes, "minute")}). Try again then with the code your app shows at that time.`;
}

function lockedRefusal(until: Date, now: number, field: string): Refusal {
  return new Refusal(lockedMessage(until, now), 429, { field, headers: { "Retry-After": String(Math.max(1, Math.ceil((until.getTime() - now) / 1000))) } });
}

/**
 * Counts one wrong code for the user in one UPDATE (so parallel requests and other web processes
 * count each failure once); the failure that reaches LOCKOUT_FAILURES locks the second step and
 * writes `user.second-factor-locked` in the same transaction. Returns the lock's end, if it locked.
 */
async function countWrongCode(user: User, clientAddress: string, now: number): Promise<Date | null> {
  const sequelize = getDatabase();
  return sequelize.transaction(async (transaction) => {
    const [rows] = await sequelize.query(
      `UPDATE users SET
         second_factor_failures = CASE WHEN second_factor_failed_since IS NULL OR second_factor_failed_since <= :windowStart THEN 1 ELSE second_factor_failures + 1 END,
         second_factor_failed_since = CASE WHEN second_factor_failed_since IS NULL OR second_factor_failed_since <= :windowStart THEN :now ELSE second_factor_failed_since END
       WHERE id = :id RETURNING second_factor_failures AS failures`,
      { replacements: { id: user.id, now: new Date(now), windowStart: new Date(now - LOCKOUT_WINDOW_MINUTES * 60_000) }, transaction },
    );
    const failures = Number((rows as { failures: number }[])[0]?.failures ?? 0);
    if (failures < LOCKOUT_FAILURES) return null;
    const until = new Date(now + LOCKOUT_MINUTES * 60_000);
    // The count starts over, so once the lock ends the account has its full number of tries again.
    await User.update({ secondFactorFailures: 0, secondFactorFailedSince: null, secondFactorLockedUntil: until }, { where: { id: user.id }, transaction });
    await recordAuditEvent(
      actorOf(user, clientAddress),
      { organisationId: null, action: "user.second-factor-locked", targetType: "user", targetId: user.id, changes: { failures, minutes: LOCKOUT_MINUTES, lockedUntil: until.toISOString() } },
      transaction,
    );
    return until;
  });
}

/** A right code ends the run of wrong ones. */
async function clearWrongCodes(userId: string): Promise<void> {
  await User.update(
    { secondFactorFailures: 0, secondFactorFailedSince: null, secondFactorLockedUntil: null },
    { where: { id: userId, [Op.or]: [{ secondFactorFailures: { [Op.gt]: 0 } }, { secondFactorFailedSince: { [Op.ne]: null } }, { secondFactorLockedUntil: { [Op.ne]: null } }] } },
  );
}

/**
 * Checks a second-factor code (six digits from the authenticator, or a recovery code) behind the
 * lockout and the code throttle; refuses with 400 (wrong) or 429 (locked or throttled, with
 * Retry-After) on `field`. It is only ever reached after the password (or a signed-in session),
 * so saying the second step is locked tells nothing the password step did not.
 */
export async function verifySecondFactor(user: User, code: string, clientAddress: string, field = "code", now = Date.now()): Promise<SecondFactorMethod> {
  if (!hasSecondFactor(user)) throw new Refusal("This account has no second factor.", 409);
  const locked = await secondFactorLockedUntil(user.id, now);
  if (locked) throw lockedRefusal(locked, now, field);
  const attempt = await beginCodeAttempt(user.id, clientAddress, now);
  const { verdict } = attempt;
  if (verdict.throttled) {
    throw new Refusal(`Too many wrong codes ${verdict.scope === "code-account" ? "for this account" : "from your address"}. Try again in ${formatDuration(Math.ceil(verdict.retryAfterSeconds / 60), "minute")}.`, 429, {
      field,
      headers: { "Retry-After": String(verdict.retryAfterSeconds) },
    });
  }
  const method: SecondFactorMethod | null = looksLikeTotpCode(code) ? ((await acceptTotp(user, code, now)) ? "authenticator" : null) : (await acceptRecoveryCode(user, code)) ? "recovery code" : null;
  await attempt.settle(method !== null);
  if (!method) {
    const lockedNow = await countWrongCode(user, clientAddress, now);
    if (lockedNow) throw lockedRefusal(lockedNow, now, field);
    throw wrongCode(field);
  }
  await clearWrongCodes(user.id);
  return method;
}

/** New recovery codes for a current code; the old ones stop working. Returns the new ones, shown once. */
export async function regenerateRecoveryCodes(user: User, code: string, clientAddress: string): Promise<string[]> {
  await verifySecondFactor(user, code, clientAddress);
  const { codes, rows } = await hashedRecoveryCodes(user.id);
  await getDatabase().transaction(async (transaction) => {
    await RecoveryCode.destroy({ where: { userId: user.id }, transaction });
    await RecoveryCode.bulkCreate(rows, { transaction });
    await recordAuditEvent(actorOf(user, clientAddress), { organisationId: null, action: "user.recovery-codes-regenerated", targetType: "user", targetId: user.id, changes: { recoveryCodes: codes.length } }, transaction);
  });
  return codes;
}

/** Turns the second factor off, with the password and a current code. */
export async function disableSecondFactor(user: User, input: { currentPassword: string; code: string }, clientAddress: string): Promise<void> {
  await requireCurrentPassword(user, input.currentPassword, clientAddress);
  await verifySecondFactor(user, input.code, clientAddress);
  await getDatabase().transaction(async (transaction) => {
    await user.update(NO_SECOND_FACTOR, { transaction });
    await RecoveryCode.destroy({ where: { userId: user.id }, transaction });
    await recordAuditEvent(actorOf(user, clientAddress), { organisationId: null, action: "user.second-factor-disabled", targetType: "user", targetId: user.id }, transaction);
  });
}

/** What clears a second factor: the secret, the enrolment in progress, and the lockout's count. */
const NO_SECOND_FACTOR = {
  secondFactorSecret: null,
  secondFactorEnabledAt: null,
  secondFactorLastStep: null,
  secondFactorPendingSecret: null,
  secondFactorPendingAt: null,
  secondFactorFailures: 0,
  secondFactorFailedSince: null,
  secondFactorLockedUntil: null,
} as const;

export type SecondFactorReset = { name: string; email: string; recoveryCodesRemoved: number; sessionsEnded: number; enrolmentRequired: boolean };

/**
 * An admin's or owner's reset of a member's second factor, for a member who lost both the
 * authenticator and the recovery codes: the enrolment and the recovery codes go, every session of
 * the member ends, the audit entry is written in the same transaction, and the member is told by
 * e-mail (the link from APP_ORIGIN). Refused for oneself (the account page is the way, with the
 * password and a code), for a member of another organisation, for an owner unless by an owner
 * (as for roles), and for a member without a second factor. Where the organisation requires one,
 * the member is sent to enrol at their next sign-in by the existing enforcement.
 */
export async function resetMemberSecondFactor(
  organisation: Organisation,
  membershipId: string,
  actor: AuditActor & { role: Role; name: string },
  appOrigin: string,
): Promise<SecondFactorReset> {
  const membership = await Membership.findOne({ where: { id: membershipId, organisationId: organisation.id }, include: [{ model: User, as: "user", required: true }] });
  if (!membership?.user) throw new Refusal("No such member in this organisation.", 404);
  const member = membership.user;
  if (!hasAtLeastRole(actor.role, "admin")) throw new Refusal("Only an admin or owner can reset a member's second factor.", 403);
  if (member.id === actor.userId) throw new Refusal("This is your own account: turn your second factor off or set it up again on Your account → Second factor.", 409);
  if (membership.role === "owner" && actor.role !== "owner") throw new Refusal("Only an owner can reset an owner's second factor.", 403);
  const result = await getDatabase().transaction(async (transaction) => {
    // Locked and read again inside the transaction, so two admins resetting at once write one entry.
    const fresh = await User.findByPk(member.id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!fresh || !hasSecondFactor(fresh)) throw new Refusal(`${member.name} has no second factor to reset.`, 409);
    await fresh.update(NO_SECOND_FACTOR, { transaction });
    const recoveryCodesRemoved = await RecoveryCode.destroy({ where: { userId: member.id }, transaction });
    const sessionsEnded = await Session.destroy({ where: { userId: member.id }, transaction });
    await recordAuditEvent(
      actor,
      { organisationId: organisation.id, action: "member.second-factor-reset", targetType: "membership", targetId: membership.id, changes: { email: member.email, recoveryCodesRemoved, sessionsEnded } },
      transaction,
    );
    return { recoveryCodesRemoved, sessionsEnded };
  });
  // After the commit, as for invitations; the link's origin is configured, never the request's Host.
  await sendSecondFactorResetMail({ to: member.email, name: member.name, organisationName: organisation.name, adminName: actor.name, required: organisation.requireSecondFactor, link: `${appOrigin}/account/second-factor` });
  return { name: member.name, email: member.email, ...result, enrolmentRequired: organisation.requireSecondFactor };
}

/** The organisation's members without a second factor, by name, for the cautions beside the setting. */
export async function membersWithoutSecondFactor(organisationId: string): Promise<{ name: string; email: string; role: string }[]> {
  return getDatabase().query<{ name: string; email: string; role: string }>(
    `SELECT u.name, u.email, m.role FROM memberships m JOIN users u ON u.id = m.user_id
     WHERE m.organisation_id = :organisationId AND u.second_factor_enabled_at IS NULL ORDER BY u.name, u.email`,
    { replacements: { organisationId }, type: QueryTypes.SELECT },
  );
}

/**
 * Requires (or stops requiring) a second factor of every member. Whoever turns it on must have
 * one already, so the change cannot send its own author to enrolment; members without one are
 * sent to enrol at their next request. Returns false when nothing changed.
 */
export async function setSecondFactorRequirement(organisation: Organisation, required: boolean, actingUser: User, actor: AuditActor): Promise<boolean> {
  if (organisation.requireSecondFactor === required) return false;
  if (required && !hasSecondFactor(actingUser)) {
    throw new Refusal("Turn on a second factor for your own account first (Your account → Second factor), so this setting cannot lock you out.", 409, { field: "requireSecondFactor" });
  }
  const without = await membersWithoutSecondFactor(organisation.id);
  await getDatabase().transaction(async (transaction) => {
    await organisation.update({ requireSecondFactor: required }, { transaction });
    await recordAuditEvent(
      actor,
      {
        organisationId: organisation.id,
        action: "organisation.second-factor-requirement-changed",
        targetType: "organisation",
        targetId: organisation.id,
        changes: { requireSecondFactor: { from: !required, to: required }, membersWithout: without.length },
      },
      transaction,
    );
  });
  return true;
}
