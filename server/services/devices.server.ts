import { UniqueConstraintError, type Transaction } from "sequelize";
import { getDatabase } from "../db/database.server.ts";
import { Device, DeviceRevision, SharedAddressObject, Site, type RevisionSummaryRecord } from "#models/index.ts";
import { deviceRevisions, type DeviceAtRevision, type FleetRecord, type FleetSummary } from "../devices/index.ts";
import { revisionAnalysisQueue } from "../jobs/revision-analysis.server.ts";
import { emptySeverityCounts, type ValidationIssue } from "../engine/index.ts";
import type { AuditAction } from "#models/audit-actions.ts";
import { Refusal } from "../errors.ts";
import { isUuid } from "../validation/ids.ts";
import { hasAtLeastRole, type Role } from "../auth/roles.ts";
import { WRITTEN_REASON_MIN } from "../proposals/state.ts";
import { countElements, diffDocuments, effectiveDocument, validateDocument, type DocumentChange, type ModelDocument, type SharedLibrary } from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { lockSharedLibrary } from "./shared-library-lock.server.ts";
import { createSite, type SiteInput } from "./sites.server.ts";

/**
 * The model did not validate: every problem with its document path. When every problem is in one
 * device setting (a new device's time zone, say), the message belongs beside that field.
 */
export function invalidModel(issues: readonly ValidationIssue[], lead = "Not saved: the model would not be valid.", tooLarge = false): Refusal {
  const settings = new Set(issues.map((issue) => /^device\.(\w+)$/.exec(issue.path)?.[1] ?? null));
  const field = settings.size === 1 ? [...settings][0] ?? undefined : undefined;
  return new Refusal(`${lead} ${issues.map((issue) => `${issue.path || "document"}: ${issue.message}`).join(" · ")}`, tooLarge ? 413 : 400, { issues, field });
}

/** The edit was based on an older revision than the current one. */
function revisionConflict(baseNumber: number, currentNumber: number, changes: DocumentChange[], author: string): Refusal {
  return new Refusal(
    `This device changed since you opened it: revision ${currentNumber} by ${author || "someone"} replaced revision ${baseNumber}. Reload to see it, then apply your change again.`,
    409,
    { conflict: { currentNumber, changes } },
  );
}

export type DeviceRow = {
  id: string;
  name: string;
  siteId: string;
  siteName: string;
  revision: number;
  updatedAt: string;
  updatedBy: string;
  /** True while the background analysis of a large current revision runs: the figures below are not known yet. */
  analysing: boolean;
  findingsBySeverity: Record<string, number>;
  worstOutsideOutcome: string | null;
};

export async function loadSharedLibrary(organisationId: string, transaction?: Transaction): Promise<SharedLibrary> {
  const objects = await SharedAddressObject.findAll({ where: { organisationId }, order: [["name", "ASC"]], transaction });
  return {
    addresses: objects.filter((object) => object.kind === "address").map((object) => ({ name: object.name, entries: object.items })),
    addressGroups: objects.filter((object) => object.kind === "group").map((object) => ({ name: object.name, members: object.items })),
  };
}

/**
 * The organisation's devices with their current revision's stored fleet summary (one short query:
 * no document, no findings). With `wait: false` (the fleet page) a large revision whose background
 * analysis has not finished is not analysed here: its row says `analysing` (and its job is queued
 * again, in case it was lost), and the page looks again shortly; small ones are computed at once.
 * The API waits (`wait: true`) for every answer. Each row comes with its stored record, for the
 * caller that adjusts the counts (fleetDeviceRows).
 */
export async function listDevices(organisationId: string, options: { wait?: boolean } = {}): Promise<Array<{ row: DeviceRow; record: FleetRecord }>> {
  const records = await deviceRevisions.fleetRecords(organisationId);
  const pending = options.wait === false ? records.filter((record) => deviceRevisions.awaitsAnalysis(record)) : [];
  for (const record of pending) requeueAnalysis(record.revisionId);
  const waiting = new Set(pending.map((record) => record.revisionId));
  const computed = await deviceRevisions.summariesByRevisionId(records.filter((record) => !record.summary && !waiting.has(record.revisionId)).map((record) => record.revisionId));
  return records.map((record) => {
    const summary = record.summary ?? computed.get(record.revisionId);
    const row: DeviceRow = {
      id: record.deviceId,
      name: record.name,
      siteId: record.siteId,
      siteName: record.siteName,
      revision: record.revisionNumber,
      updatedAt: record.createdAt.toISOString(),
      updatedBy: record.authorEmail,
      analysing: !summary,
      findingsBySeverity: summary?.findingsBySeverity ?? emptySeverityCounts(),
      worstOutsideOutcome: summary?.worstOutsideOutcome ?? null,
    };
    return { row, record };
  });
}

