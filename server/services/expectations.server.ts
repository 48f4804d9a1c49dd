// A device's expectations: what its team records must always hold, in the team's order. The
// engine owns their shape and how they are checked (server/engine/expectations.ts); this file
// stores them, keeps the order, imports and exports the file format, and writes the audit log
// in the change's transaction. The device row is locked for every change, so two edits of one
// list never interleave.
import type { Transaction } from "sequelize";
import { Device, DeviceExpectation } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { expectationsFile, expectationWords, MAX_EXPECTATIONS, parseExpectation, parseExpectationsFile } from "../engine/index.ts";
import type { Expectation, ExpectationsFile, ValidationIssue } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

/** An expectation as stored: the expectation itself, its place in the list, who wrote it and when. */
export type StoredExpectation = {
  expectation: Expectation;
  /** 1-based place in the device's list. */
  position: number;
  /** Who added it (e-mail), and who changed it last. */
  author: string;
  updatedBy: string;
  createdAt: string;
  updatedAt: string;
};

export type ImportMode = "replace" | "append";

function storedOf(row: DeviceExpectation): StoredExpectation {
  const parsed = parseExpectation(row.definition);
  // Rows are validated by the same schema when written; one that no longer reads is a bug, not input.
  if (!parsed.ok) throw new Error(`stored expectation ${row.id} does not read: ${JSON.stringify(parsed.errors)}`);
  return {
    expectation: parsed.expectation,
    position: row.position,
    author: row.createdByEmail,
    updatedBy: row.updatedByEmail,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

/** The device, locked for this transaction when one is given; 404 when it is not this organisation's. */
async function deviceOf(organisationId: string, deviceId: string, transaction?: Transaction): Promise<Device> {
  const device = await Device.findOne({ where: { id: deviceId, organisationId }, transaction, ...(transaction ? { lock: transaction.LOCK.UPDATE } : {}) });
  if (!device) throw new Refusal("No such device in this organisation.", 404);
  return device;
}

async function rowsOf(deviceId: string, transaction?: Transaction): Promise<DeviceExpectation[]> {
  return DeviceExpectation.findAll({ where: { deviceId }, order: [["position", "ASC"]], transaction });
}

/**
 * The device's expectations in order, each with author and times: one query. A device of
 * another organisation has none here (the routes answer 404 for it before asking). Pass the
 * caller's transaction to read inside it (a proposal's gate, a save).
 */
export async function listExpectations(organisationId: string, deviceId: string, transaction?: Transaction): Promise<StoredExpectation[]> {
  const rows = await DeviceExpectation.findAll({ where: { organisationId, deviceId }, order: [["position", "ASC"]], transaction });
  return rows.map(storedOf);
}

/** A refusal for input the engine's schema did not accept, with each problem's path (the form's fields are its first segment). */
function invalid(issues: readonly ValidationIssue[], message = "The expectation is not valid."): Refusal {
  const field = issues[0]?.path.split(/[.[]/)[0];
  return new Refusal(issues.length === 1 ? `${message.replace(/\.$/, "")}: ${issues[0].path ? `${issues[0].path} ` : ""}${issues[0].message}.` : message, 400, { issues, ...(field ? { field } : {}) });
}

function parsed(input: unknown): Expectation {
  const result = parseExpectation(input);
  if (!result.ok) throw invalid(result.errors);
  return result.expectation;
}

/** Renumbers the rows 1…n in the given order (the position constraint is checked at commit). */
async function renumber(rows: readonly DeviceExpectation[], transaction: Transaction): Promise<void> {
  for (const [index, row] of rows.entries()) {
    if (row.position !== index + 1) await row.update({ position: index + 1 }, { transaction });
  }
}

function change(device: Device, expectation: Expectation, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return { device: device.name, id: expectation.id, kind: expectation.kind, words: expectationWords(expectation), ...extra };
}

/** Adds an expectation at the end of the list. 400 with paths when malformed, 409 when its id is taken. */
export async function addExpectation(organisationId: string, deviceId: string, input: unknown, actor: AuditActor): Promise<StoredExpectation> {
  const expectation = parsed(input);
  return getDatabase().transaction(async (transaction) => {
    const device = await deviceOf(organisationId, deviceId, transaction);
    const rows = await rowsOf(deviceId, transaction);
    if (rows.some((row) => row.expectationId === expectation.id)) throw new Refusal(`This device already has an expectation "${expectation.id}". Choose another id.`, 409, { field: "id" });
    if (rows.length >= MAX_EXPECTATIONS) throw new Refusal(`A device keeps at most ${MAX_EXPECTATIONS} expectations.`, 409);
    const row = await DeviceExpectation.create(
      {
        organisationId,
        deviceId,
        expectationId: expectation.id,
        position: rows.length + 1,
        kind: expectation.kind,
        definition: { ...expectation },
        createdByUserId: actor.userId,
        createdByEmail: actor.email,
        updatedByEmail: actor.email,
      },
      { transaction },
    );
    await recordAuditEvent(actor, { organisationId, action: "expectation.added", targetType: "device", targetId: deviceId, changes: change(device, expectation, { position: row.position }) }, transaction);
    return storedOf(row);
  });
}

async function rowNamed(rows: readonly DeviceExpectation[], id: string): Promise<DeviceExpectation> {
  const row = rows.find((candidate) => candidate.expectationId === id);
  if (!row) throw new Refusal(`This device has no expectation "${id}"; someone may have deleted it. Reload the page.`, 404);
  return row;
}

/** Replaces expectation `id` (its id may change too). 404 when there is none, 409 when the new id is taken. */
export async function editExpectation(organisationId: string, deviceId: string, id: string, input: unknown, actor: AuditActor): Promise<StoredExpectation> {
  const expectation = parsed(input);
  return getDatabase().transaction(async (transaction) => {
    const device = await deviceOf(organisationId, deviceId, transaction);
    const rows = await rowsOf(deviceId, transaction);
    const row = await rowNamed(rows, id);
    if (expectation.id !== id && rows.some((other) => other.expectationId === expectation.id)) {
      throw new Refusal(`This device already has an expectation "${expectation.id}". Choose another id.`, 409, { field: "id" });
    }
    const before = storedOf(row).expectation;
    await row.update({ expectationId: expectation.id, kind: expectation.kind, definition: { ...expectation }, updatedByEmail: actor.email }, { transaction });
    await recordAuditEvent(
      actor,
      { organisationId, action: "expectation.changed", targetType: "device", targetId: deviceId, changes: change(device, expectation, { was: expectationWords(before), ...(id !== expectation.id ? { renamedFrom: id } : {}) }) },
      transaction,
    );
    return storedOf(row);
  });
}

/** Deletes expectation `id`; the ones after it move up. 404 when there is none. */
export async function deleteExpectation(organisationId: string, deviceId: string, id: string, actor: AuditActor): Promise<{ id: string }> {
  return getDatabase().transaction(async (transaction) => {
    const device = await deviceOf(organisationId, deviceId, transaction);
    const rows = await rowsOf(deviceId, transaction);
    const row = await rowNamed(rows, id);
    const expectation = storedOf(row).expectation;
    await row.destroy({ transaction });
    await renumber(
      rows.filter((other) => other !== row),
      transaction,
    );
    await recordAuditEvent(actor, { organisationId, action: "expectation.deleted", targetType: "device", targetId: deviceId, changes: change(device, expectation) }, transaction);
    return { id };
  });
}

/** Moves expectation `id` to a 1-based position (clamped to the list). 404 when there is none. */
export async function moveExpectation(organisationId: string, deviceId: string, id: string, position: number, actor: AuditActor): Promise<StoredExpectation[]> {
  return getDatabase().transaction(async (transaction) => {
    const device = await deviceOf(organisationId, deviceId, transaction);
    const rows = await rowsOf(deviceId, transaction);
    const row = await rowNamed(rows, id);
    const from = rows.indexOf(row);
    const to = Math.max(0, Math.min(rows.length - 1, Math.floor(position) - 1));
    if (from !== to) {
      const order = rows.filter((other) => other !== row);
      order.splice(to, 0, row);
      await renumber(order, transaction);
      await recordAuditEvent(
        actor,
        { organisationId, action: "expectation.reordered", targetType: "device", targetId: deviceId, changes: { device: device.name, id, position: { from: from + 1, to: to + 1 } } },
        transaction,
      );
    }
    return (await rowsOf(deviceId, transaction)).map(storedOf);
  });
}

/**
 * Imports an expectations file (the JSON value): "replace" swaps the whole list, "append" adds
 * the file's expectations after the ones there. 400 with the path of every problem when the
 * file is malformed, or (append) when an id is already used on the device or the list grows too long.
 */
export async function importExpectations(organisationId: string, deviceId: string, input: unknown, mode: ImportMode, actor: AuditActor): Promise<{ count: number; total: number }> {
  const file = parseExpectationsFile(input);
  if (!file.ok) throw invalid(file.errors, "The file is not an expectations file Sallyport can read.");
  const incoming = file.expectations;
  return getDatabase().transaction(async (transaction) => {
    const device = await deviceOf(organisationId, deviceId, transaction);
    const rows = await rowsOf(deviceId, transaction);
    const kept = mode === "replace" ? [] : rows;
    if (mode === "append") {
      const taken = new Set(rows.map((row) => row.expectationId));
      const clashes: ValidationIssue[] = incoming.flatMap((expectation, index) => (taken.has(expectation.id) ? [{ path: `expectations[${index}].id`, message: `"${expectation.id}" is already an expectation of this device` }] : []));
      if (clashes.length > 0) throw invalid(clashes, "Some ids in the file are already used on this device; rename them or replace the list.");
      if (rows.length + incoming.length > MAX_EXPECTATIONS) {
        throw invalid([{ path: "expectations", message: `the device would hold ${rows.length + incoming.length} expectations; at most ${MAX_EXPECTATIONS}` }], "The list would grow too long.");
      }
    } else {
      for (const row of rows) await row.destroy({ transaction });
    }
    let position = kept.length;
    for (const expectation of incoming) {
      position += 1;
      await DeviceExpectation.create(
        {
          organisationId,
          deviceId,
          expectationId: expectation.id,
          position,
          kind: expectation.kind,
          definition: { ...expectation },
          createdByUserId: actor.userId,
          createdByEmail: actor.email,
          updatedByEmail: actor.email,
        },
        { transaction },
      );
    }
    await recordAuditEvent(
      actor,
      { organisationId, action: "expectation.imported", targetType: "device", targetId: deviceId, changes: { device: device.name, mode, count: incoming.length, ids: incoming.map((e) => e.id), ...(mode === "replace" ? { replaced: rows.map((row) => row.expectationId) } : {}) } },
      transaction,
    );
    return { count: incoming.length, total: position };
  });
}

/** The device's expectations as an expectations file (the format import reads). */
export async function exportExpectations(organisationId: string, deviceId: string): Promise<ExpectationsFile> {
  const device = await deviceOf(organisationId, deviceId);
  const list = (await rowsOf(deviceId)).map(storedOf);
  return expectationsFile(
    list.map((stored) => stored.expectation),
    device.name,
  );
}
