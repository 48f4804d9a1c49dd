import { createCookie } from "react-router";
import { Op } from "sequelize";
import { Session, User } from "#models/index.ts";
import { getCookieSecrets, isCookieSecure } from "../config.server.ts";
import { createToken, hashToken } from "./tokens.server.ts";

const SESSION_LIFETIME_MS = 14 * 24 * 60 * 60 * 1000;
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
    maxAge: SESSION_LIFETIME_MS / 1000,
  });
  return sessionCookie;
}

export type SignedInSession = { session: Session; user: User };

async function readSessionToken(request: Request): Promise<string | null> {
  const value: unknown = await getSessionCookie().parse(request.headers.get("Cookie"));
  return typeof value === "string" && value.length > 0 ? value : null;
}

/** The signed-in user of this request, or null (expired or revoked sessions count as none). */
export async function getSignedInSession(request: Request): Promise<SignedInSession | null> {
  const token = await readSessionToken(request);
  if (!token) return null;
  const session = await Session.findOne({
    where: { tokenHash: hashToken(token), expiresAt: { [Op.gt]: new Date() } },
    include: [{ model: User, as: "user", required: true }],
  });
  if (!session?.user) return null;
  if (Date.now() - session.lastSeenAt.getTime() > LAST_SEEN_RESOLUTION_MS) {
    await session.update({ lastSeenAt: new Date() });
  }
  return { session, user: session.user };
}

/**
 * Starts a new session for the user (a fresh id at every sign-in, OWASP ASVS 3.2.1) and ends
 * the one the request came with. Returns the Set-Cookie header value.
 */
export async function startSession(request: Request, userId: string, clientAddress: string): Promise<string> {
  const previous = await readSessionToken(request);
  if (previous) await Session.destroy({ where: { tokenHash: hashToken(previous) } });
  const token = createToken();
  const now = new Date();
  await Session.create({
    tokenHash: hashToken(token),
    userId,
    expiresAt: new Date(now.getTime() + SESSION_LIFETIME_MS),
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

/** Only same-site relative paths, so a crafted link cannot send a user elsewhere after sign-in. */
export function safeRedirectPath(value: unknown, fallback = "/"): string {
  if (typeof value !== "string" || !value.startsWith("/") || value.startsWith("//") || value.startsWith("/\\")) return fallback;
  return value;
}