/** When each revision was last queued again by a page, so a page looked at every few seconds does not queue its jobs every time. */
const requeued = new Map<string, number>();
const REQUEUE_AFTER_MS = 60_000;

/** Queues the analysis of a revision the fleet found unanalysed again (the job may have been lost), at most once a minute. */
function requeueAnalysis(revisionId: string): void {
  const now = Date.now();
  if ((requeued.get(revisionId) ?? -Infinity) > now - REQUEUE_AFTER_MS) return;
  if (requeued.size > 10_000) requeued.clear();
  requeued.set(revisionId, now);
  revisionAnalysisQueue.enqueue(revisionId);
}

/** The organisation's devices' ids, names and current revision numbers, by name (no analysis). */
export async function listDeviceNames(organisationId: string): Promise<Array<{ id: string; name: string; revision: number }>> {
  const devices = await Device.findAll({ where: { organisationId }, attributes: ["id", "name", "currentRevisionNumber"], order: [["name", "ASC"]] });
  return devices.map((device) => ({ id: device.id, name: device.name, revision: device.currentRevisionNumber }));
}

/** The engine's summary of the revision for the pages (stored by the background analysis, or computed now). */
export async function fleetSummaryOf(found: DeviceAtRevision): Promise<FleetSummary> {
  const [summary] = await deviceRevisions.summariesOf([found.revision]);
  return summary;
}

/** The device of this organisation at its current (or a given) revision; null when there is none. */
export async function findDevice(organisationId: string, deviceId: string, revisionNumber?: number): Promise<DeviceAtRevision | null> {
  return deviceRevisions.find(organisationId, deviceId, { revisionNumber });
}

export async function listRevisions(deviceId: string): Promise<Array<{ number: number; message: string; authorEmail: string; createdAt: string }>> {
  const revisions = await deviceRevisions.history(deviceId);
  return revisions.map((revision) => ({ number: revision.number, message: revision.message, authorEmail: revision.authorEmail, createdAt: revision.createdAt.toISOString() }));
}

async function assertSiteOfOrganisation(organisationId: string, siteId: string): Promise<Site> {
  const site = isUuid(siteId) ? await Site.findOne({ where: { id: siteId, organisationId } }) : null;
  if (!site) throw new Refusal("No such site in this organisation.", 404, { field: "siteId" });
  return site;
}

/** What a revision records at save time: element counts. The engine's analysis follows in the background. */
function countsOf(document: ModelDocument, shared: SharedLibrary): RevisionSummaryRecord {
  return { counts: countElements(effectiveDocument(document, shared)) };
}

/**
 * Whether a device name is taken in this organisation, and a free one to offer instead: the
 * first free one of name-2, name-3 … (kept within 63 characters). The import preview offers it.
 */
export async function deviceNameChoice(organisationId: string, name: string): Promise<{ taken: { id: string; revision: number } | null; free: string }> {
  const devices = await Device.findAll({ where: { organisationId }, attributes: ["id", "name", "currentRevisionNumber"] });
  const names = new Set(devices.map((device) => device.name));
  const same = devices.find((device) => device.name === name);
  if (!same) return { taken: null, free: name };
  for (let number = 2; ; number += 1) {
    const suffix = `-${number}`;
    const candidate = `${name.slice(0, 63 - suffix.length)}${suffix}`;
    if (!names.has(candidate)) return { taken: { id: same.id, revision: same.currentRevisionNumber }, free: candidate };
  }
}

function nameTaken(name: string): Refusal {
  return new Refusal(`A device named "${name}" exists already in this organisation.`, 409, { field: "name" });
}

/**
 * Where a new device goes: a site of the organisation (its id), or a new site created with the
 * device in one transaction — an organisation's first device need not wait for a visit to the
 * sites page (docs/decisions/008). A taken site name is refused beside `field`.
 */
export type DeviceSite = string | { newSite: SiteInput; field: string };

