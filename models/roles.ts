// Organisation roles in increasing order of what they may do (PRODUCT.md §6); a role may do
// everything a lower one may. Pure data, so the models, the server and the pages share it.
// The database's CHECK constraints (migrations/20261201-0001-foundation.ts) list the same words.

export const ROLES = ["trainee", "reviewer", "engineer", "admin", "owner"] as const;
export type Role = (typeof ROLES)[number];

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}
