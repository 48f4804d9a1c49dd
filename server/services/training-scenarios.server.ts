// Teaching scenarios (docs/decisions/016): device models in the training area, apart from the
// fleet. Each change writes its audit entry in the change's transaction.
import { Op, type Transaction } from "sequelize";
import { Device, TrainingLesson, TrainingScenario, type ScenarioOrigin } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { deviceRevisions } from "../devices/index.ts";
import { NAME_PATTERN, type DeviceModelInput } from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import { anonymiseModel, AnonymiseError } from "../training/anonymise.ts";
import { trainingExample } from "../training/examples.ts";
import { canonicalJson, EMPTY_LIBRARY, newDocument, validateDocument, type ModelDocument } from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";
import { invalidModel } from "./devices.server.ts";

export type ScenarioRef = { organisationId: string; scenarioId: string };

export type ScenarioSource = { kind: "blank" } | { kind: "example"; key: string } | { kind: "copy"; deviceId: string; anonymise: boolean };

export type ScenarioDetails = { title: string; summary: string };

/** A device name the document may carry, from a title: "Rule order 2" → "rule-order-2". */
export function deviceNameFromTitle(title: string): string {
  const name = title
    .toLowerCase()
    .normalize("NFKD")
    .replace(/[^a-z0-9._-]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 63);
  return NAME_PATTERN.test(name) ? name : "teaching-device";
}

/** The scenario of this organisation, or 404 — exactly as for one that does not exist. */
export async function findScenario(ref: ScenarioRef, transaction?: Transaction): Promise<TrainingScenario> {
  const scenario = await TrainingScenario.findOne({ where: { id: ref.scenarioId, organisationId: ref.organisationId }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined });
  if (!scenario) throw new Refusal("No such teaching scenario in this organisation.", 404);
  return scenario;
}

export type ScenarioRow = { id: string; title: string; summary: string; origin: ScenarioOrigin; exampleKey: string | null; anonymised: boolean; deviceName: string; updatedAt: string };

export async function listScenarios(organisationId: string): Promise<ScenarioRow[]> {
  const scenarios = await TrainingScenario.findAll({ where: { organisationId }, order: [["title", "ASC"]] });
  return scenarios.map((scenario) => ({
    id: scenario.id,
    title: scenario.title,
    summary: scenario.summary,
    origin: scenario.origin,
    exampleKey: scenario.exampleKey,
    anonymised: scenario.anonymised,
    deviceName: scenario.document.device.name,
    updatedAt: scenario.updatedAt.toISOString(),
  }));
}

async function assertTitleFree(organisationId: string, title: string, transaction: Transaction, except?: string): Promise<void> {
  const taken = await TrainingScenario.findOne({ where: { organisationId, title, ...(except ? { id: { [Op.ne]: except } } : {}) }, transaction });
  if (taken) throw new Refusal(`A teaching scenario is already called “${title}”: choose another title.`, 409, { field: "title" });
}

/** The first document of a new scenario, and what it came from. */
async function firstDocument(organisationId: string, title: string, source: ScenarioSource): Promise<{ document: unknown; summary?: string; origin: Pick<TrainingScenario, "origin" | "exampleKey" | "sourceDeviceId" | "sourceRevision" | "anonymised">; deviceName?: string }> {
  const none = { exampleKey: null, sourceDeviceId: null, sourceRevision: null, anonymised: false };
  switch (source.kind) {
    case "blank":
      return { document: newDocument(deviceNameFromTitle(title)), origin: { origin: "blank", ...none } };
    case "example": {
      const example = trainingExample(source.key);
      if (!example) throw new Refusal("Choose one of the examples listed.", 400, { field: "example" });
      return { document: example.document satisfies DeviceModelInput, summary: example.summary, origin: { origin: "example", ...none, exampleKey: example.key } };
    }
    case "copy": {
      // The copy reads the device through the repository; nothing is written to it.
      const device = await deviceRevisions.find(organisationId, source.deviceId);
      if (!device) throw new Refusal("No such device in this organisation.", 404, { field: "deviceId" });
      let document: ModelDocument = device.effective;
      if (source.anonymise) {
        try {
          document = anonymiseModel(device.effective, deviceNameFromTitle(title)).document;
        } catch (error) {
          if (error instanceof AnonymiseError) throw new Refusal(error.message, 422, { field: "anonymise" });
          throw error;
        }
      }
      return {
        document,
        origin: { origin: "copy", exampleKey: null, sourceDeviceId: device.device.id, sourceRevision: device.revision.number, anonymised: source.anonymise },
        deviceName: device.device.name,
      };
    }
  }
}

