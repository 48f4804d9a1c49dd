// The words of API tokens (docs/decisions/014), pure data so the model, the services, the form
// schemas and the pages share one list; the database's CHECK constraints
// (migrations/20261205-0002-api-tokens.ts) list the same words.
import type { Role } from "./roles.ts";

export const API_TOKEN_KINDS = ["personal", "service"] as const;
export type ApiTokenKind = (typeof API_TOKEN_KINDS)[number];
/** "read" calls only the reading endpoints; "write" calls every endpoint its role allows. */
export const API_TOKEN_SCOPES = ["read", "write"] as const;
export type ApiTokenScope = (typeof API_TOKEN_SCOPES)[number];
/** Lifetimes offered when a token is made, in days; a token never lives longer than the last. */
export const TOKEN_LIFETIMES_DAYS = [7, 30, 90, 365] as const;
/** Roles a service token may act with: never owner (an owner's powers stay with people). */
export const SERVICE_TOKEN_ROLES = ["trainee", "reviewer", "engineer", "admin"] as const satisfies readonly Role[];
export type ServiceTokenRole = (typeof SERVICE_TOKEN_ROLES)[number];
/** The least role that makes and revokes the organisation's service tokens (and revokes members' tokens). */
export const SERVICE_TOKEN_ROLE: Role = "admin";
