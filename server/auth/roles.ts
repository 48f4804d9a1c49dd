// Roles in increasing order of what they may do; a role may do everything a lower one may.
export const ROLES = ["trainee", "reviewer", "engineer", "admin", "owner"] as const;
export type Role = (typeof ROLES)[number];

export function roleRank(role: Role): number {
  return ROLES.indexOf(role);
}

export function hasAtLeastRole(role: Role, minimum: Role): boolean {
  return roleRank(role) >= roleRank(minimum);
}

export const ROLE_DESCRIPTIONS: Record<Role, string> = {
  trainee: "Reads devices and findings; takes walkthroughs and drills.",
  reviewer: "Reads everything; reviews and approves proposals.",
  engineer: "Edits devices, sites and proposals.",
  admin: "Manages members, invitations and shared objects.",
  owner: "Everything, including organisation settings and other owners.",
};

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}