/** A new scenario from scratch, from a shipped example, or as a (possibly anonymised) copy of a fleet device. */
export async function createScenario(organisationId: string, details: ScenarioDetails, source: ScenarioSource, actor: AuditActor): Promise<TrainingScenario> {
  const first = await firstDocument(organisationId, details.title, source);
  // A scenario stands alone: every object its own, no shared library.
  const validated = validateDocument(first.document, EMPTY_LIBRARY);
  if (!validated.ok) throw invalidModel(validated.errors, "Not created: the model would not be valid.");
  return getDatabase().transaction(async (transaction) => {
    await assertTitleFree(organisationId, details.title, transaction);
    const scenario = await TrainingScenario.create(
      {
        organisationId,
        title: details.title,
        summary: details.summary || first.summary || "",
        ...first.origin,
        document: validated.document,
        createdByUserId: actor.userId,
        createdByEmail: actor.email,
      },
      { transaction },
    );
    await recordAuditEvent(
      actor,
      {
        organisationId,
        action: "training.scenario-created",
        targetType: "training-scenario",
        targetId: scenario.id,
        changes: { title: scenario.title, origin: scenario.origin, ...(scenario.exampleKey ? { example: scenario.exampleKey } : {}), ...(first.deviceName ? { device: first.deviceName, deviceId: scenario.sourceDeviceId, anonymised: scenario.anonymised } : {}) },
      },
      transaction,
    );
    return scenario;
  });
}

/**
 * One edit of a scenario's model, through the device editor's own plans: validated like a device
 * save (the problems beside the form's fields), refused on a stale version, a no-op when nothing
 * changed.
 */
export async function editScenarioModel(ref: ScenarioRef, expectedVersion: number, apply: (document: ModelDocument) => ModelDocument, message: string, actor: AuditActor): Promise<{ version: number; changed: boolean }> {
  return getDatabase().transaction(async (transaction) => {
    const scenario = await findScenario(ref, transaction);
    if (scenario.version !== expectedVersion) {
      throw new Refusal(`Not saved: someone changed this scenario since you opened it (now version ${scenario.version}). Your input is still in the form: reload the section, then save again.`, 409);
    }
    const validated = validateDocument(apply(scenario.document), EMPTY_LIBRARY);
    if (!validated.ok) throw invalidModel(validated.errors);
    if (canonicalJson(validated.document) === canonicalJson(scenario.document)) return { version: scenario.version, changed: false };
    await scenario.update({ document: validated.document, version: scenario.version + 1 }, { transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.scenario-edited", targetType: "training-scenario", targetId: scenario.id, changes: { title: scenario.title, edit: message.slice(0, 300), version: scenario.version } }, transaction);
    return { version: scenario.version, changed: true };
  });
}

/** The title and what it teaches. */
export async function updateScenarioDetails(ref: ScenarioRef, details: ScenarioDetails, actor: AuditActor): Promise<boolean> {
  return getDatabase().transaction(async (transaction) => {
    const scenario = await findScenario(ref, transaction);
    if (scenario.title === details.title && scenario.summary === details.summary) return false;
    await assertTitleFree(ref.organisationId, details.title, transaction, scenario.id);
    const changes = { title: { from: scenario.title, to: details.title }, summary: { from: scenario.summary, to: details.summary } };
    await scenario.update({ title: details.title, summary: details.summary }, { transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.scenario-edited", targetType: "training-scenario", targetId: scenario.id, changes: { ...changes, edit: "details" } }, transaction);
    return true;
  });
}

export async function deleteScenario(ref: ScenarioRef, actor: AuditActor): Promise<string> {
  return getDatabase().transaction(async (transaction) => {
    const scenario = await findScenario(ref, transaction);
    const lessons = await TrainingLesson.findAll({ where: { scenarioId: scenario.id }, attributes: ["title"], order: [["title", "ASC"]], transaction });
    if (lessons.length > 0) throw new Refusal(`Not deleted: ${lessons.length === 1 ? "a lesson is" : `${lessons.length} lessons are`} built on this scenario (${lessons.map((lesson) => `“${lesson.title}”`).join(", ")}). Delete ${lessons.length === 1 ? "it" : "them"} first.`, 409);
    await scenario.destroy({ transaction });
    await recordAuditEvent(actor, { organisationId: ref.organisationId, action: "training.scenario-deleted", targetType: "training-scenario", targetId: scenario.id, changes: { title: scenario.title } }, transaction);
    return scenario.title;
  });
}

/** The organisation's devices by name, for the copy form and the walkthrough links (no analysis needed). */
export async function listDeviceNames(organisationId: string): Promise<Array<{ id: string; name: string }>> {
  const devices = await Device.findAll({ where: { organisationId }, attributes: ["id", "name"], order: [["name", "ASC"]] });
  return devices.map((device) => ({ id: device.id, name: device.name }));
}

/** The fleet device a copy came from, while it exists. */
export async function sourceDeviceOf(scenario: TrainingScenario): Promise<{ id: string; name: string } | null> {
  if (!scenario.sourceDeviceId) return null;
  const device = await Device.findOne({ where: { id: scenario.sourceDeviceId, organisationId: scenario.organisationId }, attributes: ["id", "name"] });
  return device ? { id: device.id, name: device.name } : null;
}
