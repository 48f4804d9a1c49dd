import { createHash, randomBytes, timingSafeEqual } from "node:crypto";

/** A URL-safe random token (256 bits) for sessions, password resets and invitations. */
export function createToken(): string {
  return randomBytes(32).toString("base64url");
}

/** Tokens are stored only as SHA-256 hashes, so a database leak does not hand out sessions or links. */
export function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

export function tokensEqual(a: string, b: string): boolean {
  const left = Buffer.from(a);
  const right = Buffer.from(b);
  return left.length === right.length && timingSafeEqual(left, right);
}
