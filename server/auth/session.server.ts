import { createCookie } from "react-router";
import { literal, Op } from "sequelize";
import { Session, User } from "#models/index.ts";
import { getCookieSecrets, isCookieSecure, sessionLimits } from "../config.server.ts";
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
 * theirs requires one, so they may only enrol or sign out (docs/decisions/019).
 */
export type SignedInSession = { session: Session; user: User; enrolmentRequired: boolean };

/** How long the password step waits for the second step before the sign-in starts over. */
export const SECOND_STEP_MINUTES = 5;

// Read in the session's own query, so the check costs no extra round trip per request.
const ENROLMENT_REQUIRED = literal(
  `("user"."second_factor_enabled_at" IS NULL AND EXISTS (SELECT 1 FROM memberships m JOIN organisations o ON o.id = m.organisation_id WHERE m.user_id = "Session"."user_id" AND o.require_second_factor))`,
);

async function readSessionToken(request: Request): Promise<string | null> {
  const value: unknown = await getSessionCookie().parse(request.headers.get("Cookie"));
  return typeof value === "string" && value.length > 0 ? value : null;
}

/** The signed-in user of this request, or null (expired or revoked sessions count as none). */
export async function getSignedInSession(request: Request): Promise<SignedInSession | null> {
  const token = await readSessionToken(request);
  if (!token) return null;
  const session = await Session.findOne({
    where: { tokenHash: hashToken(token), expiresAt: { [Op.gt]: new Date() }, secondFactorPending: false },
    attributes: { include: [[ENROLMENT_REQUIRED, "enrolmentRequired"]] },
    include: [{ model: User, as: "user", required: true }],
  });
  if (!session?.user) return null;
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
  return { session, user: session.user, enrolmentRequired: session.get("enrolmentRequired") === true };
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
