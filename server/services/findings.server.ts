import { Op, UniqueConstraintError } from "sequelize";
import { FindingDismissal } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { emptySeverityCounts, findingKey, isSeverity, type Finding, type SeverityCounts, type WitnessProbe } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { dismissalRuleOf, shortReasonMessage, type DismissalRule } from "./dismissal-rules.ts";

/**
 * Whether a standing dismissal applies: "in-effect" (the finding is an accepted risk and leaves
 * the counts) or "awaiting-confirmation" (asked for on a high or critical finding, waiting for a
 * second person; the finding still counts).
 */
export type DismissalState = "in-effect" | "awaiting-confirmation";

/** A dismissal as the pages show it. */
export type DismissalView = {
  state: DismissalState;
  reason: string;
  by: string;
  /** Who asked, so a page can tell whether the viewer may confirm (never their own). */
  byUserId: string | null;
  at: string;
  /** Who confirmed it and when, for a dismissal that needed it and got it. */
  confirmedBy: string | null;
  confirmedAt: string | null;
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
  /** The standing dismissal, in effect or awaiting confirmation; null when there is none. */
  dismissal: DismissalView | null;
  /** How this finding may be dismissed (a lockout: not at all, and why). */
  rule: DismissalRule;
};

/**
 * `dismissed`: a dismissal is in effect (the finding leaves the counts); `awaitingConfirmation`:
 * one was asked for and waits for a second person (the finding still counts).
 */
export type FleetFindingRow = FindingView & { deviceId: string; deviceName: string; siteId: string; siteName: string; revision: number; dismissed: boolean; awaitingConfirmation: boolean };

/** True when the row is standing and waits for a second person. */
function isAwaiting(row: FindingDismissal): boolean {
  return row.needsConfirmation && row.confirmedAt === null;
}

function dismissalViewOf(dismissal: FindingDismissal): DismissalView {
  return {
    state: isAwaiting(dismissal) ? "awaiting-confirmation" : "in-effect",
    reason: dismissal.reason,
    by: dismissal.dismissedByEmail,
    byUserId: dismissal.dismissedByUserId,
    at: dismissal.dismissedAt.toISOString(),
    confirmedBy: dismissal.confirmedByEmail ?? null,
    confirmedAt: dismissal.confirmedAt ? dismissal.confirmedAt.toISOString() : null,
    revisionNumber: dismissal.revisionNumber,
    severityThen: dismissal.severity,
    titleThen: dismissal.title,
  };
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
    witness: finding.witness ? { probe: finding.witness.probe, outcome: finding.witness.outcome, shows: finding.witness.shows, proof: finding.witness.proof ?? null } : null,
    dismissal: dismissal ? dismissalViewOf(dismissal) : null,
    rule: dismissalRuleOf(finding),
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

export type UnmatchedDismissal = { key: string; code: string; title: string; reason: string; by: string; at: string; revisionNumber: number; state: DismissalState };

/**
 * The findings of the device's revision in hand (normally the current one) with their dismissal
 * state, and the standing dismissals that no finding of this revision matches (a later change
 * fixed it, or changed its elements): they would apply again if the same finding came back, so
 * the overview lists them where they can be withdrawn. One query.
 */
export async function deviceFindings(found: DeviceAtRevision): Promise<{ findings: FindingView[]; unmatched: UnmatchedDismissal[] }> {
  const standing = (await standingDismissals({ deviceId: found.device.id })).get(found.device.id) ?? new Map<string, FindingDismissal>();
  const list = await deviceRevisions.findingsFor(found);
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
        state: dismissalViewOf(dismissal).state,
      })),
  };
}

/**
 * Every device's current-revision findings in one organisation, dismissed ones and those awaiting
 * confirmation included (marked). Reads the findings the background analysis stored, never the
 * devices' documents (issue 14: one organisation's large fleet must not stall the server).
 */
export async function fleetFindings(organisationId: string): Promise<{ devices: Array<{ id: string; name: string; siteId: string; siteName: string }>; rows: FleetFindingRow[] }> {
  const [current, dismissals] = await Promise.all([deviceRevisions.currentRecords(organisationId), standingDismissals({ organisationId })]);
  const found = await deviceRevisions.storedFindingsOf(current.map(({ revision }) => revision));
  const rows = current.flatMap(({ device, revision }, index) =>
    found[index].map((finding): FleetFindingRow => {
      const view = viewOf(finding, dismissals.get(device.id)?.get(findingKey(finding)));
      const state = view.dismissal?.state ?? null;
      return {
        ...view,
        deviceId: device.id,
        deviceName: device.name,
        siteId: device.siteId,
        siteName: device.site.name,
        revision: revision.number,
        dismissed: state === "in-effect",
        awaitingConfirmation: state === "awaiting-confirmation",
      };
    }),
  );
  return { devices: current.map(({ device }) => ({ id: device.id, name: device.name, siteId: device.siteId, siteName: device.site.name })), rows };
}

