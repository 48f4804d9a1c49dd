import { Op, UniqueConstraintError } from "sequelize";
import { Device, DeviceRevision, SharedAddressObject, Site } from "#models/index.ts";
import type { ValidationIssue } from "../engine/index.ts";
import { ensureDatabase, getDatabase } from "../db/database.server.ts";
import {
  diffDocuments,
  effectiveDocument,
  summariseDocument,
  validateDocument,
  type DocumentChange,
  type ModelDocument,
  type SharedLibrary,
} from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

/** The model did not validate: every problem with its document path. */
export class InvalidModelError extends Error {
  constructor(readonly issues: readonly ValidationIssue[]) {
    super(issues.map((issue) => `${issue.path || "document"}: ${issue.message}`).join("; "));
  }
}

/** The edit was based on an older revision than the current one. */
export class RevisionConflictError extends Error {
  constructor(
    readonly baseNumber: number,
    readonly currentNumber: number,
    readonly changes: DocumentChange[],
    readonly author: string,
  ) {
    super(`This device changed since you opened it: revision ${currentNumber} by ${author || "someone"} replaced revision ${baseNumber}. Reload to see it, then apply your change again.`);
  }
}

export class DeviceNameTakenError extends Error {}

export class WorkspaceNotFoundError extends Error {}

export type DeviceRow = {
  id: string;
  name: string;
  siteId: string;
  siteName: string;
  revision: number;
  updatedAt: string;
  updatedBy: string;
  findingsBySeverity: Record<string, number>;
  worstOutsideOutcome: string | null;
};

export type DeviceWithRevision = { device: Device; revision: DeviceRevision; document: ModelDocument; shared: SharedLibrary; effective: ModelDocument };

function documentOf(revision: DeviceRevision): ModelDocument {
  return revision.document as unknown as ModelDocument;
}

export async function loadSharedLibrary(organisationId: string): Promise<SharedLibrary> {
  ensureDatabase();
  const objects = await SharedAddressObject.findAll({ where: { organisationId }, order: [["name", "ASC"]] });
  return {
    addresses: objects.filter((object) => object.kind === "address").map((object) => ({ name: object.name, entries: object.items })),
    addressGroups: objects.filter((object) => object.kind === "group").map((object) => ({ name: object.name, members: object.items })),
  };
}

export async function listDevices(organisationId: string): Promise<DeviceRow[]> {
  ensureDatabase();
  const devices = await Device.findAll({ where: { organisationId }, include: [{ model: Site, as: "site", required: true }], order: [["name", "ASC"]] });
  if (devices.length === 0) return [];
  const revisions = await DeviceRevision.findAll({
    where: { [Op.or]: devices.map((device) => ({ deviceId: device.id, number: device.currentRevisionNumber })) },
    attributes: ["deviceId", "summary", "authorEmail", "createdAt"],
  });
  const byDevice = new Map(revisions.map((revision) => [revision.deviceId, revision]));
  return devices.map((device) => {
    const revision = byDevice.get(device.id);
    return {
      id: device.id,
      name: device.name,
      siteId: device.siteId,
      siteName: device.site!.name,
      revision: device.currentRevisionNumber,
      updatedAt: (revision?.createdAt ?? device.updatedAt).toISOString(),
      updatedBy: revision?.authorEmail ?? "",
      findingsBySeverity: revision?.summary.findingsBySeverity ?? {},
      worstOutsideOutcome: revision?.summary.worstOutsideOutcome ?? null,
    };
  });
}

/** The device of this organisation with its current (or a given) revision; null when there is none. */
export async function findDevice(organisationId: string, deviceId: string, revisionNumber?: number): Promise<DeviceWithRevision | null> {
  ensureDatabase();
  if (!/^[0-9a-f-]{36}$/i.test(deviceId)) return null;
  const device = await Device.findOne({ where: { id: deviceId, organisationId }, include: [{ model: Site, as: "site" }] });
  if (!device) return null;
  const revision = await DeviceRevision.findOne({ where: { deviceId, number: revisionNumber ?? device.currentRevisionNumber } });
  if (!revision) return null;
  const document = documentOf(revision);
  return { device, revision, document, shared: revision.sharedObjects, effective: effectiveDocument(document, revision.sharedObjects) };
}

export async function listRevisions(deviceId: string): Promise<Array<{ number: number; message: string; authorEmail: string; createdAt: string }>> {
  ensureDatabase();
  const revisions = await DeviceRevision.findAll({ where: { deviceId }, order: [["number", "DESC"]], attributes: ["number", "message", "authorEmail", "createdAt"] });
  return revisions.map((revision) => ({ number: revision.number, message: revision.message, authorEmail: revision.authorEmail, createdAt: revision.createdAt.toISOString() }));
}

