import { Op, UniqueConstraintError } from "sequelize";
import { Device, DeviceRevision, FindingDismissal, Site } from "#models/index.ts";
import { ensureDatabase } from "../db/database.server.ts";
import { compiledRevision } from "../analysis/compiled-revisions.server.ts";
import { emptySeverityCounts, findingKey, findings, isSeverity, type Finding, type SeverityCounts } from "../engine/index.ts";
import { effectiveDocument, type ModelDocument } from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import type { DeviceWithRevision } from "./devices.server.ts";

/** A dismissal as the pages show it. */
export type DismissalView = {
  reason: string;
  by: string;
  at: string;
  /** Revision, severity and title when it was dismissed. */
  revisionNumber: number;
  severityThen: string;
  titleThen: string;
};

/** One finding of a device's current revision, with its stable key and dismissal state. */
export type FindingView = {
  key: string;
  code: string;
  severity: string;
  title: string;
  detail: string;
  elements: string[];
  source: string;
  dismissal: DismissalView | null;
};

export type FleetFindingRow = FindingView & { deviceId: string; deviceName: string; siteId: string; siteName: string; revision: number; dismissed: boolean };

/** A refused dismiss or restore, with the HTTP status the action answers. */
export class FindingActionError extends Error {
  constructor(
    message: string,
    readonly status: 404 | 409,
  ) {
    super(message);
  }
}

// Revisions are immutable (a trigger refuses updates), so a revision's findings never
// change: memoising them by revision id is always correct. This keeps the fleet page
// cheap for demo-sized fleets; for large fleets the next step is storing findings per
// revision when it is saved, as the summary already is.
const MEMO_LIMIT = 2000;
const findingsByRevision = new Map<string, readonly Finding[]>();

function findingsOfRevision(revisionId: string, effective: () => ModelDocument): readonly Finding[] {
  const known = findingsByRevision.get(revisionId);
  if (known) return known;
  const computed = findings(compiledRevision(revisionId, effective));
  if (findingsByRevision.size >= MEMO_LIMIT) findingsByRevision.delete(findingsByRevision.keys().next().value as string);
  findingsByRevision.set(revisionId, computed);
  return computed;
}

function viewOf(finding: Finding, dismissal: FindingDismissal | undefined): FindingView {
  return {
    key: findingKey(finding),
    code: finding.code,
    severity: finding.severity,
    title: finding.title,
    detail: finding.detail,
    elements: [...finding.elements],
    source: finding.source,
    dismissal: dismissal
      ? {
          reason: dismissal.reason,
          by: dismissal.dismissedByEmail,
          at: dismissal.dismissedAt.toISOString(),
          revisionNumber: dismissal.revisionNumber,
          severityThen: dismissal.severity,
          titleThen: dismissal.title,
        }
      : null,
  };
}

/** Standing (not restored) dismissals of these devices, by device id then finding key. */
async function standingDismissals(where: { organisationId: string } | { deviceId: string }): Promise<Map<string, Map<string, FindingDismissal>>> {
  const rows = await FindingDismissal.findAll({ where: { ...where, restoredAt: { [Op.is]: null } } });
  const byDevice = new Map<string, Map<string, FindingDismissal>>();
  for (const row of rows) {
    const keys = byDevice.get(row.deviceId) ?? new Map<string, FindingDismissal>();
    keys.set(row.findingKey, row);
    byDevice.set(row.deviceId, keys);
  }
  return byDevice;
}

/** The findings of the device's revision in hand (normally the current one), with dismissal state. */
export async function deviceFindings(found: DeviceWithRevision): Promise<FindingView[]> {
  ensureDatabase();
  const dismissals = (await standingDismissals({ deviceId: found.device.id })).get(found.device.id);
  return findingsOfRevision(found.revision.id, () => found.effective).map((finding) => viewOf(finding, dismissals?.get(findingKey(finding))));
}

export type UnmatchedDismissal = { key: string; code: string; title: string; reason: string; by: string; at: string; revisionNumber: number };

/**
 * Standing dismissals of the device that no finding of this revision matches (a later change
 * fixed it, or changed its elements). They would apply again if the same finding came back, so
 * the overview lists them where they can be withdrawn.
 */
export async function unmatchedDismissals(found: DeviceWithRevision): Promise<UnmatchedDismissal[]> {
  ensureDatabase();
  const current = new Set(findingsOfRevision(found.revision.id, () => found.effective).map((finding) => findingKey(finding)));
  const standing = (await standingDismissals({ deviceId: found.device.id })).get(found.device.id) ?? new Map<string, FindingDismissal>();
  return [...standing.values()]
    .filter((dismissal) => !current.has(dismissal.findingKey))
    .map((dismissal) => ({
      key: dismissal.findingKey,
      code: dismissal.code,
      title: dismissal.title,
      reason: dismissal.reason,
      by: dismissal.dismissedByEmail,
      at: dismissal.dismissedAt.toISOString(),
      revisionNumber: dismissal.revisionNumber,
    }));
}

type CurrentRevision = { device: Device; revision: DeviceRevision };

