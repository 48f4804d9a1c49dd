import { Op } from "sequelize";
import { SignInAttempt } from "#models/index.ts";

// PCI DSS v4.0 8.3.4: lock out after at most 10 invalid attempts (NIST SP 800-63B §5.2.2
// allows up to 100). Per client address a higher bar, since offices share one address.
export const THROTTLE_WINDOW_MS = 15 * 60 * 1000;
export const MAX_FAILURES_PER_ACCOUNT = 10;
export const MAX_FAILURES_PER_CLIENT = 50;

export type ThrottleVerdict = { throttled: false } | { throttled: true; retryAfterSeconds: number; scope: "account" | "client" };

async function failuresSince(scope: "account" | "client", subject: string, since: Date): Promise<SignInAttempt[]> {
  return SignInAttempt.findAll({
    where: { scope, subject, createdAt: { [Op.gt]: since } },
    order: [["createdAt", "ASC"]],
    attributes: ["createdAt"],
  });
}

/** Whether another sign-in may be tried now for this account and client address. */
export async function checkSignInThrottle(email: string, clientAddress: string): Promise<ThrottleVerdict> {
  const since = new Date(Date.now() - THROTTLE_WINDOW_MS);
  for (const [scope, subject, limit] of [
    ["account", email, MAX_FAILURES_PER_ACCOUNT],
    ["client", clientAddress, MAX_FAILURES_PER_CLIENT],
  ] as const) {
    const failures = await failuresSince(scope, subject, since);
    if (failures.length >= limit) {
      // Free again when the oldest failure that still counts leaves the window.
      const oldest = failures[failures.length - limit].createdAt.getTime();
      const retryAfterSeconds = Math.max(1, Math.ceil((oldest + THROTTLE_WINDOW_MS - Date.now()) / 1000));
      return { throttled: true, retryAfterSeconds, scope };
    }
  }
  return { throttled: false };
}

export async function recordSignInFailure(email: string, clientAddress: string): Promise<void> {
  await SignInAttempt.bulkCreate([
    { scope: "account", subject: email.slice(0, 254) },
    { scope: "client", subject: clientAddress.slice(0, 254) },
  ]);
}

/** A successful sign-in clears the account's failures (the client's stay). */
export async function clearAccountFailures(email: string): Promise<void> {
  await SignInAttempt.destroy({ where: { scope: "account", subject: email } });
}
