// What roles may do: the order and the descriptions. The words themselves live in
// models/roles.ts, below both the models and the server.
import { ROLES, type Role } from "#models/roles.ts";

export { isRole, ROLES, type Role } from "#models/roles.ts";

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