/** Creates a device with its first revision from a document (validated with the organisation's shared objects). */
export async function createDevice(organisationId: string, site: DeviceSite, input: unknown, actor: AuditActor, message: string): Promise<Device> {
  if (typeof site === "string") await assertSiteOfOrganisation(organisationId, site);
  let name = "";
  try {
    const { device, revisionId } = await getDatabase().transaction(async (transaction) => {
      // The library as no concurrent shared-object change is replacing it (shared-library-lock.server.ts).
      await lockSharedLibrary(transaction, organisationId, "read");
      const validated = validateDocument(input, await loadSharedLibrary(organisationId, transaction));
      if (!validated.ok) throw invalidModel(validated.errors, "The document is not a valid Sallyport model.", validated.tooLarge);
      name = validated.document.device.name;
      const summary = countsOf(validated.document, validated.shared);
      // A refused site name rolls the whole transaction back: no site without its device.
      const siteId = typeof site === "string" ? site : (await createSite(organisationId, site.newSite, actor, { transaction, field: site.field })).id;
      const created = await Device.create({ organisationId, siteId, name: validated.document.device.name, currentRevisionNumber: 1 }, { transaction });
      const revision = await DeviceRevision.create(
        { deviceId: created.id, number: 1, document: validated.document, sharedObjects: validated.shared, summary, message, authorUserId: actor.userId, authorEmail: actor.email },
        { transaction },
      );
      await recordAuditEvent(actor, { organisationId, action: "device.created", targetType: "device", targetId: created.id, changes: { name: created.name, revision: 1, message } }, transaction);
      return { device: created, revisionId: revision.id };
    });
    revisionAnalysisQueue.enqueue(revisionId);
    return device;
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw nameTaken(name);
    throw error;
  }
}

/**
 * Writes the next revision of a device read with its row locked in this transaction, moves the
 * device to it and records it in the audit log, in the same transaction. The caller enqueues
 * the background analysis of `revisionId` once the transaction has committed.
 */
export async function writeRevision(
  organisationId: string,
  current: DeviceAtRevision,
  validated: { document: ModelDocument; shared: SharedLibrary },
  changes: readonly DocumentChange[],
  actor: AuditActor,
  message: string,
  transaction: Transaction,
  options: { siteId?: string; audit?: Record<string, unknown> } = {},
): Promise<{ number: number; revisionId: string }> {
  const deviceId = current.device.id;
  const number = current.revision.number + 1;
  const summary = countsOf(validated.document, validated.shared);
  const revision = await DeviceRevision.create(
    { deviceId, number, document: validated.document, sharedObjects: validated.shared, summary, message, authorUserId: actor.userId, authorEmail: actor.email },
    { transaction },
  );
  await current.device.update({ currentRevisionNumber: number, name: validated.document.device.name, ...(options.siteId ? { siteId: options.siteId } : {}) }, { transaction });
  await recordAuditEvent(
    actor,
    {
      organisationId,
      action: "device.revised",
      targetType: "device",
      targetId: deviceId,
      changes: { revision: number, message, changes: changes.map((change) => `${change.section}: ${change.change} ${change.element}`).slice(0, 50), ...options.audit },
    },
    transaction,
  );
  return { number, revisionId: revision.id };
}

/** What a save guard asks to record beside the revision it let through (an override, say). */
export type SaveGuardNote = { action: AuditAction; changes: Record<string, unknown> };

/**
 * Judges a direct save inside its transaction, on the exact documents that will be saved:
 * refuses by throwing a Refusal, or lets it through, with a note for the audit log or none.
 * It may read more (the device's expectations) in the save's transaction.
 */
export type SaveGuard = (
  current: DeviceAtRevision,
  validated: { document: ModelDocument; shared: SharedLibrary; effective: ModelDocument },
  transaction: Transaction,
) => SaveGuardNote | null | Promise<SaveGuardNote | null>;

/**
 * Applies an edit to the current document and saves the result as a new revision — only if
 * the user's view was the current revision (optimistic concurrency: never a silent overwrite),
 * and only if the guard (when given) lets it through.
 */
