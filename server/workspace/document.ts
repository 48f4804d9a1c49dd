// The device model document as the workspace stores and edits it. Pure: no I/O.
import { MODEL_SCHEMA_VERSION, parseModel, type DeviceModel, type ValidationIssue, type VersionOneModel } from "../engine/index.ts";
import { documentExportText, MAX_MODEL_DOCUMENT_BYTES, sizeWords } from "../validation/limits.ts";
import { findTextProblem } from "../validation/text.ts";

export type ModelDocument = DeviceModel;
/** A revision's document as the database holds it: version 2, or version 1 when saved before version 2. */
export type StoredDocument = DeviceModel | VersionOneModel;

/** Organisation-level address objects and groups, as a device revision records them. */
export type SharedLibrary = {
  addresses: Array<{ name: string; entries: string[] }>;
  addressGroups: Array<{ name: string; members: string[] }>;
};

export const EMPTY_LIBRARY: SharedLibrary = { addresses: [], addressGroups: [] };

/** A new device's first document: only its settings, everything else empty. */
export function newDocument(name: string, timezone = "UTC"): unknown {
  return { schemaVersion: MODEL_SCHEMA_VERSION, device: { name, timezone, defaultInbound: "allow", unlistenedPort: "drop" } };
}

/** Every name a document uses where an address object or group is expected. */
// Runs before the engine has checked the document's shape, so every list may be missing or
// not a list at all; anything malformed is left for the engine to report with its path.
function referencedAddressNames(document: Partial<ModelDocument>): Set<string> {
  const names = new Set<string>();
  const listOf = (value: unknown): unknown[] => (Array.isArray(value) ? value : []);
  const add = (value: unknown) => {
    for (const name of listOf(value)) if (typeof name === "string") names.add(name);
  };
  const records = (value: unknown) => listOf(value).filter((item): item is Record<string, unknown> => typeof item === "object" && item !== null);
  for (const rule of records(document.inboundRules)) {
    add(rule.sources);
    add(rule.destinations);
  }
  for (const group of records(document.addressGroups)) add(group.members);
  for (const account of records(document.accounts)) add(account.loginSources);
  add(document.operatorNetworks);
  return names;
}

/**
 * The shared objects a document reaches (through shared groups too) and does not define
 * itself: what a revision must record and what the engine must see.
 */
export function sharedObjectsUsedBy(document: Partial<ModelDocument>, library: SharedLibrary): SharedLibrary {
  const namesOf = (value: unknown) => (Array.isArray(value) ? value : []).map((item: unknown) => (typeof item === "object" && item !== null ? (item as { name?: unknown }).name : undefined));
  const local = new Set([...namesOf(document.addresses), ...namesOf(document.addressGroups)]);
  const addresses = new Map(library.addresses.map((object) => [object.name, object]));
  const groups = new Map(library.addressGroups.map((group) => [group.name, group]));
  const used: SharedLibrary = { addresses: [], addressGroups: [] };
  const seen = new Set<string>();
  const pending = [...referencedAddressNames(document)];
  while (pending.length > 0) {
    const name = pending.pop()!;
    if (seen.has(name) || local.has(name)) continue;
    seen.add(name);
    const object = addresses.get(name);
    if (object) used.addresses.push(object);
    const group = groups.get(name);
    if (group) {
      used.addressGroups.push(group);
      pending.push(...group.members);
    }
  }
  used.addresses.sort((a, b) => a.name.localeCompare(b.name));
  used.addressGroups.sort((a, b) => a.name.localeCompare(b.name));
  return used;
}

/** The self-contained document the engine analyses and export writes: own objects plus the shared ones used. */
export function effectiveDocument(document: ModelDocument, shared: SharedLibrary): ModelDocument {
  return {
    ...document,
    addresses: [...document.addresses, ...shared.addresses],
    addressGroups: [...document.addressGroups, ...shared.addressGroups],
  };
}

