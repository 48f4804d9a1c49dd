// Field checks of a device: observations from a vantage point (a file's rows or a program's
// list), each predicted with the revision live at its time by the engine
// (server/engine/field-checks.ts), stored with every row's result and audited in the same
// transaction. Reading: a device's checks, one check, and the last check of each device.
//
// The zod schemas below are the shapes these functions take and return, for a route (a page's
// action or an API endpoint) to validate with and describe: results are returned as they are.
import { isUuid } from "../validation/ids.ts";
import { QueryTypes } from "sequelize";
import { z } from "zod";
import { Device, FIELD_CHECK_SOURCES, FieldCheckRecord, type FieldCheckSource } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { deviceRevisions } from "../devices/index.ts";
import { checkObservations, FieldCheckCountsSchema, FieldCheckRowSchema, MAX_OBSERVATIONS, ObservationSchema } from "../engine/index.ts";
import type { FieldCheckCounts, ObservationInput, RevisionAtTime } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { readObservationsCsv } from "../formats/observations.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

/** The least role that may record a field check (it changes no model, but it is a record the team relies on). */
export const FIELD_CHECK_ROLE = "engineer" as const;


/** A list of observations posted by a program (the file's rows as JSON); each gets its 1-based place as its line. */
export const FieldCheckInputSchema = z.object({
  fileName: z.string().max(255).optional().describe("A name to keep with the check, e.g. the file the observations came from"),
  observations: z.array(ObservationSchema).min(1).max(MAX_OBSERVATIONS),
});
export type FieldCheckInput = z.infer<typeof FieldCheckInputSchema>;

/** A stored check without its rows: who, when, from what, and its counts. */
export const FieldCheckSummarySchema = z.object({
  id: z.uuid(),
  deviceId: z.uuid(),
  createdAt: z.iso.datetime().describe("When the check was recorded"),
  createdBy: z.string().describe("The e-mail address of who recorded it"),
  source: z.enum(FIELD_CHECK_SOURCES),
  fileName: z.string(),
  currentRevision: z.number().int().describe("The device's current revision when it was recorded"),
  counts: FieldCheckCountsSchema,
});
export type FieldCheckSummary = z.infer<typeof FieldCheckSummarySchema>;

/** A stored check with every row's result, in the order given. */
export const FieldCheckSchema = FieldCheckSummarySchema.extend({ rows: z.array(FieldCheckRowSchema) });
export type FieldCheck = z.infer<typeof FieldCheckSchema>;

const StoredRowsSchema = z.array(FieldCheckRowSchema);

function countsOf(record: Pick<FieldCheckRecord, "rowsTotal" | "agreements" | "differences" | "invalid">): FieldCheckCounts {
  const checked = record.agreements + record.differences;
  return { rows: record.rowsTotal, agreements: record.agreements, differences: record.differences, invalid: record.invalid, agreementRate: checked === 0 ? null : record.agreements / checked };
}

function summaryOf(record: FieldCheckRecord): FieldCheckSummary {
  return {
    id: record.id,
    deviceId: record.deviceId,
    createdAt: record.createdAt.toISOString(),
    createdBy: record.createdByEmail,
    source: record.source,
    fileName: record.fileName,
    currentRevision: record.currentRevision,
    counts: countsOf(record),
  };
}

function checkOf(record: FieldCheckRecord): FieldCheck {
  const rows = StoredRowsSchema.safeParse(record.results);
  // Rows are written by the same schema; one that no longer reads is a bug, not input.
  if (!rows.success) throw new Error(`stored field check ${record.id} does not read: ${rows.error.message}`);
  return { ...summaryOf(record), rows: rows.data };
}

/**
 * Predicts each observation with the revision live at its time and records the check with its
 * results and an audit entry in one transaction. Every row is answered (a row that cannot be
 * checked is kept with its problem). 404 for a device that is not the organisation's.
 */
