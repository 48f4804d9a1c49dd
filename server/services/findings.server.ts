import { Op, UniqueConstraintError } from "sequelize";
import { FindingDismissal } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { emptySeverityCounts, findingKey, isSeverity, type Finding, type SeverityCounts, type WitnessProbe } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

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
  /** A probe that shows the finding, for "try it" (opens the trace with it). */
  witness: { probe: WitnessProbe; outcome: string; shows: string; proof: string | null } | null;
  dismissal: DismissalView | null;
};

export type FleetFindingRow = FindingView & { deviceId: string; deviceName: string; siteId: string; siteName: string; revision: number; dismissed: boolean };

function viewOf(finding: Finding, dismissal: FindingDismissal | undefined): FindingView {
  return {
    key: findingKey(finding),
    code: finding.code,
    severity: finding.severity,
    title: finding.title,
    detail: finding.detail,
    elements: [...finding.elements],
    source: finding.source,
    witness: finding.witness ? { probe: finding.witness.probe, outcome: finding.witness.outcome, shows: finding.witness.shows, proof: finding.witness.proof ?? null } : null,
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

export type UnmatchedDismissal = { key: string; code: string; title: string; reason: string; by: string; at: string; revisionNumber: number };

/**
 * The findings of the device's revision in hand (normally the current one) with their dismissal
 * state, and the standing dismissals that no finding of this revision matches (a later change
 * fixed it, or changed its elements): they would apply again if the same finding came back, so
 * the overview lists them where they can be withdrawn. One query.
 */
export async function deviceFindings(found: DeviceAtRevision): Promise<{ findings: FindingView[]; unmatched: UnmatchedDismissal[] }> {
  const standing = (await standingDismissals({ deviceId: found.device.id })).get(found.device.id) ?? new Map<string, FindingDismissal>();
  const list = deviceRevisions.findingsOf(found);
  const current = new Set(list.map((finding) => findingKey(finding)));
  return {
    findings: list.map((finding) => viewOf(finding, standing.get(findingKey(finding)))),
    unmatched: [...standing.values()]
      .filter((dismissal) => !current.has(dismissal.findingKey))
      .map((dismissal) => ({
        key: dismissal.findingKey,
        code: dismissal.code,
        title: dismissal.title,
        reason: dismissal.reason,
        by: dismissal.dismissedByEmail,
        at: dismissal.dismissedAt.toISOString(),
        revisionNumber: dismissal.revisionNumber,
      })),
  };
}

/** Every device's current-revision findings in one organisation, dismissed ones included (marked). */
export async function fleetFindings(organisationId: string): Promise<{ devices: Array<{ id: string; name: string; siteId: string; siteName: string }>; rows: FleetFindingRow[] }> {
  const [current, dismissals] = await Promise.all([deviceRevisions.current(organisationId), standingDismissals({ organisationId })]);
  const rows = current.flatMap((found) => {
    const { device, revision } = found;
    return deviceRevisions.findingsOf(found).map((finding): FleetFindingRow => {
      const view = viewOf(finding, dismissals.get(device.id)?.get(findingKey(finding)));
      return { ...view, deviceId: device.id, deviceName: device.name, siteId: device.siteId, siteName: device.site.name, revision: revision.number, dismissed: view.dismissal !== null };
    });
  });
  return { devices: current.map(({ device }) => ({ id: device.id, name: device.name, siteId: device.siteId, siteName: device.site.name })), rows };
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
export async function dismissFinding(found: DeviceAtRevision, key: string, reason: string, actor: AuditActor): Promise<FindingView> {
  const finding = deviceRevisions.findingsOf(found).find((candidate) => findingKey(candidate) === key);
  if (!finding) {
    throw new Refusal(`Revision r${found.revision.number} of ${found.device.name} reports no such finding; a later change may have resolved it. Reload the overview.`, 404);
  }
  const organisationId = found.device.organisationId;
  try {
    await getDatabase().transaction(async (transaction) => {
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
    }, { transaction });
    await recordAuditEvent(actor, {
      organisationId,
      action: "finding.dismissed",
      targetType: "device",
      targetId: found.device.id,
      changes: { device: found.device.name, revision: found.revision.number, code: finding.code, elements: [...finding.elements].sort(), severity: finding.severity, reason },
    }, transaction);
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new Refusal(`"${finding.title}" is dismissed already.`, 409);
    throw error;
  }
  return viewOf(finding, undefined);
}

/** Ends the standing dismissal of this finding key on the device; 404 when there is none. */
export async function restoreFinding(found: DeviceAtRevision, key: string, actor: AuditActor): Promise<{ title: string }> {
  const standing = await FindingDismissal.findOne({ where: { deviceId: found.device.id, findingKey: key, restoredAt: { [Op.is]: null } } });
  if (!standing) throw new Refusal("This finding is not dismissed on this device; someone may have restored it already. Reload the overview.", 404);
  await getDatabase().transaction(async (transaction) => {
  // Only the request that flips restored_at wins, so two restores never both audit.
  const [changed] = await FindingDismissal.update(
    { restoredAt: new Date(), restoredByUserId: actor.userId, restoredByEmail: actor.email },
    { where: { id: standing.id, restoredAt: { [Op.is]: null } }, transaction },
  );
  if (changed === 0) throw new Refusal("This finding was restored a moment ago by someone else.", 409);
  await recordAuditEvent(actor, {
    organisationId: found.device.organisationId,
    action: "finding.restored",
    targetType: "device",
    targetId: found.device.id,
    changes: { device: found.device.name, revision: found.revision.number, code: standing.code, elements: standing.elements, reason: standing.reason, dismissedBy: standing.dismissedByEmail },
  }, transaction);
  });
  return { title: standing.title };
}
