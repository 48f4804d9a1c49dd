// Who may open the local outbox (docs/decisions/013). It lists every live reset and invitation
// link of every organisation, so it opens only with the secret that `npm start` prints — not
// for any signed-in user, not even an organisation's admin (the outbox is not an organisation's).
// The secret comes once in the link (?key=…); the page then sets a cookie holding a hash of it,
// scoped to /outbox, and redirects to the bare address so the secret leaves the address bar.
import { createHash, timingSafeEqual } from "node:crypto";
import { appOrigin, getEnvironment, isCookieSecure } from "../config.server.ts";

export const OUTBOX_COOKIE = "sallyport-outbox";

function digest(value: string): Buffer {
  return createHash("sha256").update(`sallyport-outbox:${value}`).digest();
}

function secret(): string | null {
  return getEnvironment().OUTBOX_SECRET ?? null;
}

/** Whether a presented secret (from ?key= or the cookie's hash) opens the outbox; compared in constant time. */
export function isOutboxKey(candidate: string | null | undefined): boolean {
  const expected = secret();
  if (!expected || !candidate) return false;
  return timingSafeEqual(digest(candidate), digest(expected));
}

function cookieValue(): string {
  return digest(secret() ?? "").toString("hex");
}

/** Whether the request's cookie holds the outbox's key. */
export function hasOutboxCookie(request: Request): boolean {
  const expected = secret();
  if (!expected) return false;
  const cookies = request.headers.get("Cookie") ?? "";
  const presented = cookies.split(/;\s*/).find((pair) => pair.startsWith(`${OUTBOX_COOKIE}=`))?.slice(OUTBOX_COOKIE.length + 1) ?? "";
  const want = Buffer.from(cookieValue());
  const got = Buffer.from(presented);
  return got.length === want.length && timingSafeEqual(got, want);
}

/** The Set-Cookie header that remembers the key for /outbox, for the browser session only. */
export function outboxCookieHeader(): string {
  return `${OUTBOX_COOKIE}=${cookieValue()}; Path=/outbox; HttpOnly; SameSite=Strict${isCookieSecure() ? "; Secure" : ""}`;
}

/** The link `npm start` prints: the outbox with its key. */
export function outboxLink(): string {
  return `${appOrigin()}/outbox?key=${encodeURIComponent(secret() ?? "")}`;
}