export async function recordFieldCheck(
  organisationId: string,
  deviceId: string,
  observations: readonly ObservationInput[],
  meta: { source: FieldCheckSource; fileName: string },
  actor: AuditActor,
  nowMs: number = Date.now(),
): Promise<FieldCheck> {
  if (observations.length === 0) throw new Refusal("A field check needs at least one observation.", 400, { field: "file" });
  if (observations.length > MAX_OBSERVATIONS) throw new Refusal(`A field check takes at most ${MAX_OBSERVATIONS} observations.`, 413, { field: "file" });
  const timeline = await deviceRevisions.timeline(organisationId, deviceId);
  if (timeline.length === 0) throw new Refusal("No such device in this organisation.", 404);
  const revisions: RevisionAtTime[] = timeline.map((entry) => ({ number: entry.number, liveFromMs: entry.savedAt.getTime(), compiled: () => entry.analysis.compiled }));
  const result = checkObservations(observations, revisions, nowMs);
  // A name to show, not a path: control characters and folders dropped.
  // eslint-disable-next-line no-control-regex -- removing control characters is the point
  const fileName = (meta.fileName.split(/[\\/]/).pop() ?? "").replace(/[\u0000-\u001f\u007f-\u009f]/g, "").slice(0, 255);
  const record = await getDatabase().transaction(async (transaction) => {
    const device = await Device.findOne({ where: { id: deviceId, organisationId }, transaction, lock: transaction.LOCK.UPDATE });
    if (!device) throw new Refusal("No such device in this organisation.", 404);
    const created = await FieldCheckRecord.create(
      {
        organisationId,
        deviceId,
        source: meta.source,
        fileName,
        currentRevision: device.currentRevisionNumber,
        rowsTotal: result.counts.rows,
        agreements: result.counts.agreements,
        differences: result.counts.differences,
        invalid: result.counts.invalid,
        results: result.rows,
        createdByUserId: actor.userId,
        createdByEmail: actor.email,
      },
      { transaction },
    );
    const { rows, agreements, differences, invalid } = result.counts;
    await recordAuditEvent(actor, { organisationId, action: "field-check.recorded", targetType: "device", targetId: deviceId, changes: { device: device.name, fieldCheck: created.id, source: meta.source, fileName, rows, agreements, differences, invalid } }, transaction);
    return created;
  });
  return { ...summaryOf(record), rows: result.rows };
}

/** The same, from the text of a field-check file: a file that is not one is refused as a whole (400, in words), bad rows are kept as rows. */
export async function recordFieldCheckFile(organisationId: string, deviceId: string, text: string, fileName: string, actor: AuditActor): Promise<FieldCheck> {
  const read = readObservationsCsv(text);
  if (!read.ok) throw new Refusal(read.message, 400, { field: "file" });
  return recordFieldCheck(organisationId, deviceId, read.observations, { source: "upload", fileName }, actor);
}

/** The same, from a program's list: each observation's line is its 1-based place. */
export async function recordFieldCheckList(organisationId: string, deviceId: string, input: FieldCheckInput, actor: AuditActor): Promise<FieldCheck> {
  const observations = input.observations.map((observation, index): ObservationInput => ({ ...observation, line: index + 1 }));
  return recordFieldCheck(organisationId, deviceId, observations, { source: "api", fileName: input.fileName ?? "" }, actor);
}

/** The device's checks, newest first, without their rows. */
export async function listFieldChecks(organisationId: string, deviceId: string): Promise<FieldCheckSummary[]> {
  if (!isUuid(deviceId)) return [];
  const records = await FieldCheckRecord.findAll({ where: { organisationId, deviceId }, attributes: { exclude: ["results"] }, order: [["createdAt", "DESC"]] });
  return records.map(summaryOf);
}

/** One check of the device with its rows; null when the id is not a UUID or not this device's. */
export async function findFieldCheck(organisationId: string, deviceId: string, id: string): Promise<FieldCheck | null> {
  if (!isUuid(id) || !isUuid(deviceId)) return null;
  const record = await FieldCheckRecord.findOne({ where: { id, organisationId, deviceId } });
  return record ? checkOf(record) : null;
}

type LastRow = { id: string; device_id: string; created_at: Date; created_by_email: string; source: FieldCheckSource; file_name: string; current_revision: number; rows_total: number; agreements: number; differences: number; invalid: number };

/** The last check of each of the organisation's devices that has one (one query), by device id. */
export async function lastFieldChecks(organisationId: string, deviceId?: string): Promise<Map<string, FieldCheckSummary>> {
  const rows = await getDatabase().query<LastRow>(
    `SELECT DISTINCT ON (device_id) id, device_id, created_at, created_by_email, source, file_name, current_revision, rows_total, agreements, differences, invalid
       FROM field_checks WHERE organisation_id = :organisationId${deviceId ? " AND device_id = :deviceId" : ""}
       ORDER BY device_id, created_at DESC, id`,
    { type: QueryTypes.SELECT, replacements: { organisationId, deviceId: deviceId ?? null } },
  );
  return new Map(
    rows.map((row) => [
      row.device_id,
      {
        id: row.id,
        deviceId: row.device_id,
        createdAt: new Date(row.created_at).toISOString(),
        createdBy: row.created_by_email,
        source: row.source,
        fileName: row.file_name,
        currentRevision: row.current_revision,
        counts: countsOf({ rowsTotal: row.rows_total, agreements: row.agreements, differences: row.differences, invalid: row.invalid }),
      },
    ]),
  );
}

/** The device's last check, or null. */
export async function lastFieldCheck(organisationId: string, deviceId: string): Promise<FieldCheckSummary | null> {
  if (!isUuid(deviceId)) return null;
  return (await lastFieldChecks(organisationId, deviceId)).get(deviceId) ?? null;
}