async function assertSiteOfOrganisation(organisationId: string, siteId: string): Promise<Site> {
  const site = /^[0-9a-f-]{36}$/i.test(siteId) ? await Site.findOne({ where: { id: siteId, organisationId } }) : null;
  if (!site) throw new WorkspaceNotFoundError("No such site in this organisation.");
  return site;
}

/** Creates a device with its first revision from a document (validated with the organisation's shared objects). */
export async function createDevice(organisationId: string, siteId: string, input: unknown, actor: AuditActor, message: string): Promise<Device> {
  ensureDatabase();
  await assertSiteOfOrganisation(organisationId, siteId);
  const validated = validateDocument(input, await loadSharedLibrary(organisationId));
  if (!validated.ok) throw new InvalidModelError(validated.errors);
  const summary = summariseDocument(validated.effective);
  try {
    const device = await getDatabase().transaction(async (transaction) => {
      const created = await Device.create({ organisationId, siteId, name: validated.document.device.name, currentRevisionNumber: 1 }, { transaction });
      await DeviceRevision.create(
        { deviceId: created.id, number: 1, document: validated.document as unknown as Record<string, unknown>, sharedObjects: validated.shared, summary, message, authorUserId: actor.userId, authorEmail: actor.email },
        { transaction },
      );
      return created;
    });
    await recordAuditEvent(actor, { organisationId, action: "device.created", targetType: "device", targetId: device.id, changes: { name: device.name, revision: 1, message } });
    return device;
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new DeviceNameTakenError(`A device named "${validated.document.device.name}" exists already in this organisation.`);
    throw error;
  }
}

/**
 * Applies an edit to the current document and saves the result as a new revision — only if
 * the user's view was the current revision (optimistic concurrency: never a silent overwrite).
 */
export async function saveEdit(
  organisationId: string,
  deviceId: string,
  baseNumber: number,
  edit: (document: ModelDocument) => unknown,
  actor: AuditActor,
  message: string,
  options: { siteId?: string } = {},
): Promise<{ number: number; changes: DocumentChange[] }> {
  ensureDatabase();
  if (options.siteId) await assertSiteOfOrganisation(organisationId, options.siteId);
  const library = await loadSharedLibrary(organisationId);
  try {
    const result = await getDatabase().transaction(async (transaction) => {
      const device = await Device.findOne({ where: { id: deviceId, organisationId }, transaction, lock: transaction.LOCK.UPDATE });
      if (!device) throw new WorkspaceNotFoundError("No such device in this organisation.");
      const current = await DeviceRevision.findOne({ where: { deviceId, number: device.currentRevisionNumber }, transaction });
      if (!current) throw new WorkspaceNotFoundError("The device has no revision.");
      const currentEffective = effectiveDocument(documentOf(current), current.sharedObjects);
      if (baseNumber !== device.currentRevisionNumber) {
        const base = await DeviceRevision.findOne({ where: { deviceId, number: baseNumber }, transaction });
        const changes = base ? diffDocuments(effectiveDocument(documentOf(base), base.sharedObjects), currentEffective) : [];
        throw new RevisionConflictError(baseNumber, device.currentRevisionNumber, changes, current.authorEmail);
      }
      const validated = validateDocument(edit(documentOf(current)), library);
      if (!validated.ok) throw new InvalidModelError(validated.errors);
      const changes = diffDocuments(currentEffective, validated.effective);
      if (changes.length === 0 && !options.siteId) return { number: device.currentRevisionNumber, changes };
      const number = device.currentRevisionNumber + 1;
      await DeviceRevision.create(
        {
          deviceId,
          number,
          document: validated.document as unknown as Record<string, unknown>,
          sharedObjects: validated.shared,
          summary: summariseDocument(validated.effective),
          message,
          authorUserId: actor.userId,
          authorEmail: actor.email,
        },
        { transaction },
      );
      await device.update({ currentRevisionNumber: number, name: validated.document.device.name, ...(options.siteId ? { siteId: options.siteId } : {}) }, { transaction });
      return { number, changes };
    });
    if (result.changes.length > 0 || options.siteId) {
      await recordAuditEvent(actor, {
        organisationId,
        action: "device.revised",
        targetType: "device",
        targetId: deviceId,
        changes: { revision: result.number, message, changes: result.changes.map((change) => `${change.section}: ${change.change} ${change.element}`).slice(0, 50) },
      });
    }
    return result;
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new DeviceNameTakenError("Another device of this organisation already has that name.");
    throw error;
  }
}

export async function deleteDevice(organisationId: string, deviceId: string, actor: AuditActor): Promise<boolean> {
  ensureDatabase();
  const device = await Device.findOne({ where: { id: deviceId, organisationId } });
  if (!device) return false;
  await device.destroy();
  await recordAuditEvent(actor, { organisationId, action: "device.deleted", targetType: "device", targetId: deviceId, changes: { name: device.name, lastRevision: device.currentRevisionNumber } });
  return true;
}