/**
 * Counts of active findings per device, by severity, from each device's current revision: the
 * figures the fleet table should show. The stored counts less the findings an in-effect dismissal
 * takes out (a finding whose dismissal awaits confirmation is still active). Reads the stored
 * summaries the caller has, the organisation's standing dismissals, and only for devices with
 * dismissals the severities of the dismissed keys (matched inside PostgreSQL): no document, no
 * findings list, no engine — nothing that grows with the size of the devices (issue 14).
 * Devices without a summary (still being analysed) are left out.
 */
export async function activeFindingsBySeverity(
  organisationId: string,
  devices: ReadonlyArray<{ deviceId: string; revisionId: string; hasFindingKeys: boolean; findingsBySeverity: Record<string, number> | null }>,
): Promise<Map<string, SeverityCounts>> {
  const dismissals = await standingDismissals({ organisationId });
  const wanted = devices.flatMap((device) => {
    const keys = [...(dismissals.get(device.deviceId)?.values() ?? [])].filter((dismissal) => dismissalViewOf(dismissal).state === "in-effect").map((dismissal) => dismissal.findingKey);
    return device.findingsBySeverity && keys.length > 0 ? [{ revisionId: device.revisionId, keys, hasFindingKeys: device.hasFindingKeys }] : [];
  });
  const dismissed = await deviceRevisions.severitiesOfKeys(wanted);
  const counts = new Map<string, SeverityCounts>();
  for (const device of devices) {
    if (!device.findingsBySeverity) continue;
    const deviceCounts = emptySeverityCounts();
    for (const [severity, count] of Object.entries(device.findingsBySeverity)) if (isSeverity(severity)) deviceCounts[severity] = count;
    for (const [, severity] of dismissed.get(device.revisionId) ?? []) if (isSeverity(severity)) deviceCounts[severity] -= 1;
    counts.set(device.deviceId, deviceCounts);
  }
  return counts;
}

/** The finding of the device's revision in hand with this key; 404 when that revision does not report it. */
function findingOf(found: DeviceAtRevision, key: string): Finding {
  const finding = deviceRevisions.findingsOf(found).find((candidate) => findingKey(candidate) === key);
  if (!finding) {
    throw new Refusal(`Revision r${found.revision.number} of ${found.device.name} reports no such finding; a later change may have resolved it. Reload the overview.`, 404);
  }
  return finding;
}

/**
 * How the finding with this key on the device's current revision may be dismissed: the rule
 * the action validates the reason by before asking. 404 when the revision does not report it;
 * 403 with the reason for a finding that is never dismissed (a lockout).
 */
export function dismissalRuleFor(found: DeviceAtRevision, key: string): Exclude<DismissalRule, { kind: "refused" }> {
  const rule = dismissalRuleOf(findingOf(found, key));
  if (rule.kind === "refused") throw new Refusal(rule.message, 403);
  return rule;
}

export type DismissalOutcome = { title: string; state: DismissalState };

/**
 * Accepts one finding of the device's current revision as a risk, with the reason. It stays
 * dismissed on later revisions (same key) until restored. A high or critical finding's
 * dismissal is only asked for here: it applies once a second person confirms it
 * (`confirmDismissal`). 404 when the current revision does not report that finding; 403 for a
 * lockout (fixed, never dismissed); 400 beside the reason when it is shorter than the rule asks;
 * 409 when a dismissal stands (or waits) already.
 */
