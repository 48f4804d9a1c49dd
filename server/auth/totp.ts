// Time-based one-time passwords for Sallyport's own sign-in (docs/decisions/019), with the
// otpauth package: RFC 6238 with its defaults as authenticator apps read them — HMAC-SHA-1,
// 6 digits, 30-second steps from the Unix epoch — and one step of drift either way.
// Pure: the caller passes the time and the last accepted step and stores what this returns.
import { randomBytes } from "node:crypto";
import { Secret, TOTP } from "otpauth";

export const TOTP_PERIOD_SECONDS = 30;
export const TOTP_DIGITS = 6;
/** Steps of clock drift accepted either side of now (RFC 6238 §5.2 recommends at most one). */
export const TOTP_WINDOW = 1;
/** RFC 4226 §4 R6: at least 128 bits of shared secret, 160 recommended. */
const SECRET_BYTES = 20;
const ISSUER = "Sallyport";

function totpOf(secretBase32: string, label = ""): TOTP {
  return new TOTP({ issuer: ISSUER, label, algorithm: "SHA1", digits: TOTP_DIGITS, period: TOTP_PERIOD_SECONDS, secret: Secret.fromBase32(secretBase32) });
}

/** A new random secret, Base32 (RFC 4648 §6) as authenticator apps take it. */
export function newTotpSecret(): string {
  return new Secret({ size: SECRET_BYTES }).base32;
}

/** The secret in groups of four, easier to type by hand. */
export function groupedSecret(secretBase32: string): string {
  return secretBase32.replace(/(.{4})(?=.)/g, "$1 ");
}

/** The otpauth:// address that a QR code carries to an authenticator app. */
export function totpUri(secretBase32: string, accountEmail: string): string {
  return totpOf(secretBase32, accountEmail).toString();
}

/** The time step a moment falls in (RFC 6238 §4.2: T = floor((Unix time − T0) / X)). */
export function timeStepOf(nowMs: number): number {
  return Math.floor(nowMs / 1000 / TOTP_PERIOD_SECONDS);
}

/** The code for a moment (for tests and for the browser tests' own authenticator). */
export function totpCode(secretBase32: string, nowMs: number): string {
  return totpOf(secretBase32).generate({ timestamp: nowMs });
}

/** Six digits once spaces are removed: what a TOTP code looks like. */
export function looksLikeTotpCode(text: string): boolean {
  return new RegExp(`^\\d{${TOTP_DIGITS}}$`).test(text.replace(/\s+/g, ""));
}

/**
 * The time step a code belongs to, when it is valid now (±TOTP_WINDOW steps) and newer than
 * `lastAcceptedStep`; otherwise null. A code is accepted once: the caller stores the step and
 * refuses that step and every earlier one from then on (RFC 6238 §5.2).
 */
export function acceptedStep(secretBase32: string, code: string, nowMs: number, lastAcceptedStep: number | null): number | null {
  const token = code.replace(/\s+/g, "");
  if (!looksLikeTotpCode(token)) return null;
  const delta = totpOf(secretBase32).validate({ token, timestamp: nowMs, window: TOTP_WINDOW });
  if (delta === null) return null;
  const step = timeStepOf(nowMs) + delta;
  return lastAcceptedStep !== null && step <= lastAcceptedStep ? null : step;
}

// Recovery codes: ten of them, each 10 random characters from an alphabet without look-alikes
// (about 50 bits; NIST SP 800-63B §5.1.2.1 asks at least 20 bits of a look-up secret), shown as
// two groups of five.
export const RECOVERY_CODE_COUNT = 10;
const RECOVERY_ALPHABET = "abcdefghjkmnpqrstuvwxyz23456789";
const RECOVERY_LENGTH = 10;

/** A fresh set of recovery codes as shown to the user ("abcde-fghjk"). */
export function newRecoveryCodes(count = RECOVERY_CODE_COUNT): string[] {
  return Array.from({ length: count }, () => {
    // Rejection sampling keeps every character equally likely.
    let code = "";
    while (code.length < RECOVERY_LENGTH) {
      for (const byte of randomBytes(RECOVERY_LENGTH)) {
        if (byte < 256 - (256 % RECOVERY_ALPHABET.length) && code.length < RECOVERY_LENGTH) code += RECOVERY_ALPHABET[byte % RECOVERY_ALPHABET.length];
      }
    }
    return `${code.slice(0, 5)}-${code.slice(5)}`;
  });
}

/** A typed recovery code as stored: lower case, no spaces or dashes; null when it cannot be one. */
export function normaliseRecoveryCode(text: string): string | null {
  const bare = text.toLowerCase().replace(/[\s-]+/g, "");
  return bare.length === RECOVERY_LENGTH && [...bare].every((character) => RECOVERY_ALPHABET.includes(character)) ? bare : null;
}
