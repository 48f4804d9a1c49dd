// The device model document as the workspace stores and edits it. Pure: no I/O.
import { parseModel, type DeviceModel, type ValidationIssue } from "../engine/index.ts";

export type ModelDocument = DeviceModel;

/** Organisation-level address objects and groups, as a device revision records them. */
export type SharedLibrary = {
  addresses: Array<{ name: string; entries: string[] }>;
  addressGroups: Array<{ name: string; members: string[] }>;
};

export const EMPTY_LIBRARY: SharedLibrary = { addresses: [], addressGroups: [] };

/** A new device's first document: only its settings, everything else empty. */
export function newDocument(name: string, timezone = "UTC"): unknown {
  return { schemaVersion: 1, device: { name, timezone, defaultInbound: "allow", unlistenedPort: "drop" } };
}

/** Every name a document uses where an address object or group is expected. */
function referencedAddressNames(document: Partial<ModelDocument>): Set<string> {
  const names = new Set<string>();
  for (const rule of document.inboundRules ?? []) for (const name of [...rule.sources, ...rule.destinations]) names.add(name);
  for (const group of document.addressGroups ?? []) for (const name of group.members) names.add(name);
  for (const account of document.accounts ?? []) for (const name of account.loginSources) names.add(name);
  for (const name of document.operatorNetworks ?? []) names.add(name);
  return names;
}

/**
 * The shared objects a document reaches (through shared groups too) and does not define
 * itself: what a revision must record and what the engine must see.
 */
export function sharedObjectsUsedBy(document: Partial<ModelDocument>, library: SharedLibrary): SharedLibrary {
  const local = new Set([...(document.addresses ?? []).map((object) => object.name), ...(document.addressGroups ?? []).map((group) => group.name)]);
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

export type ValidatedDocument =
  | { ok: true; document: ModelDocument; shared: SharedLibrary; effective: ModelDocument; warnings: readonly ValidationIssue[] }
  | { ok: false; errors: readonly ValidationIssue[]; warnings: readonly ValidationIssue[] };

/**
 * Validates a device document together with the shared objects it uses (a device's own
 * object of the same name wins over a shared one). The stored form is
 * the engine's normalised model without the shared objects, so defaults are explicit and
 * CIDRs canonical in every revision.
 */
export function validateDocument(input: unknown, library: SharedLibrary): ValidatedDocument {
  if (!input || typeof input !== "object") return { ok: false, errors: [{ path: "", message: "the document must be a JSON object" }], warnings: [] };
  const candidate = input as Partial<ModelDocument>;
  const shared = sharedObjectsUsedBy(candidate, library);
  const merged = {
    ...candidate,
    addresses: [...(Array.isArray(candidate.addresses) ? candidate.addresses : []), ...shared.addresses],
    addressGroups: [...(Array.isArray(candidate.addressGroups) ? candidate.addressGroups : []), ...shared.addressGroups],
  };
  const parsed = parseModel(merged);
  if (!parsed.ok) return { ok: false, errors: parsed.errors, warnings: parsed.warnings };
  const sharedNames = new Set([...shared.addresses, ...shared.addressGroups].map((object) => object.name));
  const document: ModelDocument = {
    ...parsed.model,
    addresses: parsed.model.addresses.filter((object) => !sharedNames.has(object.name)),
    addressGroups: parsed.model.addressGroups.filter((group) => !sharedNames.has(group.name)),
  };
  return { ok: true, document, shared, effective: parsed.model, warnings: parsed.warnings };
}