export async function dismissFinding(found: DeviceAtRevision, key: string, reason: string, actor: AuditActor): Promise<DismissalOutcome> {
  const finding = findingOf(found, key);
  const rule = dismissalRuleOf(finding);
  if (rule.kind === "refused") throw new Refusal(rule.message, 403);
  const trimmed = reason.trim();
  if (trimmed.length < rule.minReason) throw new Refusal(shortReasonMessage(rule, trimmed.length), 400, { field: "reason" });
  const needsConfirmation = rule.kind === "confirmed";
  const organisationId = found.device.organisationId;
  const elements = [...finding.elements].sort();
  try {
    await getDatabase().transaction(async (transaction) => {
      await FindingDismissal.create({
        organisationId,
        deviceId: found.device.id,
        findingKey: key,
        code: finding.code,
        elements,
        severity: finding.severity,
        title: finding.title.slice(0, 300),
        revisionNumber: found.revision.number,
        reason: trimmed,
        dismissedByUserId: actor.userId,
        dismissedByEmail: actor.email,
        needsConfirmation,
        restoredAt: null,
        restoredByUserId: null,
        restoredByEmail: null,
      }, { transaction });
      await recordAuditEvent(actor, {
        organisationId,
        action: needsConfirmation ? "finding.dismissal-requested" : "finding.dismissed",
        targetType: "device",
        targetId: found.device.id,
        changes: { device: found.device.name, revision: found.revision.number, code: finding.code, elements, severity: finding.severity, reason: trimmed },
      }, transaction);
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new Refusal(`"${finding.title}" is dismissed already, or its dismissal awaits confirmation.`, 409);
    throw error;
  }
  return { title: finding.title, state: needsConfirmation ? "awaiting-confirmation" : "in-effect" };
}

/** The standing dismissal of this key on the device, or a 404 in words. */
async function standingDismissal(found: DeviceAtRevision, key: string, missing: string): Promise<FindingDismissal> {
  const standing = await FindingDismissal.findOne({ where: { deviceId: found.device.id, findingKey: key, restoredAt: { [Op.is]: null } } });
  if (!standing) throw new Refusal(missing, 404);
  return standing;
}

/** The person who asked never answers their own request: a second person does. */
function sameAsRequester(dismissal: FindingDismissal, actor: AuditActor): boolean {
  return (actor.userId !== null && dismissal.dismissedByUserId === actor.userId) || dismissal.dismissedByEmail.toLowerCase() === actor.email.toLowerCase();
}

const NOTHING_AWAITS = "No dismissal of this finding awaits confirmation on this device; it may have been confirmed, declined or withdrawn a moment ago. Reload the page.";

/** A dismissal that waits for confirmation, the actor being someone other than the one who asked (403 otherwise). */
async function awaitingDismissal(found: DeviceAtRevision, key: string, actor: AuditActor, ownMessage: string): Promise<FindingDismissal> {
  const standing = await standingDismissal(found, key, NOTHING_AWAITS);
  if (!isAwaiting(standing)) throw new Refusal(NOTHING_AWAITS, 404);
  if (sameAsRequester(standing, actor)) throw new Refusal(ownMessage, 403);
  return standing;
}

/**
 * Confirms a dismissal someone else asked for: from now on it applies and the finding leaves the
 * counts. The caller checked the role (reviewer or above). 403 for the person who asked; 404
 * when nothing awaits confirmation; 409 when someone else answered it first.
 */
export async function confirmDismissal(found: DeviceAtRevision, key: string, actor: AuditActor): Promise<{ title: string }> {
  const standing = await awaitingDismissal(
    found,
    key,
    actor,
    "You asked for this dismissal, so you cannot confirm it: a second person (a reviewer or above) checks the reason and confirms it.",
  );
  await getDatabase().transaction(async (transaction) => {
    // Only the request that sets confirmed_at wins, so two confirmations never both audit.
    const [changed] = await FindingDismissal.update(
      { confirmedAt: new Date(), confirmedByUserId: actor.userId, confirmedByEmail: actor.email },
      { where: { id: standing.id, restoredAt: { [Op.is]: null }, confirmedAt: { [Op.is]: null } }, transaction },
    );
    if (changed === 0) throw new Refusal("Someone else answered this dismissal a moment ago. Reload the page.", 409);
    await recordAuditEvent(actor, {
      organisationId: found.device.organisationId,
      action: "finding.dismissal-confirmed",
      targetType: "device",
      targetId: found.device.id,
      changes: { device: found.device.name, revision: found.revision.number, code: standing.code, elements: standing.elements, severity: standing.severity, reason: standing.reason, dismissedBy: standing.dismissedByEmail },
    }, transaction);
  });
  return { title: standing.title };
}

/** Declines a dismissal someone else asked for: it ends and the finding stays active. Same refusals as confirming. */
export async function declineDismissal(found: DeviceAtRevision, key: string, actor: AuditActor): Promise<{ title: string }> {
  const standing = await awaitingDismissal(found, key, actor, "You asked for this dismissal: withdraw it instead of declining it.");
  await endDismissal(found, standing, actor, "finding.dismissal-declined");
  return { title: standing.title };
}

/**
 * Ends the standing dismissal of this finding key on the device: a dismissal in effect is
 * restored to the active findings, one awaiting confirmation is withdrawn. 404 when there is none.
 */
export async function restoreFinding(found: DeviceAtRevision, key: string, actor: AuditActor): Promise<DismissalOutcome> {
  const standing = await standingDismissal(found, key, "This finding is not dismissed on this device; someone may have restored it already. Reload the overview.");
  const state = dismissalViewOf(standing).state;
  await endDismissal(found, standing, actor, state === "awaiting-confirmation" ? "finding.dismissal-withdrawn" : "finding.restored");
  return { title: standing.title, state };
}

async function endDismissal(found: DeviceAtRevision, standing: FindingDismissal, actor: AuditActor, action: "finding.restored" | "finding.dismissal-withdrawn" | "finding.dismissal-declined"): Promise<void> {
  await getDatabase().transaction(async (transaction) => {
    // Only the request that flips restored_at wins, so two restores never both audit.
    const [changed] = await FindingDismissal.update(
      { restoredAt: new Date(), restoredByUserId: actor.userId, restoredByEmail: actor.email },
      { where: { id: standing.id, restoredAt: { [Op.is]: null }, ...(action === "finding.restored" ? {} : { confirmedAt: { [Op.is]: null } }) }, transaction },
    );
    if (changed === 0) throw new Refusal("Someone else changed this dismissal a moment ago. Reload the page.", 409);
    await recordAuditEvent(actor, {
      organisationId: found.device.organisationId,
      action,
      targetType: "device",
      targetId: found.device.id,
      changes: { device: found.device.name, revision: found.revision.number, code: standing.code, elements: standing.elements, reason: standing.reason, dismissedBy: standing.dismissedByEmail },
    }, transaction);
  });
}
