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
  reviewer: "Reads everything; reviews and approves change proposals; confirms dismissals of high and critical findings.",
  engineer: "Edits devices, sites and proposals.",
  admin: "Manages members, invitations and shared objects.",
  owner: "Everything, including organisation settings and other owners.",
};

/**
 * The least role that reads change proposals — their page, effect and change record, and the
 * trace of a probe on their draft: every member (docs/decisions/010; proposals are how a team
 * learns its changes). The guards of those routes read this one value.
 */
export const PROPOSAL_READ_ROLE: Role = "trainee";

/**
 * The least role of each page that not every member may open. The page's guard and every
 * link to it read this one table, so a member is never offered a page that refuses them.
 */
export const PAGE_ROLES = {
  auditLog: "reviewer",
  newDevice: "engineer",
  importModel: "engineer",
  proposeChange: "engineer",
  /** The organisation's API tokens: service tokens made and revoked, members' tokens revoked (models/api-token-words.ts). */
  apiTokens: "admin",
} as const satisfies Record<string, Role>;
