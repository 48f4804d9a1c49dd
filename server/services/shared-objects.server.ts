// The organisation's shared address objects and groups. A change to one takes effect on every
// device that uses it (directly or through shared groups) at once: the change is previewed
// with each device's exposure diff, and saving it writes the library and a new revision of each
// of those devices in one transaction, checked against the revisions the preview showed. When
// the organisation's changes go through proposals, a change that moves sources on a device is
// an admin's break-glass step with a written reason (docs/decisions/017).
import { createHash } from "node:crypto";
import type { Transaction } from "sequelize";
import { getDatabase } from "../db/database.server.ts";
import { Organisation, SharedAddressObject } from "#models/index.ts";
import { hasAtLeastRole, type Role } from "../auth/roles.ts";
import { WRITTEN_REASON_MIN } from "../proposals/state.ts";
import { compiledOn } from "./compiled-drafts.server.ts";
import { mailBreakGlass, type ProposalEnvironment } from "./proposals.server.ts";
import type { SharedObjectKind } from "#models/shared-address-object.ts";
import { exposureChangeOf, type ExposureChange } from "../analysis/exposure-change.ts";
import { CsvSyntaxError, parseCsv } from "../formats/csv.ts";
import { BUILTIN_ADDRESS_NAMES, compileModel, diffModels, findings, MODEL_SCHEMA_VERSION, NAME_PATTERN, parseModel } from "../engine/index.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { Refusal } from "../errors.ts";
import { revisionAnalysisQueue } from "../jobs/revision-analysis.server.ts";
import { diffDocuments, EMPTY_LIBRARY, fieldMessagesForIssues, sharedObjectsUsedBy, validateDocument, type DocumentChange, type ModelDocument, type SharedLibrary } from "../workspace/index.ts";
import { formatNumber } from "../engine/format.ts";
import { recordAuditEvent, recordAuditEvents, type AuditActor } from "./audit.server.ts";
import { writeRevision } from "./devices.server.ts";
import { lockSharedLibrary } from "./shared-library-lock.server.ts";

export type SharedObjectInput = { kind: SharedObjectKind; name: string; items: string[]; description: string };
export type SharedObjectRow = SharedObjectInput & { id: string };

