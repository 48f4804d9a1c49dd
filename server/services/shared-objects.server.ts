import { SharedAddressObject } from "#models/index.ts";
import type { SharedObjectKind } from "#models/shared-address-object.ts";
import { CsvSyntaxError, parseCsv } from "../formats/csv.ts";
import { NAME_PATTERN, parseModel } from "../engine/index.ts";
import { deviceRevisions } from "../devices/index.ts";
import { Refusal } from "../errors.ts";
import { EMPTY_LIBRARY, fieldMessagesForIssues, findUsages, type ModelDocument } from "../workspace/index.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

export type SharedObjectInput = { kind: SharedObjectKind; name: string; items: string[]; description: string };
export type SharedObjectRow = SharedObjectInput & { id: string };

export async function listSharedObjects(organisationId: string): Promise<SharedObjectRow[]> {
  const objects = await SharedAddressObject.findAll({ where: { organisationId }, order: [["kind", "ASC"], ["name", "ASC"]] });
  return objects.map((object) => ({ id: object.id, kind: object.kind, name: object.name, items: object.items, description: object.description }));
}

/**
 * Checks the whole library as the engine would see it (entries parse, group members exist,
 * no cycles), so a device can never be broken by a shared object that does not validate.
 * Returns the problems in words: those of the edited object as for its entries or members
 * field, any other with the object named; null when the library validates.
 */
function libraryProblems(objects: SharedObjectInput[], edited: SharedObjectInput): string | null {
  const library = {
    schemaVersion: 1,
    device: { name: "shared-library" },
    addresses: objects.filter((object) => object.kind === "address").map((object) => ({ name: object.name, entries: object.items })),
    addressGroups: objects.filter((object) => object.kind === "group").map((object) => ({ name: object.name, members: object.items })),
  };
  const parsed = parseModel(library);
  if (parsed.ok) return null;
  // The library stands in for a device document here; its parts are the ones the engine checked.
  const document = { ...EMPTY_DOCUMENT, addresses: library.addresses, addressGroups: library.addressGroups };
  const messages = fieldMessagesForIssues(parsed.errors, document, EMPTY_LIBRARY, { collection: edited.kind === "address" ? "addresses" : "addressGroups", name: edited.name });
  const fields = Object.keys(messages).filter((key) => key !== "form");
  // Every problem is the edited object's entries or members: say just that, beside the field.
  if (fields.length === 1 && (fields[0] === "entries" || fields[0] === "members")) return messages[fields[0]];
  return messages.form.replace(/^Not saved\. /, "");
}

/** A document with nothing in it, for checking the shared library alone. */
const EMPTY_DOCUMENT: ModelDocument = {
  schemaVersion: 1,
  device: { name: "shared-library", timezone: "UTC", defaultInbound: "allow", unlistenedPort: "drop" },
  interfaces: [],
  services: [],
  addresses: [],
  addressGroups: [],
  serviceGroups: [],
  schedules: [],
  inboundRules: [],
  accounts: [],
  operatorNetworks: [],
};

async function devicesUsing(organisationId: string, name: string): Promise<string[]> {
  const devices = await deviceRevisions.current(organisationId);
  return devices
    .filter(({ document }) => {
      const definesItself = [...document.addresses, ...document.addressGroups].some((object) => object.name === name);
      return !definesItself && findUsages(document, "address", name).length > 0;
    })
    .map(({ device }) => device.name);
}

export async function saveSharedObject(organisationId: string, originalName: string | null, input: SharedObjectInput, actor: AuditActor): Promise<void> {
  const library = await listSharedObjects(organisationId);
  const existing = originalName ? library.find((object) => object.name === originalName) : undefined;
  if (originalName && !existing) throw new Refusal(`There is no shared object named "${originalName}".`, 404);
  if (library.some((object) => object.name === input.name && object.name !== originalName)) throw new Refusal(`The name "${input.name}" is already used in the shared library.`, 409, { field: "name" });
  if (existing && existing.name !== input.name) {
    const users = await devicesUsing(organisationId, existing.name);
    if (users.length > 0) throw new Refusal(`"${existing.name}" is used by ${users.join(", ")}; renaming it would break them. Create a new object instead.`, 409, { field: "name" });
  }
  const next = [...library.filter((object) => object.name !== originalName), input];
  const problems = libraryProblems(next, input);
  if (problems !== null) throw new Refusal(problems, 400, { field: "items" });
  if (existing) {
    await SharedAddressObject.update({ kind: input.kind, name: input.name, items: input.items, description: input.description }, { where: { id: existing.id } });
  } else {
    await SharedAddressObject.create({ organisationId, ...input });
  }
  await recordAuditEvent(actor, {
    organisationId,
    action: existing ? "shared-object.updated" : "shared-object.created",
    targetType: "shared-object",
    targetId: input.name,
    changes: existing ? { items: { from: existing.items, to: input.items }, name: { from: existing.name, to: input.name } } : { kind: input.kind, items: input.items },
  });
}

