import { Secret, TOTP } from "otpauth";
import { describe, expect, test } from "vitest";
import { openSecret, sealSecret } from "#server/auth/sealed-secret.server";
import { acceptedStep, newRecoveryCodes, newTotpSecret, normaliseRecoveryCode, RECOVERY_CODE_COUNT, timeStepOf, totpCode, totpUri } from "#server/auth/totp";

// RFC 6238 Appendix B, Table 1 (../shared/CHECK-VALUES.md, verified): 8 digits, 30-second steps,
// T0 = 0, one ASCII seed per hash — 20 bytes for SHA-1, 32 for SHA-256, 64 for SHA-512.
const SEEDS = {
  SHA1: "12345678901234567890",
  SHA256: "12345678901234567890123456789012",
  SHA512: "1234567890".repeat(7).slice(0, 64),
} as const;
const APPENDIX_B: ReadonlyArray<[seconds: number, sha1: string, sha256: string, sha512: string]> = [
  [59, "94287082", "46119246", "90693936"],
  [1111111109, "07081804", "68084774", "25091201"],
  [1111111111, "14050471", "67062674", "99943326"],
  [1234567890, "89005924", "91819424", "93441116"],
  [2000000000, "69279037", "90698825", "38618901"],
  [20000000000, "65353130", "77737706", "47863826"],
];
// RFC 4648 §6 of the 20-byte seed, as CHECK-VALUES.md gives it.
const SHA1_SEED_BASE32 = "GEZDGNBVGY3TQOJQGEZDGNBVGY3TQOJQ";

describe("TOTP against RFC 6238", () => {
  for (const [seconds, ...codes] of APPENDIX_B) {
    test(`the package computes RFC 6238 Appendix B's codes at T = ${seconds} s for SHA-1, SHA-256 and SHA-512`, () => {
      (["SHA1", "SHA256", "SHA512"] as const).forEach((algorithm, index) => {
        const totp = new TOTP({ algorithm, digits: 8, period: 30, secret: Secret.fromUTF8(SEEDS[algorithm]) });
        expect(totp.generate({ timestamp: seconds * 1000 })).toBe(codes[index]); // RFC 6238 Appendix B, Table 1
      });
    });
  }

  test("the SHA-1 seed's Base32 form is the one RFC 4648 gives, so our secrets reach the package as the appendix's bytes", () => {
    expect(Secret.fromUTF8(SEEDS.SHA1).base32).toBe(SHA1_SEED_BASE32); // RFC 4648 §6, CHECK-VALUES.md
  });

  test("our six-digit codes are the last six digits of the appendix's SHA-1 codes", () => {
    for (const [seconds, sha1] of APPENDIX_B) {
      expect(totpCode(SHA1_SEED_BASE32, seconds * 1000)).toBe(sha1.slice(-6)); // RFC 6238 Appendix B; RFC 4226 §5.3 (Digit = 6)
    }
  });

  test("the time step is floor(t / 30) from the Unix epoch", () => {
    expect(timeStepOf(59_000)).toBe(1); // RFC 6238 §4.2 and Appendix B (T = 0x01 at 59 s)
    expect(timeStepOf(1_111_111_109_000)).toBe(0x023523ec); // RFC 6238 Appendix B, Table 1
    expect(timeStepOf(20_000_000_000_000)).toBe(0x27bc86aa); // RFC 6238 Appendix B, Table 1
  });

  test("a code is accepted in its own step and one step either side, not two", () => {
    const at = 1_234_567_890_000;
    const code = totpCode(SHA1_SEED_BASE32, at); // "005924", RFC 6238 Appendix B
    const step = timeStepOf(at);
    expect(acceptedStep(SHA1_SEED_BASE32, code, at, null)).toBe(step);
    // RFC 6238 §5.2: at most one time step of network delay or drift is recommended.
    expect(acceptedStep(SHA1_SEED_BASE32, code, at - 30_000, null)).toBe(step);
    expect(acceptedStep(SHA1_SEED_BASE32, code, at + 30_000, null)).toBe(step);
    expect(acceptedStep(SHA1_SEED_BASE32, code, at - 60_000, null)).toBeNull();
    expect(acceptedStep(SHA1_SEED_BASE32, code, at + 60_000, null)).toBeNull();
  });

  test("a code once accepted is refused again, and so is an older one", () => {
    const at = 2_000_000_000_000;
    const code = totpCode(SHA1_SEED_BASE32, at);
    const step = acceptedStep(SHA1_SEED_BASE32, code, at, null);
    expect(step).not.toBeNull();
    // RFC 6238 §5.2: the verifier must not accept the second attempt of the same OTP.
    expect(acceptedStep(SHA1_SEED_BASE32, code, at + 5_000, step)).toBeNull();
    const previous = totpCode(SHA1_SEED_BASE32, at - 30_000);
    expect(acceptedStep(SHA1_SEED_BASE32, previous, at, step)).toBeNull();
    const next = totpCode(SHA1_SEED_BASE32, at + 30_000);
    expect(acceptedStep(SHA1_SEED_BASE32, next, at + 30_000, step)).toBe(step! + 1);
  });

  test("a wrong code, or text that is not six digits, is refused", () => {
    const at = 1_111_111_111_000;
    const right = totpCode(SHA1_SEED_BASE32, at);
    const wrong = String((Number(right) + 1) % 1_000_000).padStart(6, "0");
    expect(acceptedStep(SHA1_SEED_BASE32, wrong, at, null)).toBeNull();
    for (const text of ["", "12345", "1234567", "abcdef", `${right}x`]) expect(acceptedStep(SHA1_SEED_BASE32, text, at, null)).toBeNull();
    expect(acceptedStep(SHA1_SEED_BASE32, `${right.slice(0, 3)} ${right.slice(3)}`, at, null)).toBe(timeStepOf(at));
  });

  test("a new secret is 160 random bits in Base32, and its otpauth address names SHA-1, six digits and 30 seconds", () => {
    const secret = newTotpSecret();
    // RFC 4226 §4 R6: 160 bits recommended → 32 Base32 characters (RFC 4648 §6).
    expect(secret).toMatch(/^[A-Z2-7]{32}$/);
    expect(newTotpSecret()).not.toBe(secret);
    const uri = new URL(totpUri(secret, "mira@test.example"));
    expect(uri.protocol).toBe("otpauth:");
    expect(uri.searchParams.get("secret")).toBe(secret);
    // Key URI format as authenticator apps read it (common practice, no source beyond the format's own description).
    expect(uri.searchParams.get("algorithm")).toBe("SHA1");
    expect(uri.searchParams.get("digits")).toBe("6");
    expect(uri.searchParams.get("period")).toBe("30");
    expect(uri.searchParams.get("issuer")).toBe("Sallyport");
  });
});

