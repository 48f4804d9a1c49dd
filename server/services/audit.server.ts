import type { Transaction } from "sequelize";
import { AuditEvent } from "#models/index.ts";

export type AuditActor = { userId: string | null; email: string; clientAddress: string };

export type AuditEntry = {
  organisationId: string | null;
  action: string;
  targetType: string;
  targetId?: string;
  /** What changed, as { field: { from, to } } or a short description of the values. */
  changes?: Record<string, unknown>;
};

/**
 * Appends one line to the audit log; the table refuses updates and deletes. Pass the change's
 * transaction so the entry and the change are written together or not at all.
 */
export async function recordAuditEvent(actor: AuditActor, entry: AuditEntry, transaction?: Transaction): Promise<void> {
  await AuditEvent.create({
    organisationId: entry.organisationId,
    actorUserId: actor.userId,
    actorEmail: actor.email,
    action: entry.action,
    targetType: entry.targetType,
    targetId: entry.targetId ?? "",
    changes: entry.changes ?? {},
    clientAddress: actor.clientAddress.slice(0, 64),
  }, { transaction });
}

export async function listAuditEvents(organisationId: string, limit = 200): Promise<AuditEvent[]> {
  return AuditEvent.findAll({ where: { organisationId }, order: [["id", "DESC"]], limit });
}