export async function saveEdit(
  organisationId: string,
  deviceId: string,
  baseNumber: number,
  edit: (document: ModelDocument) => unknown,
  actor: AuditActor,
  message: string,
  options: { siteId?: string; guard?: SaveGuard } = {},
): Promise<{ number: number; changes: DocumentChange[]; note: SaveGuardNote | null }> {
  // Checked here as well as in the routes: a NaN or 1e309 would otherwise reach SQL.
  if (!Number.isSafeInteger(baseNumber) || baseNumber < 1) throw new Refusal("The revision this change is based on is missing or not a whole number; reload the page and try again.", 400, { field: "baseRevision" });
  if (options.siteId) await assertSiteOfOrganisation(organisationId, options.siteId);
  try {
    const result = await getDatabase().transaction(async (transaction) => {
      // The library as no concurrent shared-object change is replacing it (shared-library-lock.server.ts).
      await lockSharedLibrary(transaction, organisationId, "read");
      const library = await loadSharedLibrary(organisationId, transaction);
      const current = await deviceRevisions.find(organisationId, deviceId, { transaction, lock: true });
      if (!current) throw new Refusal("No such device in this organisation.", 404);
      const currentNumber = current.revision.number;
      if (baseNumber !== currentNumber) {
        const base = await deviceRevisions.find(organisationId, deviceId, { revisionNumber: baseNumber, transaction });
        const changes = base ? diffDocuments(base.effective, current.effective) : [];
        throw revisionConflict(baseNumber, currentNumber, changes, current.revision.authorEmail);
      }
      const validated = validateDocument(edit(current.document), library);
      if (!validated.ok) throw invalidModel(validated.errors, undefined, validated.tooLarge);
      const changes = diffDocuments(current.effective, validated.effective);
      if (changes.length === 0 && !options.siteId) return { number: currentNumber, changes, saved: null, note: null };
      const note = options.guard ? await options.guard(current, validated, transaction) : null;
      const saved = await writeRevision(organisationId, current, validated, changes, actor, message, transaction, { siteId: options.siteId });
      if (note) await recordAuditEvent(actor, { organisationId, action: note.action, targetType: "device", targetId: deviceId, changes: { revision: saved.number, message, ...note.changes } }, transaction);
      return { number: saved.number, changes, saved, note };
    });
    if (result.saved) revisionAnalysisQueue.enqueue(result.saved.revisionId);
    return { number: result.number, changes: result.changes, note: result.note };
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new Refusal("Another device of this organisation already has that name.", 409, { field: "name" });
    throw error;
  }
}

/** Who deletes, under which change policy, and (for an admin's break-glass deletion) why. */
export type DeletionPolicy = { changesThroughProposals: boolean; role: Role; breakGlassReason?: string };

/**
 * Deletes a device and its revisions (its proposals go with it: docs/decisions/010). When the
 * organisation's changes go through proposals, only an admin's break-glass deletion with a
 * written reason is allowed (403 otherwise, with the reason in words), and it is audited as such
 * beside the deletion itself.
 */
export async function deleteDevice(organisationId: string, deviceId: string, actor: AuditActor, policy?: DeletionPolicy): Promise<boolean> {
  let breakGlass = "";
  if (policy?.changesThroughProposals) {
    if (!hasAtLeastRole(policy.role, "admin")) throw new Refusal("Not deleted: in this organisation changes go through proposals, and deleting a device cannot be proposed. Ask an admin, who can delete it in an emergency (break-glass) with a written reason.", 403);
    const reason = policy.breakGlassReason?.trim() ?? "";
    if (!reason) throw new Refusal("Not deleted: in this organisation changes go through proposals. As an admin you can delete it in an emergency (break-glass), with a written reason.", 403, { field: "breakGlassReason" });
    if (reason.length < WRITTEN_REASON_MIN) throw new Refusal(`A break-glass deletion needs a written reason of at least ${WRITTEN_REASON_MIN} characters, so the next reader knows why.`, 400, { field: "breakGlassReason" });
    breakGlass = reason;
  }
  return getDatabase().transaction(async (transaction) => {
    const device = await Device.findOne({ where: { id: deviceId, organisationId }, transaction });
    if (!device) return false;
    await device.destroy({ transaction });
    const facts = { name: device.name, lastRevision: device.currentRevisionNumber };
    await recordAuditEvent(actor, { organisationId, action: "device.deleted", targetType: "device", targetId: deviceId, changes: facts }, transaction);
    if (breakGlass) await recordAuditEvent(actor, { organisationId, action: "device.break-glass-deleted", targetType: "device", targetId: deviceId, changes: { ...facts, reason: breakGlass } }, transaction);
    return true;
  });
}