describe("Recovery codes", () => {
  test("ten distinct codes of two groups of five, from an alphabet without look-alikes", () => {
    const codes = newRecoveryCodes();
    expect(codes).toHaveLength(RECOVERY_CODE_COUNT);
    expect(new Set(codes).size).toBe(codes.length);
    for (const code of codes) expect(code).toMatch(/^[a-hjkmnp-z2-9]{5}-[a-hjkmnp-z2-9]{5}$/);
  });

  test("a typed code is read without case, spaces or dashes; anything else is not a recovery code", () => {
    const [code] = newRecoveryCodes(1);
    const bare = code.replace("-", "");
    expect(normaliseRecoveryCode(code)).toBe(bare);
    expect(normaliseRecoveryCode(` ${code.toUpperCase()} `)).toBe(bare);
    expect(normaliseRecoveryCode(`${bare.slice(0, 3)} ${bare.slice(3)}`)).toBe(bare);
    for (const text of ["", "123456", "abcde-fghi", "abcde-fghij-k", "abcde-fghi1", "abcde-fghio"]) expect(normaliseRecoveryCode(text)).toBeNull();
  });
});

describe("Second-factor secrets at rest", () => {
  const keys = ["first key of at least sixteen", "second key of at least sixteen"];
  const userId = "5b0b7b8e-4f5e-4f0e-9d43-2f3c1d9a7e10";

  test("a sealed secret opens for its user with the key, and does not show the secret", () => {
    const secret = newTotpSecret();
    const sealed = sealSecret(secret, userId, keys);
    expect(sealed).not.toContain(secret);
    expect(sealed.startsWith("v1.")).toBe(true);
    expect(openSecret(sealed, userId, keys)).toBe(secret);
    // A fresh nonce per seal (NIST SP 800-38D §8.2): the same secret seals differently each time.
    expect(sealSecret(secret, userId, keys)).not.toBe(sealed);
  });

  test("it does not open for another user, with another key, or after a change", () => {
    const sealed = sealSecret("JBSWY3DPEHPK3PXP", userId, keys);
    expect(openSecret(sealed, "0d3c3f0e-9c1a-4a52-8f4e-1b2c3d4e5f60", keys)).toBeNull();
    expect(openSecret(sealed, userId, ["a different key of sixteen"])).toBeNull();
    const parts = sealed.split(".");
    const body = Buffer.from(parts[3], "base64url");
    body[0] ^= 1;
    expect(openSecret([...parts.slice(0, 3), body.toString("base64url")].join("."), userId, keys)).toBeNull();
    expect(openSecret("not sealed", userId, keys)).toBeNull();
  });

  test("after a key rotation the old key still opens what it sealed, and new seals use the new key", () => {
    const sealedBefore = sealSecret("JBSWY3DPEHPK3PXP", userId, [keys[0]]);
    const rotated = [keys[1], keys[0]];
    expect(openSecret(sealedBefore, userId, rotated)).toBe("JBSWY3DPEHPK3PXP");
    const sealedAfter = sealSecret("JBSWY3DPEHPK3PXP", userId, rotated);
    expect(openSecret(sealedAfter, userId, [keys[1]])).toBe("JBSWY3DPEHPK3PXP");
    expect(openSecret(sealedAfter, userId, [keys[0]])).toBeNull();
  });
});
