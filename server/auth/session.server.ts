import { LRUCache } from "lru-cache";
import { createCookie } from "react-router";
import { Op } from "sequelize";
import { Membership, Organisation, Session, User } from "#models/index.ts";
import { getCookieSecrets, isCookieSecure, sessionLimits } from "../config.server.ts";
import { selectRows } from "../db/select.server.ts";
import { columnsOf, instanceOf } from "../db/rows.server.ts";
import { createToken, hashToken } from "./tokens.server.ts";

// Reauthentication after NIST SP 800-63B §4.2.3 (AAL2): at most 12 hours after sign-in, and after
// 30 minutes without activity — both configurable (SESSION_ABSOLUTE_HOURS, SESSION_IDLE_MINUTES).
// The last request is recorded to the minute, so the idle limit holds to within a minute.
const LAST_SEEN_RESOLUTION_MS = 60 * 1000;

let sessionCookie: ReturnType<typeof createCookie> | undefined;
function getSessionCookie() {
  // The __Host- prefix (OWASP ASVS 3.4.4) requires Secure, so it is used only when Secure is.
  sessionCookie ??= createCookie(isCookieSecure() ? "__Host-sallyport-session" : "sallyport-session", {
    httpOnly: true,
    sameSite: "lax",
    secure: isCookieSecure(),
    path: "/",
    secrets: getCookieSecrets(),
    maxAge: Math.floor(sessionLimits().absoluteMs / 1000),
  });
  return sessionCookie;
}

/**
 * A signed-in session. `enrolmentRequired`: the user has no second factor and an organisation of
 * theirs requires one, so they may only enrol or sign out (docs/decisions/019). `memberships`:
 * the user's memberships, each with its organisation, by organisation name, as they were when
 * the request began (the organisation guard picks the one in the URL from them).
 */
export type SignedInSession = { session: Session; user: User; enrolmentRequired: boolean; memberships: ReadonlyArray<Membership & { organisation: Organisation }> };

/** How long the password step waits for the second step before the sign-in starts over. */
export const SECOND_STEP_MINUTES = 5;

// Checking the cookie's signature (HMAC-SHA256 through Web Crypto) was ≈ 5 % of a request's
// time (measured). A Cookie header whose session value passed the check is remembered by its
// exact text, bounded: a forged or altered header is a different text and is checked in full.
// The session row is still read on every request, so a signed-out session stays signed out.
const verifiedTokens = new LRUCache<string, string>({ max: 10_000 });

async function readSessionToken(request: Request): Promise<string | null> {
  const header = request.headers.get("Cookie");
  if (!header) return null;
  const known = verifiedTokens.get(header);
  if (known !== undefined) return known;
  const value: unknown = await getSessionCookie().parse(header);
  if (typeof value !== "string" || value.length === 0) return null;
  verifiedTokens.set(header, value);
  return value;
}

// The session, its user and the user's memberships with their organisations: one query per
// request for everything the guard needs (one row per membership; one with none for a user
// of no organisation yet).
let signedInStatement: string | undefined;
function signedInQuery(): string {
  signedInStatement ??= `SELECT ${columnsOf(Session, "s")}, ${columnsOf(User, "u")}, ${columnsOf(Membership, "m")}, ${columnsOf(Organisation, "o")}
       FROM sessions s
       JOIN users u ON u.id = s.user_id
       LEFT JOIN (memberships m JOIN organisations o ON o.id = m.organisation_id) ON m.user_id = s.user_id
      WHERE s.token_hash = $1 AND s.expires_at > $2 AND s.second_factor_pending = false
      ORDER BY o.name ASC`;
  return signedInStatement;
}