export async function deleteSharedObject(organisationId: string, name: string, actor: AuditActor): Promise<void> {
  const library = await listSharedObjects(organisationId);
  const object = library.find((candidate) => candidate.name === name);
  if (!object) throw new Refusal(`There is no shared object named "${name}".`, 404);
  const groups = library.filter((candidate) => candidate.kind === "group" && candidate.items.includes(name)).map((group) => `shared group ${group.name}`);
  const devices = (await devicesUsing(organisationId, name)).map((device) => `device ${device}`);
  const users = [...groups, ...devices];
  if (users.length > 0) throw new Refusal(`"${name}" is in use: ${users.join(", ")}. Remove those references first.`, 409);
  await SharedAddressObject.destroy({ where: { organisationId, name } });
  await recordAuditEvent(actor, { organisationId, action: "shared-object.deleted", targetType: "shared-object", targetId: name, changes: { items: object.items } });
}

export type CsvRowReport = { row: number; name: string; result: "created" | "updated" | "refused"; message: string };

/**
 * Imports address objects from CSV rows `name,entries` (entries separated by spaces or
 * semicolons; a header row is optional). Each row stands alone: a bad row is reported and
 * the good ones are saved. Text that is not CSV at all (a stray or unclosed quote, after
 * which no row can be trusted) refuses the whole file with a 400 and saves nothing.
 */
export async function importSharedObjectsCsv(organisationId: string, text: string, actor: AuditActor): Promise<CsvRowReport[]> {
  let rows: string[][];
  try {
    rows = parseCsv(text);
  } catch (error) {
    if (error instanceof CsvSyntaxError) throw new Refusal(`The file is not valid CSV, nothing was imported: ${error.message}.`, 400, { field: "csv" });
    throw error;
  }
  const report: CsvRowReport[] = [];
  for (const [index, fields] of rows.entries()) {
    const row = index + 1;
    const [rawName = "", rawEntries = "", ...extra] = fields.map((field) => field.trim());
    if (row === 1 && rawName.toLowerCase() === "name") continue;
    if (fields.every((field) => field.trim() === "")) continue;
    if (extra.some((field) => field !== "")) {
      report.push({ row, name: rawName, result: "refused", message: "Too many columns: expected name,entries (quote entries that contain commas)." });
      continue;
    }
    if (!NAME_PATTERN.test(rawName)) {
      report.push({ row, name: rawName, result: "refused", message: "The name must be 1–63 characters of letters, digits, dot, underscore, dash." });
      continue;
    }
    const entries = rawEntries.split(/[\s;]+/).filter(Boolean);
    if (entries.length === 0) {
      report.push({ row, name: rawName, result: "refused", message: "No entries: give at least one address, CIDR or range." });
      continue;
    }
    const library = await listSharedObjects(organisationId);
    const existing = library.find((object) => object.name === rawName);
    if (existing && existing.kind !== "address") {
      report.push({ row, name: rawName, result: "refused", message: `"${rawName}" is a shared group; CSV import only writes address objects.` });
      continue;
    }
    try {
      await saveSharedObject(organisationId, existing ? rawName : null, { kind: "address", name: rawName, items: entries, description: existing?.description ?? "" }, actor);
      report.push({ row, name: rawName, result: existing ? "updated" : "created", message: entries.join(" ") });
    } catch (error) {
      if (error instanceof Refusal) report.push({ row, name: rawName, result: "refused", message: error.message });
      else throw error;
    }
  }
  return report;
}
