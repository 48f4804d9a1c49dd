// Second-factor secrets at rest (docs/decisions/019): AES-256-GCM (NIST SP 800-38D) with a key
// derived by HKDF-SHA-256 (RFC 5869) from the server's secret, a fresh 96-bit nonce per seal, and
// the user's id as associated data so a sealed value copied to another user's row does not open.
import { createCipheriv, createDecipheriv, hkdfSync, randomBytes } from "node:crypto";
import { getSecondFactorKeySecrets } from "../config.server.ts";

const VERSION = "v1";
const HKDF_INFO = "sallyport second-factor secret v1";

function keysOf(secrets: readonly string[]): Buffer[] {
  return secrets.map((secret) => Buffer.from(hkdfSync("sha256", secret, "", HKDF_INFO, 32)));
}

/** Seals `plain` for `userId` with the first configured key: "v1.nonce.tag.ciphertext" in base64url. */
export function sealSecret(plain: string, userId: string, secrets = getSecondFactorKeySecrets()): string {
  const nonce = randomBytes(12);
  const cipher = createCipheriv("aes-256-gcm", keysOf(secrets)[0], nonce);
  cipher.setAAD(Buffer.from(userId));
  const body = Buffer.concat([cipher.update(plain, "utf8"), cipher.final()]);
  return [VERSION, nonce, cipher.getAuthTag(), body].map((part) => (typeof part === "string" ? part : part.toString("base64url"))).join(".");
}

/** Opens a sealed value with any configured key; null when none opens it (another key, another user, tampered). */
export function openSecret(sealed: string, userId: string, secrets = getSecondFactorKeySecrets()): string | null {
  const [version, nonce, tag, body] = sealed.split(".");
  if (version !== VERSION || !nonce || !tag || body === undefined) return null;
  for (const key of keysOf(secrets)) {
    try {
      const decipher = createDecipheriv("aes-256-gcm", key, Buffer.from(nonce, "base64url"));
      decipher.setAAD(Buffer.from(userId));
      decipher.setAuthTag(Buffer.from(tag, "base64url"));
      return Buffer.concat([decipher.update(Buffer.from(body, "base64url")), decipher.final()]).toString("utf8");
    } catch {
      // Not this key: try the next.
    }
  }
  return null;
}