/** The signed-in user of this request, or null (expired or revoked sessions count as none). */
export async function getSignedInSession(request: Request): Promise<SignedInSession | null> {
  const token = await readSessionToken(request);
  if (!token) return null;
  const rows = await selectRows(signedInQuery(), [hashToken(token), new Date()]);
  const session = rows.length > 0 ? instanceOf(Session, rows[0], "s") : null;
  const user = rows.length > 0 ? instanceOf(User, rows[0], "u") : null;
  if (!session || !user) return null;
  const { idleMs, absoluteMs } = sessionLimits();
  const now = Date.now();
  if (now - session.lastSeenAt.getTime() > idleMs || now - session.createdAt.getTime() > absoluteMs) {
    // Ended for good: the next request is signed out, whichever limit passed.
    await Session.destroy({ where: { id: session.id } });
    return null;
  }
  if (now - session.lastSeenAt.getTime() > LAST_SEEN_RESOLUTION_MS) {
    await session.update({ lastSeenAt: new Date() });
  }
  const memberships = rows.flatMap((row) => {
    const membership = instanceOf(Membership, row, "m");
    const organisation = instanceOf(Organisation, row, "o");
    if (!membership || !organisation) return [];
    membership.organisation = organisation;
    return [membership as Membership & { organisation: Organisation }];
  });
  // As before, read with the session: no second factor, and an organisation of theirs requires one.
  const enrolmentRequired = user.secondFactorEnabledAt === null && memberships.some((membership) => membership.organisation.requireSecondFactor);
  return { session, user, enrolmentRequired, memberships };
}

/** The user whose password step this request's session passed, while it waits for the second step (at most SECOND_STEP_MINUTES). */
export async function getPendingSignIn(request: Request): Promise<{ session: Session; user: User } | null> {
  const token = await readSessionToken(request);
  if (!token) return null;
  const session = await Session.findOne({
    where: { tokenHash: hashToken(token), expiresAt: { [Op.gt]: new Date() }, secondFactorPending: true },
    include: [{ model: User, as: "user", required: true }],
  });
  return session?.user ? { session, user: session.user } : null;
}

/**
 * Starts a new session for the user (a fresh id at every sign-in, OWASP ASVS 3.2.1) and ends
 * the one the request came with. Returns the Set-Cookie header value. `pendingSecondFactor`: the
 * password step of a user with a second factor — a session that signs nobody in and lasts
 * SECOND_STEP_MINUTES; passing the second step starts a fresh, signed-in one.
 */
export async function startSession(request: Request, userId: string, clientAddress: string, options: { pendingSecondFactor?: boolean } = {}): Promise<string> {
  const previous = await readSessionToken(request);
  if (previous) await Session.destroy({ where: { tokenHash: hashToken(previous) } });
  const token = createToken();
  const now = new Date();
  const pending = options.pendingSecondFactor === true;
  await Session.create({
    tokenHash: hashToken(token),
    userId,
    expiresAt: new Date(now.getTime() + (pending ? SECOND_STEP_MINUTES * 60_000 : sessionLimits().absoluteMs)),
    secondFactorPending: pending,
    lastSeenAt: now,
    userAgent: (request.headers.get("User-Agent") ?? "").slice(0, 300),
    clientAddress: clientAddress.slice(0, 64),
  });
  return getSessionCookie().serialize(token);
}

/** Ends this request's session; returns the Set-Cookie header that clears the cookie. */
export async function endSession(request: Request): Promise<string> {
  const token = await readSessionToken(request);
  if (token) await Session.destroy({ where: { tokenHash: hashToken(token) } });
  return getSessionCookie().serialize("", { maxAge: 0 });
}

/** Ends every session of the user, on every device ("sign out everywhere", password reset). */
export async function endAllSessions(userId: string): Promise<number> {
  return Session.destroy({ where: { userId } });
}

const REDIRECT_BASE = "http://sallyport.invalid";

/**
 * Only a path of this site, so a crafted link cannot send a user elsewhere after sign-in (OWASP
 * ASVS 5.1.5). Browsers drop tabs and line breaks from URLs and read "\\" as "/" (WHATWG URL
 * Standard, basic URL parser), so "/\t/evil.example" would be "//evil.example": any control
 * character, whitespace or backslash refuses the value, and what is left must resolve on this site.
 */
export function safeRedirectPath(value: unknown, fallback = "/"): string {
  if (typeof value !== "string" || value.length > 2000 || !value.startsWith("/")) return fallback;
  // eslint-disable-next-line no-control-regex -- finding control characters is the point
  if (/[\u0000-\u0020\u007f-\u009f\\]/.test(value)) return fallback;
  let url: URL;
  try {
    url = new URL(value, REDIRECT_BASE);
  } catch {
    return fallback;
  }
  if (url.origin !== REDIRECT_BASE || value.startsWith("//")) return fallback;
  return `${url.pathname}${url.search}${url.hash}`;
}