async function currentRevisions(organisationId: string): Promise<CurrentRevision[]> {
  const devices = await Device.findAll({ where: { organisationId }, include: [{ model: Site, as: "site", required: true }], order: [["name", "ASC"]] });
  if (devices.length === 0) return [];
  const revisions = await DeviceRevision.findAll({ where: { [Op.or]: devices.map((device) => ({ deviceId: device.id, number: device.currentRevisionNumber })) } });
  const byDevice = new Map(revisions.map((revision) => [revision.deviceId, revision]));
  return devices.flatMap((device) => {
    const revision = byDevice.get(device.id);
    return revision ? [{ device, revision }] : [];
  });
}

function effectiveOf(revision: DeviceRevision): ModelDocument {
  return effectiveDocument(revision.document as unknown as ModelDocument, revision.sharedObjects);
}

/** Every device's current-revision findings in one organisation, dismissed ones included (marked). */
export async function fleetFindings(organisationId: string): Promise<{ devices: Array<{ id: string; name: string; siteId: string; siteName: string }>; rows: FleetFindingRow[] }> {
  ensureDatabase();
  const [current, dismissals] = await Promise.all([currentRevisions(organisationId), standingDismissals({ organisationId })]);
  const rows = current.flatMap(({ device, revision }) =>
    findingsOfRevision(revision.id, () => effectiveOf(revision)).map((finding): FleetFindingRow => {
      const view = viewOf(finding, dismissals.get(device.id)?.get(findingKey(finding)));
      return { ...view, deviceId: device.id, deviceName: device.name, siteId: device.siteId, siteName: device.site?.name ?? "", revision: revision.number, dismissed: view.dismissal !== null };
    }),
  );
  return { devices: current.map(({ device }) => ({ id: device.id, name: device.name, siteId: device.siteId, siteName: device.site?.name ?? "" })), rows };
}

/**
 * Counts of active (not dismissed) findings per device of the organisation, by severity,
 * from each device's current revision: the figures the fleet table should show.
 */
export async function activeFindingsBySeverity(organisationId: string): Promise<Map<string, SeverityCounts>> {
  const { devices, rows } = await fleetFindings(organisationId);
  const counts = new Map<string, SeverityCounts>(devices.map((device) => [device.id, emptySeverityCounts()]));
  for (const row of rows) {
    const deviceCounts = counts.get(row.deviceId);
    if (deviceCounts && !row.dismissed && isSeverity(row.severity)) deviceCounts[row.severity] += 1;
  }
  return counts;
}

/**
 * Accepts one finding of the device's current revision as a risk, with the reason. It stays
 * dismissed on later revisions (same key) until restored. 404 when the current revision does
 * not report that finding; 409 when it is dismissed already.
 */
export async function dismissFinding(found: DeviceWithRevision, key: string, reason: string, actor: AuditActor): Promise<FindingView> {
  ensureDatabase();
  const finding = findingsOfRevision(found.revision.id, () => found.effective).find((candidate) => findingKey(candidate) === key);
  if (!finding) {
    throw new FindingActionError(`Revision r${found.revision.number} of ${found.device.name} reports no such finding; a later change may have resolved it. Reload the overview.`, 404);
  }
  const organisationId = found.device.organisationId;
  try {
    await FindingDismissal.create({
      organisationId,
      deviceId: found.device.id,
      findingKey: key,
      code: finding.code,
      elements: [...finding.elements].sort(),
      severity: finding.severity,
      title: finding.title.slice(0, 300),
      revisionNumber: found.revision.number,
      reason,
      dismissedByUserId: actor.userId,
      dismissedByEmail: actor.email,
      restoredAt: null,
      restoredByUserId: null,
      restoredByEmail: null,
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new FindingActionError(`"${finding.title}" is dismissed already.`, 409);
    throw error;
  }
  await recordAuditEvent(actor, {
    organisationId,
    action: "finding.dismissed",
    targetType: "device",
    targetId: found.device.id,
    changes: { device: found.device.name, revision: found.revision.number, code: finding.code, elements: [...finding.elements].sort(), severity: finding.severity, reason },
  });
  return viewOf(finding, undefined);
}

/** Ends the standing dismissal of this finding key on the device; 404 when there is none. */
export async function restoreFinding(found: DeviceWithRevision, key: string, actor: AuditActor): Promise<{ title: string }> {
  ensureDatabase();
  const standing = await FindingDismissal.findOne({ where: { deviceId: found.device.id, findingKey: key, restoredAt: { [Op.is]: null } } });
  if (!standing) throw new FindingActionError("This finding is not dismissed on this device; someone may have restored it already. Reload the overview.", 404);
  // Only the request that flips restored_at wins, so two restores never both audit.
  const [changed] = await FindingDismissal.update(
    { restoredAt: new Date(), restoredByUserId: actor.userId, restoredByEmail: actor.email },
    { where: { id: standing.id, restoredAt: { [Op.is]: null } } },
  );
  if (changed === 0) throw new FindingActionError("This finding was restored a moment ago by someone else.", 409);
  await recordAuditEvent(actor, {
    organisationId: found.device.organisationId,
    action: "finding.restored",
    targetType: "device",
    targetId: found.device.id,
    changes: { device: found.device.name, revision: found.revision.number, code: standing.code, elements: standing.elements, reason: standing.reason, dismissedBy: standing.dismissedByEmail },
  });
  return { title: standing.title };
}
