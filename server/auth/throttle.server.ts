import { Op } from "sequelize";
import { SignInAttempt, type ThrottleScope } from "#models/index.ts";
import { getEnvironment } from "../config.server.ts";
import { formatDuration } from "../engine/format.ts";
import { Refusal } from "../errors.ts";

// PCI DSS v4.0 8.3.4: lock out after at most 10 invalid attempts (NIST SP 800-63B §5.2.2
// allows up to 100). Per client address a higher bar, since offices share one address.
export const THROTTLE_WINDOW_MS = 15 * 60 * 1000;
export const MAX_FAILURES_PER_ACCOUNT = 10;
export const MAX_FAILURES_PER_CLIENT = 50;

export type ThrottleVerdict = { throttled: false } | { throttled: true; retryAfterSeconds: number; scope: ThrottleScope };

type Limit = { scope: ThrottleScope; subject: string; limit: number; windowMs: number };

/**
 * Counts before it lets a request through (docs/decisions/013): the request's own row is written
 * first, then the rows in the window are counted, its own included. Of any number of parallel
 * requests at most `limit` see a count within the limit — counting after the check let 40
 * parallel guesses through 16–23 times. A refused request takes its rows back, so being
 * throttled never prolongs the throttle.
 */
async function reserve(limits: readonly Limit[], now = Date.now()): Promise<{ verdict: ThrottleVerdict; ids: string[] }> {
  const rows = await SignInAttempt.bulkCreate(limits.map(({ scope, subject }) => ({ scope, subject: subject.slice(0, 254), createdAt: new Date(now) })), { returning: ["id"] });
  const ids = rows.map((row) => String(row.id));
  for (const { scope, subject, limit, windowMs } of limits) {
    const since = new Date(now - windowMs);
    const inWindow = await SignInAttempt.findAll({ where: { scope, subject: subject.slice(0, 254), createdAt: { [Op.gt]: since } }, order: [["createdAt", "ASC"]], attributes: ["id", "createdAt"] });
    if (inWindow.length > limit) {
      await SignInAttempt.destroy({ where: { id: ids } });
      const others = inWindow.filter((row) => !ids.includes(String(row.id)));
      // Free again when the oldest row that still counts leaves the window.
      const oldest = (others[Math.max(0, others.length - limit)] ?? inWindow[0]).createdAt.getTime();
      const retryAfterSeconds = Math.max(1, Math.ceil((oldest + windowMs - now) / 1000));
      return { verdict: { throttled: true, retryAfterSeconds, scope }, ids: [] };
    }
  }
  return { verdict: { throttled: false }, ids };
}

export type PasswordAttempt = {
  verdict: ThrottleVerdict;
  /** After the password was checked: a failure keeps the attempt counted; a success clears the account's failures. */
  settle: (success: boolean) => Promise<void>;
};

/** Reserves one password attempt for this account and client address before the password is evaluated. */
export function beginPasswordAttempt(email: string, clientAddress: string): Promise<PasswordAttempt> {
  return beginAttempt("account", email, "client", clientAddress);
}

/**
 * Reserves one second-factor code attempt (TOTP or recovery code, docs/decisions/019) for this
 * user and client address before the code is checked: the same limits as passwords, in scopes of
 * their own, so guessing six digits is as slow as guessing a password (NIST SP 800-63B §5.2.2).
 */
export function beginCodeAttempt(userId: string, clientAddress: string, now = Date.now()): Promise<PasswordAttempt> {
  return beginAttempt("code-account", userId, "code-client", clientAddress, now);
}

async function beginAttempt(accountScope: ThrottleScope, account: string, clientScope: ThrottleScope, clientAddress: string, now = Date.now()): Promise<PasswordAttempt> {
  const { verdict, ids } = await reserve(
    [
      { scope: accountScope, subject: account, limit: MAX_FAILURES_PER_ACCOUNT, windowMs: THROTTLE_WINDOW_MS },
      { scope: clientScope, subject: clientAddress, limit: MAX_FAILURES_PER_CLIENT, windowMs: THROTTLE_WINDOW_MS },
    ],
    now,
  );
  return {
    verdict,
    settle: async (success) => {
      if (!success || verdict.throttled) return;
      // A success clears the account's failures; the client's earlier ones stay.
      await SignInAttempt.destroy({ where: { [Op.or]: [{ scope: accountScope, subject: account.slice(0, 254) }, { id: ids }] } });
    },
  };
}

// Requests that send e-mail or create accounts: counted whether they succeed or not, per e-mail
// address and per client address (common practice, no source: OWASP's Forgot Password and
// Authentication cheat sheets ask for rate limits without numbers).
export const REQUEST_WINDOW_MS = 60 * 60 * 1000;
export const RESET_REQUESTS_PER_EMAIL = 5;
export const RESET_REQUESTS_PER_CLIENT = 20;
export const SIGN_UPS_PER_EMAIL = 5;

/** Per client address, sign-ups follow SIGN_UPS_PER_CLIENT (30 unless configured). */
const REQUEST_LIMITS = {
  reset: { email: ["reset-email", RESET_REQUESTS_PER_EMAIL], client: ["reset-client", () => RESET_REQUESTS_PER_CLIENT] },
  signup: { email: ["signup-email", SIGN_UPS_PER_EMAIL], client: ["signup-client", () => getEnvironment().SIGN_UPS_PER_CLIENT] },
} as const satisfies Record<string, { email: readonly [ThrottleScope, number]; client: readonly [ThrottleScope, () => number] }>;

/** One password-reset request ("reset") or sign-up ("signup") for the address from the client, or the throttle's verdict. */
export async function allowRequest(kind: keyof typeof REQUEST_LIMITS, email: string, clientAddress: string): Promise<ThrottleVerdict> {
  const { email: [emailScope, perEmail], client: [clientScope, perClient] } = REQUEST_LIMITS[kind];
  return (
    await reserve([
      { scope: emailScope, subject: email, limit: perEmail, windowMs: REQUEST_WINDOW_MS },
      { scope: clientScope, subject: clientAddress, limit: perClient(), windowMs: REQUEST_WINDOW_MS },
    ])
  ).verdict;
}

/** The 429 for a throttled request, with Retry-After and the wait in words, beside `field`. */
export function throttledRefusal(verdict: Extract<ThrottleVerdict, { throttled: true }>, what: string, field?: string): Refusal {
  const minutes = Math.ceil(verdict.retryAfterSeconds / 60);
  return new Refusal(`Too many ${what} ${verdict.scope.endsWith("client") ? "from your address" : "for this e-mail address"}. Try again in ${formatDuration(minutes, "minute")}.`, 429, {
    field,
    headers: { "Retry-After": String(verdict.retryAfterSeconds) },
  });
}
