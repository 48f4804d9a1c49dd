// Bearer tokens for the REST API (docs/decisions/014). A member makes personal tokens on their
// account page; an admin makes the organisation's service tokens in its settings. The secret is
// shown once and only its SHA-256 is kept (a 256-bit random secret needs no slow hash: OWASP
// Password Storage Cheat Sheet, "high-entropy" secrets). Each change writes its audit entry in
// the change's transaction. Authenticating a call, counting it against the token's rate limit
// and noting its last use are here too, so the API layer holds no SQL.
import { randomBytes } from "node:crypto";
import { QueryTypes, UniqueConstraintError } from "sequelize";
import { ApiToken, Organisation, User, type ApiTokenKind, type ApiTokenScope } from "#models/index.ts";
import { SERVICE_TOKEN_ROLE, TOKEN_LIFETIMES_DAYS, type ServiceTokenRole } from "#models/api-token-words.ts";
import { hasAtLeastRole, roleRank, type Role } from "../auth/roles.ts";
import { hashToken } from "../auth/tokens.server.ts";
import { getDatabase } from "../db/database.server.ts";
import { Refusal } from "../errors.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

export { SERVICE_TOKEN_ROLE, SERVICE_TOKEN_ROLES, TOKEN_LIFETIMES_DAYS, type ServiceTokenRole } from "#models/api-token-words.ts";

const PREFIX: Record<ApiTokenKind, string> = { personal: "sallyport_p_", service: "sallyport_s_" };
/** What a well-formed secret looks like: the kind's prefix and 256 random bits in base64url. */
export const TOKEN_PATTERN = /^sallyport_[ps]_[A-Za-z0-9_-]{43}$/;
const HINT_LENGTH = 16;

/** A token as lists show it (never its secret or hash). */
export type ApiTokenRow = {
  id: string;
  kind: ApiTokenKind;
  name: string;
  scope: ApiTokenScope;
  /** A service token's role; null for a personal token (its owner's role at each call). */
  role: Role | null;
  organisation: { id: string; slug: string; name: string };
  owner: { id: string; name: string; email: string } | null;
  hint: string;
  createdAt: string;
  createdBy: string;
  expiresAt: string;
  lastUsedAt: string | null;
  lastUsedAddress: string;
  revokedAt: string | null;
  /** "active", "expired" or "revoked", as of `now`. */
  status: "active" | "expired" | "revoked";
};

function rowOf(token: ApiToken, organisation: { id: string; slug: string; name: string }, owner: User | null, now: Date): ApiTokenRow {
  return {
    id: token.id,
    kind: token.kind,
    name: token.name,
    scope: token.scope,
    role: token.role,
    organisation,
    owner: owner ? { id: owner.id, name: owner.name, email: owner.email } : null,
    hint: token.hint,
    createdAt: token.createdAt.toISOString(),
    createdBy: token.createdByEmail,
    expiresAt: token.expiresAt.toISOString(),
    lastUsedAt: token.lastUsedAt ? token.lastUsedAt.toISOString() : null,
    lastUsedAddress: token.lastUsedAddress,
    revokedAt: token.revokedAt ? token.revokedAt.toISOString() : null,
    status: token.revokedAt ? "revoked" : token.expiresAt <= now ? "expired" : "active",
  };
}

export type NewApiToken = { kind: ApiTokenKind; name: string; scope: ApiTokenScope; lifetimeDays: number; role?: ServiceTokenRole };

/**
 * Makes a token and returns its secret, the only time anyone sees it. A personal token is its
 * maker's, for an organisation they are a member of; a service token needs an admin, and acts
 * with a role no higher than its maker's.
 */
