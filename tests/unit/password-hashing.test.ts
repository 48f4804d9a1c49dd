import argon2 from "argon2";
import { describe, expect, test } from "vitest";
import { ARGON2_OPTIONS, hashPassword, verifyPassword } from "#server/auth/password.server";

describe("Password hashing", () => {
  // RFC 9106 §5.3 argon2id test vector: the library computes argon2id as specified.
  test("argon2 reproduces the RFC 9106 §5.3 argon2id test vector", async () => {
    const tag = await argon2.hash(Buffer.alloc(32, 0x01), {
      type: argon2.argon2id,
      salt: Buffer.alloc(16, 0x02),
      secret: Buffer.alloc(8, 0x03),
      associatedData: Buffer.alloc(12, 0x04),
      memoryCost: 32,
      timeCost: 3,
      parallelism: 4,
      hashLength: 32,
      raw: true,
    });
    expect(tag.toString("hex")).toBe("0d640df58d78766c08c037a34a8b53c9d01ef0452d75b65eb52520e96b01e659");
  });

  // OWASP Password Storage Cheat Sheet: argon2id with at least m = 19 MiB, t = 2, p = 1.
  test("Our parameters meet the OWASP minimum for argon2id", () => {
    expect(ARGON2_OPTIONS.type).toBe(argon2.argon2id);
    expect(ARGON2_OPTIONS.memoryCost).toBeGreaterThanOrEqual(19_456);
    expect(ARGON2_OPTIONS.timeCost).toBeGreaterThanOrEqual(2);
    expect(ARGON2_OPTIONS.parallelism).toBe(1);
  });

  test("A hash records argon2id and its parameters, and verifies only the right password", async () => {
    const hash = await hashPassword("correct lantern harbour stone");
    expect(hash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(await verifyPassword(hash, "correct lantern harbour stone")).toBe(true);
    expect(await verifyPassword(hash, "correct lantern harbour ston")).toBe(false);
  });

  // NIST SP 800-63B §5.1.1.2: no truncation; Unicode normalised before hashing.
  test("Long passwords are not truncated and Unicode forms are normalised", async () => {
    const long = "w".repeat(100) + "end";
    const hash = await hashPassword(long);
    expect(await verifyPassword(hash, "w".repeat(100) + "enD")).toBe(false);
    const composed = await hashPassword("caf\u00e9 au lait avec du pain");
    expect(await verifyPassword(composed, "cafe\u0301 au lait avec du pain")).toBe(true);
  });
});
