// Organisation roles in increasing order of what they may do (PRODUCT.md §6); a role may do
// everything a lower one may. Pure data, so the models, the server and the pages share it.
// The database's CHECK constraints (migrations/20261201-0001-foundation.ts) list the same words.

export const ROLES = ["trainee", "reviewer", "engineer", "admin", "owner"] as const;
export type Role = (typeof ROLES)[number];

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}

/**
 * Who manages training (scenarios, lessons, drills, assignments): a member with the trainer
 * flag, whatever their role, or an admin or owner, who manage members and could give it to
 * themselves anyway (docs/decisions/016). Taking lessons and drills needs no capability.
 */
export const ROLES_THAT_TRAIN: readonly Role[] = ["admin", "owner"];

export function mayManageTraining(role: Role, trainerFlag: boolean): boolean {
  return trainerFlag || ROLES_THAT_TRAIN.includes(role);
}
