import type { OrganisationAccess } from "../auth/guard.server.ts";
import type { AuditActor } from "../services/audit.server.ts";

/** The audit actor for a guarded request. */
export function actorOf(access: OrganisationAccess, clientAddress: string): AuditActor & { role: OrganisationAccess["role"]; name: string } {
  return { userId: access.user.id, email: access.user.email, name: access.user.name, clientAddress, role: access.role };
}