export async function listSharedObjects(organisationId: string, transaction?: Transaction): Promise<SharedObjectRow[]> {
  // Plain rows: a library imported from CSV may hold tens of thousands, and model instances cost a second.
  const objects = await SharedAddressObject.findAll({ where: { organisationId }, order: [["kind", "ASC"], ["name", "ASC"]], attributes: ["id", "kind", "name", "items", "description"], raw: true, transaction });
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
    schemaVersion: MODEL_SCHEMA_VERSION,
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
  schemaVersion: MODEL_SCHEMA_VERSION,
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

function libraryOf(objects: readonly SharedObjectInput[]): SharedLibrary {
  return {
    addresses: objects.filter((object) => object.kind === "address").map((object) => ({ name: object.name, entries: object.items })),
    addressGroups: objects.filter((object) => object.kind === "group").map((object) => ({ name: object.name, members: object.items })),
  };
}

/** The library's state as the preview saw it: saving refuses when it is no longer the same. */
function fingerprintOf(objects: readonly SharedObjectInput[]): string {
  const canonical = [...objects].sort((a, b) => a.name.localeCompare(b.name)).map(({ kind, name, items, description }) => [kind, name, items, description]);
  return createHash("sha256").update(JSON.stringify(canonical)).digest("hex");
}

function namesIn(library: SharedLibrary): string[] {
  return [...library.addresses, ...library.addressGroups].map((object) => object.name);
}

/** Names of the devices whose current revision uses the shared object, directly or through groups. */
function devicesUsing(devices: readonly DeviceAtRevision[], library: SharedLibrary, name: string): string[] {
  return devices.filter(({ document }) => namesIn(sharedObjectsUsedBy(document, library)).includes(name)).map(({ device }) => device.name);
}

// ---------------------------------------------------------------------------------------------
// Planning a change: the library after it, and what each device that uses it becomes

export type CsvRowReport = { row: number; name: string; result: "created" | "updated" | "refused"; message: string };

type LibraryWrite = { input: SharedObjectInput; existing: SharedObjectRow | null };

/** A change of the library, planned against one state of it. */
type LibraryPlan = {
  /** The whole library after the change. */
  after: SharedObjectInput[];
  writes: LibraryWrite[];
  /** Names whose value the change sets (created, or with new entries, members or kind), each with the change in words ("address object ops-desk: … → …"). */
  touched: Map<string, string>;
  /** The whole change in a few words, for the page. */
  summary: string;
  /** Per CSV row, what became of it. */
  report?: CsvRowReport[];
};

/** Plans a change against the library as it is (`fingerprint` is `fingerprintOf(library)`, computed once by the caller). */
type Planner = (library: SharedObjectRow[], devices: readonly DeviceAtRevision[], fingerprint: string) => LibraryPlan;

function sameValue(a: SharedObjectInput, b: SharedObjectInput): boolean {
  return a.kind === b.kind && JSON.stringify(a.items) === JSON.stringify(b.items);
}

function kindWords(kind: SharedObjectKind): string {
  return kind === "group" ? "address group" : "address object";
}

/** "address object ops-desk: 198.51.100.0/28 → 198.51.100.16/28", "address object spare-net created: 10.9.0.0/16". */
function changeWords({ input, existing }: LibraryWrite): string {
  return existing ? `${kindWords(input.kind)} ${input.name}: ${existing.items.join(", ")} → ${input.items.join(", ")}` : `${kindWords(input.kind)} ${input.name} created: ${input.items.join(", ")}`;
}

/** Saving one object (new, or replacing `originalName`). */
function planSave(originalName: string | null, input: SharedObjectInput): Planner {
  return (library, devices) => {
    const existing = originalName ? library.find((object) => object.name === originalName) : undefined;
    if (originalName && !existing) throw new Refusal(`There is no shared object named "${originalName}".`, 404);
    if (library.some((object) => object.name === input.name && object.name !== originalName)) throw new Refusal(`The name "${input.name}" is already used in the shared library.`, 409, { field: "name" });
    if (existing && existing.name !== input.name) {
      const users = devicesUsing(devices, libraryOf(library), existing.name);
      if (users.length > 0) throw new Refusal(`"${existing.name}" is used by ${users.join(", ")}; renaming it would break them. Create a new object instead.`, 409, { field: "name" });
    }
    const after = [...library.filter((object) => object.name !== originalName), input];
    const problems = libraryProblems(after, input);
    if (problems !== null) throw new Refusal(problems, 400, { field: "items" });
    const write = { input, existing: existing ?? null };
    const summary = changeWords(write);
    const touched = new Map(existing && sameValue(existing, input) && existing.name === input.name ? [] : [input.name, ...(existing ? [existing.name] : [])].map((name) => [name, summary]));
    return { after, writes: [write], touched, summary };
  };
}

/** At most this many saved rows are listed in a CSV report (every refused row is); the rest are counted. */
export const CSV_REPORT_LISTED = 200;

/** What became of a CSV import's rows: every refused row, the first saved ones, and the counts. */
export type CsvReport = { rows: CsvRowReport[]; created: number; updated: number; refused: number; unlisted: number };

function csvReportOf(rows: readonly CsvRowReport[]): CsvReport {
  const refused = rows.filter((row) => row.result === "refused");
  const saved = rows.filter((row) => row.result !== "refused");
  const listed = [...refused, ...saved.slice(0, CSV_REPORT_LISTED)].sort((a, b) => a.row - b.row);
  return { rows: listed, created: saved.filter((row) => row.result === "created").length, updated: saved.filter((row) => row.result === "updated").length, refused: refused.length, unlisted: saved.length - Math.min(saved.length, CSV_REPORT_LISTED) };
}

/** "a, b, c and 24,997 more": a long list of names in a few words. */
function someNames(names: readonly string[], shown = 10): string {
  return names.length <= shown ? names.join(", ") : `${names.slice(0, shown).join(", ")} and ${formatNumber(names.length - shown)} more`;
}

/**
 * Which rows' entries the engine refuses, found in one parse: each row becomes an address object
 * of its own (named after its position) in one library, and the problems are traced back to the
 * rows by their paths. Entries are literal addresses, so an object's validity is its own.
 */
function rowsWithBadEntries(candidates: ReadonlyArray<{ row: number; entries: string[] }>): Set<number> {
  if (candidates.length === 0) return new Set();
  const parsed = parseModel({
    schemaVersion: MODEL_SCHEMA_VERSION,
    device: { name: "shared-library" },
    addresses: candidates.map(({ row, entries }) => ({ name: `row-${row}`, entries })),
    addressGroups: [],
  });
  if (parsed.ok) return new Set();
  const bad = new Set<number>();
  for (const issue of parsed.errors) {
    const index = /^addresses\[(\d+)\]/.exec(issue.path)?.[1];
    if (index !== undefined) bad.add(candidates[Number(index)].row);
  }
  return bad;
}

/**
 * Importing address objects from CSV rows `name,entries` (entries separated by spaces or
 * semicolons; a header row is optional). Each row stands alone: a bad row is reported and the
 * good ones make up the change, applied in order. The rows' entries are checked in one parse and
 * the whole library once at the end — not the whole library per row, which made 25,000 rows take
 * minutes (issue 14).
 */
function planCsv(rows: string[][]): Planner {
  type Candidate = { row: number; name: string; entries: string[] };
  const report: CsvRowReport[] = [];
  const candidates: Candidate[] = [];
  for (const [index, fields] of rows.entries()) {
    const row = index + 1;
    const [rawName = "", rawEntries = "", ...extra] = fields.map((field) => field.trim());
    if (row === 1 && rawName.toLowerCase() === "name") continue;
    if (fields.every((field) => field.trim() === "")) continue;
    const refuse = (message: string) => report.push({ row, name: rawName, result: "refused", message });
    if (extra.some((field) => field !== "")) refuse("Too many columns: expected name,entries (quote entries that contain commas).");
    else if (!NAME_PATTERN.test(rawName)) refuse("The name must be 1–63 characters of letters, digits, dot, underscore, dash.");
    else if ((BUILTIN_ADDRESS_NAMES as readonly string[]).includes(rawName)) refuse(`"${rawName}" is a built-in address name; choose another.`);
    else {
      const entries = rawEntries.split(/[\s;]+/).filter(Boolean);
      if (entries.length === 0) refuse("No entries: give at least one address, CIDR or range.");
      else candidates.push({ row, name: rawName, entries });
    }
  }
  const badEntries = rowsWithBadEntries(candidates);
  return (library) => {
    const after = new Map<string, SharedObjectInput>(library.map(({ kind, name, items, description }) => [name, { kind, name, items, description }]));
    const before = new Map(library.map((object) => [object.name, object]));
    const results: CsvRowReport[] = [...report];
    const writes = new Map<string, LibraryWrite>();
    for (const { row, name, entries } of candidates) {
      const current = after.get(name);
      if (current && current.kind !== "address") {
        results.push({ row, name, result: "refused", message: `"${name}" is a shared group; CSV import only writes address objects.` });
        continue;
      }
      const input: SharedObjectInput = { kind: "address", name, items: entries, description: current?.description ?? "" };
      if (badEntries.has(row)) {
        // The words for the few refused rows come from the same check as a single save.
        results.push({ row, name, result: "refused", message: libraryProblems([input], input) ?? "The engine refused these entries." });
        continue;
      }
      after.set(name, input);
      writes.set(name, { input, existing: before.get(name) ?? null });
      results.push({ row, name, result: current ? "updated" : "created", message: entries.join(" ") });
    }
    results.sort((a, b) => a.row - b.row);
    const all = [...after.values()];
    const written = [...writes.values()];
    // The whole library once: a group whose members the import changed must still resolve.
    const whole = written.length > 0 ? libraryProblems(all, written[0].input) : null;
    if (whole !== null) throw new Refusal(`Nothing was imported: the library would not be valid. ${whole}`, 400, { field: "csv" });
    const touched = new Map(written.filter(({ input, existing }) => !existing || !sameValue(existing, input)).map((write) => [write.input.name, `${changeWords(write)} (CSV import)`]));
    const summary = `address objects from CSV: ${someNames(written.map(({ input, existing }) => `${input.name} ${existing ? "updated" : "created"}`))}`;
    return { after: all, writes: written, touched, summary, report: results };
  };
}

/** A device the change gives a new revision: its current revision, the document it becomes, and the changed names it uses. */
type DeviceRevisionPlan = { current: DeviceAtRevision; document: ModelDocument; shared: SharedLibrary; effective: ModelDocument; changes: DocumentChange[]; uses: string[] };

/**
 * The devices whose current revision uses a name the change sets, directly or through shared
 * groups (before or after it), validated with the library after it. A device whose model comes
 * out the same (say, only a description changed) keeps its revision.
 */
function devicePlans(plan: LibraryPlan, before: SharedLibrary, devices: readonly DeviceAtRevision[]): { revised: DeviceRevisionPlan[]; unchanged: string[] } {
  const after = libraryOf(plan.after);
  const revised: DeviceRevisionPlan[] = [];
  const unchanged: string[] = [];
  if (plan.touched.size === 0) return { revised, unchanged };
  for (const current of devices) {
    const uses = [...new Set([...namesIn(sharedObjectsUsedBy(current.document, before)), ...namesIn(sharedObjectsUsedBy(current.document, after))])].filter((name) => plan.touched.has(name));
    if (uses.length === 0) continue;
    const validated = validateDocument(current.document, after);
    if (!validated.ok) {
      const problems = validated.errors.map((issue) => `${issue.path || "document"}: ${issue.message}`).join(" · ");
      throw new Refusal(`Not saved: device ${current.device.name} would not be valid with this change. ${problems}`, 400, { field: "items" });
    }
    const changes = diffDocuments(current.effective, validated.effective);
    if (changes.length === 0) unchanged.push(current.device.name);
    else revised.push({ current, document: validated.document, shared: validated.shared, effective: validated.effective, changes, uses: uses.sort() });
  }
  return { revised, unchanged };
}

// ---------------------------------------------------------------------------------------------
// The preview

/** What the confirm step sends back: the library and the device revisions the preview showed. */
export type SharedChangeConfirmation = { library: string; bases: string };

export type DeviceEffect = {
  deviceId: string;
  deviceName: string;
  siteName: string;
  revision: number;
  /** The model's own changes (the shared objects' new values), as the history page lists them. */
  changes: DocumentChange[];
  exposure: ExposureChange;
};

/**
 * What the organisation's change policy says of a change (docs/decisions/017): whether changes
 * go through proposals, and the devices on which this one moves sources (its exposure diff is
 * not empty) — under the policy those make it a break-glass step.
 */
export type LibraryChangePolicy = { throughProposals: boolean; moving: string[] };

export type SharedChangePreview = {
  summary: string;
  /** Devices that get a new revision, by name. */
  devices: DeviceEffect[];
  policy: LibraryChangePolicy;
  /** Devices that use the object but whose model does not change. */
  unchanged: string[];
  confirmation: SharedChangeConfirmation;
  report: CsvReport | null;
};

/** "id:number" per device, sorted: the revisions a save must still find current. */
function basesOf(revised: readonly DeviceRevisionPlan[]): string {
  return revised
    .map(({ current }) => `${current.device.id}:${current.revision.number}`)
    .sort()
    .join(",");
}

function effectOf(plan: DeviceRevisionPlan): DeviceEffect {
  const { current } = plan;
  const after = compileModel(plan.effective);
  // The repository's findings of the current revision; the new model's are computed here once.
  const diff = diffModels(current.analysis.compiled, after, { findings: { before: deviceRevisions.findingsOf(current), after: findings(after) } });
  return {
    deviceId: current.device.id,
    deviceName: current.device.name,
    siteName: current.device.site.name,
    revision: current.revision.number,
    changes: plan.changes,
    exposure: exposureChangeOf(diff, current.effective.device.timezone),
  };
}

async function throughProposals(organisationId: string, transaction?: Transaction): Promise<boolean> {
  const organisation = await Organisation.findByPk(organisationId, { attributes: ["id", "changesThroughProposals"], transaction });
  return organisation?.changesThroughProposals ?? false;
}

async function preview(organisationId: string, planner: Planner): Promise<SharedChangePreview> {
  const library = await listSharedObjects(organisationId);
  const devices = await deviceRevisions.current(organisationId);
  const fingerprint = fingerprintOf(library);
  const plan = planner(library, devices, fingerprint);
  const { revised, unchanged } = devicePlans(plan, libraryOf(library), devices);
  const effects = revised.map(effectOf);
  return {
    summary: plan.summary,
    devices: effects,
    policy: { throughProposals: await throughProposals(organisationId), moving: effects.filter((effect) => effect.exposure.transitions > 0).map((effect) => effect.deviceName) },
    unchanged,
    confirmation: { library: fingerprint, bases: basesOf(revised) },
    report: plan.report ? csvReportOf(plan.report) : null,
  };
}

/** What saving `input` (a new object, or the one named `originalName`) would do to each device that uses it. */
export function previewSharedObjectChange(organisationId: string, originalName: string | null, input: SharedObjectInput): Promise<SharedChangePreview> {
  return preview(organisationId, planSave(originalName, input));
}

// ---------------------------------------------------------------------------------------------
// Saving

export type SavedSharedChange = { summary: string; revisions: Array<{ deviceId: string; deviceName: string; number: number }>; report: CsvReport | null; breakGlass: string | null };

/**
 * Who saves a library change and, under "changes go through proposals", why it cannot wait:
 * the break-glass reason an admin writes when the change moves sources on some device.
 */
export type LibrarySaveOptions = { role?: Role; name?: string; breakGlassReason?: string; environment?: ProposalEnvironment };

/** The devices (of those the change revises) on which some source's outcome changes: the engine's diff is not empty. */
function movingDevices(revised: readonly DeviceRevisionPlan[]): string[] {
  return revised.filter(({ current, effective }) => diffModels(current.analysis.compiled, compiledOn(current, effective).compiled).changes.length > 0).map(({ current }) => current.device.name);
}

/**
 * The change policy's verdict on a library change (docs/decisions/017): null when it may be
 * saved as it is, else the break-glass reason it is saved with. Refused (403) when changes go
 * through proposals, the change moves sources on a device and no admin gives a written reason.
 */
function breakGlassOf(moving: readonly string[], options: LibrarySaveOptions): string | null {
  if (moving.length === 0) return null;
  const names = moving.length <= 4 ? moving.join(", ") : `${moving.slice(0, 3).join(", ")} and ${moving.length - 3} more devices`;
  const why = `Not saved: in this organisation changes go through proposals, and this change moves sources on ${names}. A shared object has one value on every device, so it cannot be proposed per device: save the new value as a new shared object (no device uses it yet), then propose on each device to use it`;
  if (!options.role || !hasAtLeastRole(options.role, "admin")) throw new Refusal(`${why}. An admin can save it directly in an emergency (break-glass), with a written reason.`, 403);
  const reason = options.breakGlassReason?.trim() ?? "";
  if (!reason) throw new Refusal(`${why} — or, in an emergency, save it directly (break-glass) with a written reason.`, 403, { field: "breakGlassReason" });
  if (reason.length < WRITTEN_REASON_MIN) throw new Refusal(`A break-glass change needs a written reason of at least ${WRITTEN_REASON_MIN} characters, so the next reader knows why.`, 400, { field: "breakGlassReason" });
  return reason;
}

function stalePreview(what: string): Refusal {
  return new Refusal(`Nothing was saved: ${what} since you reviewed this change. Review its effect again, then confirm.`, 409);
}

/** Refuses unless the devices to revise are exactly those the preview showed, each still at the revision it showed. */
function checkBases(revised: readonly DeviceRevisionPlan[], confirmed: string): void {
  const bases = new Map(
    confirmed
      .split(",")
      .filter(Boolean)
      .map((entry) => {
        const [id = "", number = ""] = entry.split(":");
        return [id, Number(number)] as const;
      }),
  );
  for (const { current } of revised) {
    const base = bases.get(current.device.id);
    if (base === undefined) throw stalePreview(`device ${current.device.name} started to use it`);
    if (base !== current.revision.number) {
      throw stalePreview(`device ${current.device.name} changed: revision ${current.revision.number} by ${current.revision.authorEmail || "someone"} replaced revision ${base}`);
    }
    bases.delete(current.device.id);
  }
  if (bases.size > 0) throw stalePreview("a device it would have changed no longer uses it or was deleted");
}

/**
 * Applies a planned change in one transaction: the library, a new revision of each device that
 * uses a changed object (message naming the change), and the audit entries. Refused with a 409
 * and nothing written when the library or any of those devices is no longer as the preview saw
 * it. The new revisions go to the background analysis after the commit.
 */
async function commit(organisationId: string, planner: Planner, actor: AuditActor, confirmation: SharedChangeConfirmation, options: LibrarySaveOptions): Promise<SavedSharedChange> {
  const saved = await getDatabase().transaction(async (transaction) => {
    await lockSharedLibrary(transaction, organisationId, "write");
    const library = await listSharedObjects(organisationId, transaction);
    if (fingerprintOf(library) !== confirmation.library) throw stalePreview("the shared objects changed (someone else saved one)");
    const devices = await deviceRevisions.current(organisationId, { transaction });
    const plan = planner(library, devices, confirmation.library);
    const { revised } = devicePlans(plan, libraryOf(library), devices);
    checkBases(revised, confirmation.bases);
    // The policy as it is now, on the devices as they are now (the review may be minutes old).
    const breakGlass = (await throughProposals(organisationId, transaction)) ? breakGlassOf(movingDevices(revised), options) : null;
    // Device rows locked in one order, so two changes can never wait for each other.
    const ordered = [...revised].sort((a, b) => a.current.device.id.localeCompare(b.current.device.id));
    const locked = new Map<string, DeviceAtRevision>();
    for (const { current } of ordered) {
      const found = await deviceRevisions.find(organisationId, current.device.id, { transaction, lock: true });
      if (!found || found.revision.number !== current.revision.number) throw stalePreview(`device ${current.device.name} changed or was deleted`);
      locked.set(found.device.id, found);
    }

    // New objects in one statement (a CSV import may hold thousands), changed ones one by one.
    const created = plan.writes.filter(({ existing }) => !existing);
    if (created.length > 0) {
      // One statement with the rows as one JSON parameter (Sequelize's bulkCreate took seconds for 25,000).
      await getDatabase().query(
        `INSERT INTO shared_address_objects (id, organisation_id, kind, name, items, description)
         SELECT gen_random_uuid(), :organisationId, r.kind, r.name, r.items, r.description
         FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS r(kind text, name text, items jsonb, description text)`,
        { replacements: { organisationId, rows: JSON.stringify(created.map(({ input }) => input)) }, transaction },
      );
    }
    for (const { input, existing } of plan.writes) {
      if (existing) await SharedAddressObject.update({ kind: input.kind, name: input.name, items: input.items, description: input.description }, { where: { id: existing.id, organisationId }, transaction });
    }
    const revisions: Array<{ deviceId: string; deviceName: string; number: number; revisionId: string }> = [];
    for (const entry of revised) {
      const current = locked.get(entry.current.device.id)!;
      // The message names the changes of the objects this device uses.
      const message = `Shared ${[...new Set(entry.uses.map((name) => plan.touched.get(name)))].join("; ")}`.slice(0, 500);
      const written = await writeRevision(organisationId, current, entry, entry.changes, actor, message, transaction, { audit: { sharedObjects: entry.uses } });
      if (breakGlass !== null) {
        await recordAuditEvent(actor, { organisationId, action: "device.break-glass-saved", targetType: "device", targetId: current.device.id, changes: { revision: written.number, message, reason: breakGlass, sharedObjects: entry.uses } }, transaction);
      }
      revisions.push({ deviceId: current.device.id, deviceName: current.device.name, number: written.number, revisionId: written.revisionId });
    }
    const revisionList = revisions.map(({ deviceName, number }) => ({ device: deviceName, revision: number }));
    await recordAuditEvents(
      actor,
      plan.writes.map(({ input, existing }) => ({
        organisationId,
        action: existing ? "shared-object.updated" : "shared-object.created",
        targetType: "shared-object",
        targetId: input.name,
        changes: existing
          ? { items: { from: existing.items, to: input.items }, name: { from: existing.name, to: input.name }, deviceRevisions: revisionList, ...(breakGlass === null ? {} : { breakGlass }) }
          : { kind: input.kind, items: input.items, deviceRevisions: revisionList, ...(breakGlass === null ? {} : { breakGlass }) },
      })),
      transaction,
    );
    return { summary: plan.summary, revisions, report: plan.report ? csvReportOf(plan.report) : null, breakGlass };
  });
  for (const { revisionId } of saved.revisions) revisionAnalysisQueue.enqueue(revisionId);
  const revisions = saved.revisions.map(({ deviceId, deviceName, number }) => ({ deviceId, deviceName, number }));
  if (saved.breakGlass !== null && options.role) {
    const organisation = await Organisation.findByPk(organisationId, { attributes: ["id", "slug"] });
    await mailBreakGlass(organisationId, { ...actor, role: options.role, name: options.name ?? actor.email }, options.environment ?? {}, {
      subject: `Break-glass change: shared ${saved.summary}`.slice(0, 200),
      what: `changed the shared ${saved.summary} directly, outside a proposal, which made ${revisions.map((revision) => `${revision.deviceName} r${revision.number}`).join(", ")}`,
      reason: saved.breakGlass,
      path: `/o/${organisation?.slug ?? ""}/settings/audit`,
    });
  }
  return { summary: saved.summary, revisions, report: saved.report, breakGlass: saved.breakGlass };
}

/**
 * Saves a shared object and gives each device that uses it a new revision, provided the library
 * and those devices are still as `confirmation` (from the preview) says.
 */
export function saveSharedObject(organisationId: string, originalName: string | null, input: SharedObjectInput, actor: AuditActor, confirmation: SharedChangeConfirmation, options: LibrarySaveOptions = {}): Promise<SavedSharedChange> {
  return commit(organisationId, planSave(originalName, input), actor, confirmation, options);
}

/** Deletes an unused shared object; refused with the list of its users (shared groups, devices) when it is in use. */
export async function deleteSharedObject(organisationId: string, name: string, actor: AuditActor): Promise<void> {
  await getDatabase().transaction(async (transaction) => {
    await lockSharedLibrary(transaction, organisationId, "write");
    const library = await listSharedObjects(organisationId, transaction);
    const object = library.find((candidate) => candidate.name === name);
    if (!object) throw new Refusal(`There is no shared object named "${name}".`, 404);
    const groups = library.filter((candidate) => candidate.kind === "group" && candidate.items.includes(name)).map((group) => `shared group ${group.name}`);
    const devices = devicesUsing(await deviceRevisions.current(organisationId, { transaction }), libraryOf(library), name).map((device) => `device ${device}`);
    const users = [...groups, ...devices];
    if (users.length > 0) throw new Refusal(`"${name}" is in use: ${users.join(", ")}. Remove those references first.`, 409);
    await SharedAddressObject.destroy({ where: { organisationId, name }, transaction });
    await recordAuditEvent(actor, { organisationId, action: "shared-object.deleted", targetType: "shared-object", targetId: name, changes: { items: object.items } }, transaction);
  });
}

// ---------------------------------------------------------------------------------------------
// CSV import

function csvRows(text: string): string[][] {
  try {
    return parseCsv(text);
  } catch (error) {
    // Text that is not CSV at all (a stray or unclosed quote, after which no row can be trusted).
    if (error instanceof CsvSyntaxError) throw new Refusal(`The file is not valid CSV, nothing was imported: ${error.message}.`, 400, { field: "csv" });
    throw error;
  }
}

/**
 * The last CSV import planned in this process. Importing without a confirmation reviews the
 * file and then saves it in the same request, and a confirmation saves what was reviewed: both
 * plan the same text against the same library, so the second takes the first's plan instead of
 * parsing and checking 25,000 rows again (issue 14). A plan depends only on the text and the
 * library (not on the devices), hence the key (with the organisation); the save takes the plan out, so at most one is kept.
 */
let lastCsvPlan: { key: string; plan: LibraryPlan } | null = null;

function planCsvText(organisationId: string, text: string, { keep }: { keep: boolean }): Planner {
  const textHash = createHash("sha256").update(text).digest("hex");
  return (library, devices, fingerprint) => {
    const key = `${organisationId}:${fingerprint}:${textHash}`;
    const remembered = lastCsvPlan?.key === key ? lastCsvPlan.plan : null;
    const plan = remembered ?? planCsv(csvRows(text))(library, devices, fingerprint);
    lastCsvPlan = keep ? { key, plan } : null;
    return plan;
  };
}

/** What importing the CSV would do: the row report and each device's exposure change. Saves nothing. */
export function previewSharedObjectsCsv(organisationId: string, text: string): Promise<SharedChangePreview> {
  return preview(organisationId, planCsvText(organisationId, text, { keep: true }));
}

/** Imports the CSV's good rows as one change, through the same checks and device revisions as a single save. */
export function importSharedObjectsCsv(organisationId: string, text: string, actor: AuditActor, confirmation: SharedChangeConfirmation, options: LibrarySaveOptions = {}): Promise<SavedSharedChange> {
  return commit(organisationId, planCsvText(organisationId, text, { keep: false }), actor, confirmation, options);
}