/** `upgradedFrom` is there when the input was a version-1 document (the result is version 2). */
export type ValidatedDocument =
  | { ok: true; document: ModelDocument; shared: SharedLibrary; effective: ModelDocument; warnings: readonly ValidationIssue[]; upgradedFrom?: 1 }
  | { ok: false; errors: readonly ValidationIssue[]; warnings: readonly ValidationIssue[]; /** Over MAX_MODEL_DOCUMENT_BYTES (a 413, not a 400). */ tooLarge?: true };

/**
 * Validates a device document together with the shared objects it uses (a device's own
 * object of the same name wins over a shared one). The stored form is
 * the engine's normalised model without the shared objects, so defaults are explicit and
 * CIDRs canonical in every revision.
 */
export function validateDocument(input: unknown, library: SharedLibrary): ValidatedDocument {
  if (!input || typeof input !== "object") return { ok: false, errors: [{ path: "", message: "the document must be a JSON object" }], warnings: [] };
  // Text that PostgreSQL's jsonb would refuse (NUL, lone surrogates) or that misleads (control characters).
  const badText = findTextProblem(input);
  if (badText) return { ok: false, errors: [{ path: badText.path, message: badText.problem.replace(/\.$/, "") }], warnings: [] };
  const candidate = input as Partial<ModelDocument>;
  const shared = sharedObjectsUsedBy(candidate, library);
  // A non-list is passed on untouched so the engine reports it at its own path.
  const merged = {
    ...candidate,
    addresses: Array.isArray(candidate.addresses) || candidate.addresses === undefined ? [...(candidate.addresses ?? []), ...shared.addresses] : candidate.addresses,
    addressGroups: Array.isArray(candidate.addressGroups) || candidate.addressGroups === undefined ? [...(candidate.addressGroups ?? []), ...shared.addressGroups] : candidate.addressGroups,
  };
  const parsed = parseModel(merged);
  if (!parsed.ok) return { ok: false, errors: parsed.errors, warnings: parsed.warnings };
  const sharedNames = new Set([...shared.addresses, ...shared.addressGroups].map((object) => object.name));
  const isShared = (object: { name: string }) => sharedNames.has(object.name);
  const document: ModelDocument = {
    ...parsed.model,
    addresses: parsed.model.addresses.filter((object) => !isShared(object)),
    addressGroups: parsed.model.addressGroups.filter((group) => !isShared(group)),
  };
  // The shared objects as the engine normalised them (canonical CIDRs), like the rest of the revision.
  const normalisedShared: SharedLibrary = { addresses: parsed.model.addresses.filter(isShared), addressGroups: parsed.model.addressGroups.filter(isShared) };
  const exportedBytes = new TextEncoder().encode(documentExportText(parsed.model)).length;
  if (exportedBytes > MAX_MODEL_DOCUMENT_BYTES) {
    return { ok: false, errors: [{ path: "", message: `the model would be ${sizeWords(exportedBytes)} as exported; the most Sallyport stores (and so can import again) is ${sizeWords(MAX_MODEL_DOCUMENT_BYTES)}` }], warnings: [], tooLarge: true };
  }
  return { ok: true, document, shared: normalisedShared, effective: parsed.model, warnings: parsed.warnings, ...(parsed.upgradedFrom ? { upgradedFrom: parsed.upgradedFrom } : {}) };
}

/**
 * A stored revision in the current version. Revisions never change, so one saved in version 1
 * is upgraded each time it is read, through the engine's parse step (with the shared objects
 * it used, which it names); a version-2 revision is returned as it is, without parsing.
 */
export function currentRevision(document: StoredDocument, shared: SharedLibrary): { document: ModelDocument; shared: SharedLibrary } {
  if (document.schemaVersion === MODEL_SCHEMA_VERSION) return { document, shared };
  const validated = validateDocument(document, shared);
  // A version-1 revision was valid when saved, and the upgrade only renames: this is a bug.
  if (!validated.ok) throw new Error(`a version-1 revision does not upgrade: ${validated.errors.map((issue) => `${issue.path}: ${issue.message}`).join("; ")}`);
  return { document: validated.document, shared: validated.shared };
}