export async function createApiToken(
  organisationId: string,
  input: NewApiToken,
  maker: AuditActor & { userId: string; role: Role },
  now = new Date(),
): Promise<{ secret: string; token: ApiTokenRow }> {
  if (input.kind === "service") {
    if (!hasAtLeastRole(maker.role, SERVICE_TOKEN_ROLE)) throw new Refusal(`Service tokens are made by an ${SERVICE_TOKEN_ROLE} or owner; you are ${maker.role}.`, 403);
    if (!input.role) throw new Refusal("Choose the role the token acts with.", 400, { field: "role" });
    if (roleRank(input.role) > roleRank(maker.role)) throw new Refusal(`A token cannot act with more than your own role (${maker.role}).`, 403, { field: "role" });
  }
  if (!(TOKEN_LIFETIMES_DAYS as readonly number[]).includes(input.lifetimeDays)) throw new Refusal(`Choose a lifetime of ${TOKEN_LIFETIMES_DAYS.join(", ")} days.`, 400, { field: "lifetimeDays" });
  const secret = `${PREFIX[input.kind]}${randomBytes(32).toString("base64url")}`;
  const expiresAt = new Date(now.getTime() + input.lifetimeDays * 24 * 60 * 60 * 1000);
  try {
    return await getDatabase().transaction(async (transaction) => {
      const organisation = await Organisation.findByPk(organisationId, { transaction, rejectOnEmpty: true });
      const token = await ApiToken.create(
        {
          organisationId,
          kind: input.kind,
          ownerUserId: input.kind === "personal" ? maker.userId : null,
          role: input.kind === "service" ? (input.role ?? null) : null,
          name: input.name,
          scope: input.scope,
          tokenHash: hashToken(secret),
          hint: secret.slice(0, HINT_LENGTH),
          expiresAt,
          createdByUserId: maker.userId,
          createdByEmail: maker.email,
          createdAt: now,
        },
        { transaction },
      );
      await recordAuditEvent(
        maker,
        {
          organisationId,
          action: "api-token.created",
          targetType: "api-token",
          targetId: token.id,
          changes: { name: token.name, kind: token.kind, scope: token.scope, ...(token.role ? { role: token.role } : {}), expiresAt: expiresAt.toISOString() },
        },
        transaction,
      );
      const owner = input.kind === "personal" ? await User.findByPk(maker.userId, { transaction }) : null;
      return { secret, token: rowOf(token, { id: organisation.id, slug: organisation.slug, name: organisation.name }, owner, now) };
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) {
      const whose = input.kind === "personal" ? "One of your tokens for this organisation" : "A service token of this organisation";
      throw new Refusal(`${whose} is named “${input.name}” already: choose another name, or revoke that token first.`, 409, { field: "name" });
    }
    throw error;
  }
}

/** A member's own personal tokens, in every organisation they belong to, newest first. */
export async function listPersonalTokens(userId: string, now = new Date()): Promise<ApiTokenRow[]> {
  const tokens = await ApiToken.findAll({
    where: { ownerUserId: userId, kind: "personal" },
    include: [{ model: Organisation, as: "organisation", required: true, attributes: ["id", "slug", "name"] }],
    order: [["createdAt", "DESC"]],
  });
  const owner = await User.findByPk(userId);
  return tokens.map((token) => rowOf(token, token.organisation!, owner, now));
}

/** Every token of the organisation, service tokens and members' personal ones, newest first (the settings page). */
export async function listOrganisationTokens(organisationId: string, now = new Date()): Promise<ApiTokenRow[]> {
  const tokens = await ApiToken.findAll({
    where: { organisationId },
    include: [
      { model: Organisation, as: "organisation", required: true, attributes: ["id", "slug", "name"] },
      { model: User, as: "owner", required: false, attributes: ["id", "name", "email"] },
    ],
    order: [["createdAt", "DESC"]],
  });
  return tokens.map((token) => rowOf(token, token.organisation!, token.owner ?? null, now));
}

/**
 * Revokes a token: its owner may revoke their own, an admin any token of the organisation.
 * Another organisation's token, or one the member may not revoke, is "not found" (404).
 * Revoking twice changes nothing.
 */
export async function revokeApiToken(tokenId: string, by: AuditActor & { userId: string }, access: { organisationId: string; role: Role } | null): Promise<{ name: string; changed: boolean }> {
  return getDatabase().transaction(async (transaction) => {
    const token = /^[0-9a-f-]{36}$/i.test(tokenId) ? await ApiToken.findByPk(tokenId, { transaction, lock: transaction.LOCK.UPDATE }) : null;
    const own = token?.ownerUserId === by.userId;
    const administered = token !== null && access !== null && token.organisationId === access.organisationId && hasAtLeastRole(access.role, SERVICE_TOKEN_ROLE);
    if (!token || !(own || administered)) throw new Refusal("No such API token.", 404);
    if (token.revokedAt) return { name: token.name, changed: false };
    await token.update({ revokedAt: new Date(), revokedByEmail: by.email }, { transaction });
    await recordAuditEvent(by, { organisationId: token.organisationId, action: "api-token.revoked", targetType: "api-token", targetId: token.id, changes: { name: token.name, kind: token.kind } }, transaction);
    return { name: token.name, changed: true };
  });
}

/** Who a call is made by: the token, its organisation, the role it acts with and (personal) its owner. */
export type ApiPrincipal = {
  token: { id: string; name: string; kind: ApiTokenKind; scope: ApiTokenScope; ratePerMinute: number; expiresAt: Date };
  organisation: { id: string; slug: string; name: string };
  role: Role;
  /** The owner of a personal token; null for a service token. */
  user: { id: string; email: string; name: string } | null;
};

type PrincipalRow = {
  id: string;
  name: string;
  kind: ApiTokenKind;
  scope: ApiTokenScope;
  token_role: Role | null;
  rate_limit_per_minute: number;
  expires_at: Date;
  organisation_id: string;
  organisation_slug: string;
  organisation_name: string;
  user_id: string | null;
  user_email: string | null;
  user_name: string | null;
  member_role: Role | null;
};

/**
 * The principal behind a bearer secret, or null when it is malformed, unknown, revoked or
 * expired, or (personal) its owner is no longer a member: the caller answers all of these alike.
 * One query: the token with its organisation, and its owner's membership there.
 */
export async function authenticateApiToken(secret: string, now = new Date()): Promise<ApiPrincipal | null> {
  if (!TOKEN_PATTERN.test(secret)) return null;
  const [row] = await getDatabase().query<PrincipalRow>(
    `SELECT t.id, t.name, t.kind, t.scope, t.role AS token_role, t.rate_limit_per_minute, t.expires_at,
            o.id AS organisation_id, o.slug AS organisation_slug, o.name AS organisation_name,
            u.id AS user_id, u.email AS user_email, u.name AS user_name, m.role AS member_role
       FROM api_tokens t
       JOIN organisations o ON o.id = t.organisation_id
       LEFT JOIN users u ON u.id = t.owner_user_id
       LEFT JOIN memberships m ON m.organisation_id = t.organisation_id AND m.user_id = t.owner_user_id
      WHERE t.token_hash = :hash AND t.revoked_at IS NULL`,
    { replacements: { hash: hashToken(secret) }, type: QueryTypes.SELECT },
  );
  if (!row || new Date(row.expires_at) <= now) return null;
  const role = row.kind === "personal" ? row.member_role : row.token_role;
  if (!role || (row.kind === "personal" && !row.user_id)) return null;
  return {
    token: { id: row.id, name: row.name, kind: row.kind, scope: row.scope, ratePerMinute: Number(row.rate_limit_per_minute), expiresAt: new Date(row.expires_at) },
    organisation: { id: row.organisation_id, slug: row.organisation_slug, name: row.organisation_name },
    role,
    user: row.kind === "personal" && row.user_id ? { id: row.user_id, email: row.user_email ?? "", name: row.user_name ?? "" } : null,
  };
}

/** The rate limit's verdict on one call: the window's count so far, the limit, and when it resets. */
export type RateVerdict = { allowed: boolean; calls: number; limit: number; resetSeconds: number };

/**
 * Counts a call against the token's limit per minute (a fixed window kept in PostgreSQL, so
 * every server process and a restart agree) and notes the token's last use, in one statement.
 * Windows older than the last one are dropped as it goes.
 */
export async function countApiCall(token: { id: string; ratePerMinute: number }, clientAddress: string): Promise<RateVerdict> {
  const [row] = await getDatabase().query<{ calls: number; reset_seconds: number }>(
    `WITH counted AS (
       INSERT INTO api_rate_windows (token_id, window_start, calls) VALUES (:id, date_trunc('minute', now()), 1)
       ON CONFLICT (token_id, window_start) DO UPDATE SET calls = api_rate_windows.calls + 1
       RETURNING calls, window_start
     ), touched AS (
       UPDATE api_tokens SET last_used_at = now(), last_used_address = :address WHERE id = :id RETURNING id
     ), dropped AS (
       DELETE FROM api_rate_windows WHERE token_id = :id AND window_start < date_trunc('minute', now()) - interval '1 minute' RETURNING token_id
     )
     SELECT calls, CEIL(EXTRACT(EPOCH FROM (window_start + interval '1 minute' - now())))::int AS reset_seconds FROM counted`,
    { replacements: { id: token.id, address: clientAddress.slice(0, 64) }, type: QueryTypes.SELECT },
  );
  const calls = Number(row.calls);
  return { allowed: calls <= token.ratePerMinute, calls, limit: token.ratePerMinute, resetSeconds: Math.max(1, Number(row.reset_seconds)) };
}
