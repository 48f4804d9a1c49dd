import { totpCode } from "#server/auth/totp";

/**
 * Codes for successive uses within one test, as an authenticator app would show them: each use
 * takes the code of a later time step than the one before (one step back, now, one step ahead —
 * RFC 6238 §5.2's window of one step either way), so a test needs no clock of its own and never
 * reuses a code by accident (a code is accepted once).
 */
export function successiveCodes(secret: string): () => string {
  let offset = -30_000;
  return () => {
    if (offset > 30_000) throw new Error("a test may use at most three codes: one step back, now and one step ahead");
    const code = totpCode(secret, Date.now() + offset);
    offset += 30_000;
    return code;
  };
}
