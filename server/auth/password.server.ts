import argon2 from "argon2";
import { awayFromTurn } from "../http/admission.server.ts";

// OWASP Password Storage Cheat Sheet: argon2id, m = 19 MiB (19456 KiB), t = 2, p = 1.
export const ARGON2_OPTIONS = {
  type: argon2.argon2id,
  memoryCost: 19_456,
  timeCost: 2,
  parallelism: 1,
} as const;

// The hash runs on libuv's thread pool: the request gives its turn up meanwhile (server/http/admission.server.ts).
export async function hashPassword(password: string): Promise<string> {
  return awayFromTurn(() => argon2.hash(normalisePassword(password), ARGON2_OPTIONS));
}

export async function verifyPassword(hash: string, password: string): Promise<boolean> {
  try {
    return await awayFromTurn(() => argon2.verify(hash, normalisePassword(password)));
  } catch {
    return false;
  }
}

export function needsRehash(hash: string): boolean {
  return argon2.needsRehash(hash, ARGON2_OPTIONS);
}

// NIST SP 800-63B §5.1.1.2: Unicode in passwords should be normalised before hashing.
export function normalisePassword(password: string): string {
  return password.normalize("NFKC");
}

// A hash of a random password, verified against when the e-mail is unknown so that the
// response time does not tell which accounts exist.
let decoyHash: Promise<string> | undefined;
export function getDecoyHash(): Promise<string> {
  decoyHash ??= argon2.hash(`decoy-${Math.random()}-${Date.now()}`, ARGON2_OPTIONS);
  return decoyHash;
}
