// Element-level edits of a device document. Each returns a new document (the input is never
// changed) or throws EditError; the caller validates the result with the engine. Pure.
import { Refusal } from "../errors.ts";
import type { ModelDocument } from "./document.ts";
import { findUsages, renameReferences, type ReferenceKind, type Usage } from "./references.ts";

/** A refused edit: what to tell the user, the HTTP status, the field and the usages concerned. */
export class EditError extends Refusal {
  constructor(
    message: string,
    status: 400 | 404 | 409,
    field?: string,
    readonly usages: Usage[] = [],
  ) {
    super(message, status, { field });
  }
}

export type NamedCollection = "interfaces" | "services" | "addresses" | "addressGroups" | "serviceGroups" | "schedules" | "accounts";

type ItemOf<C extends NamedCollection> = ModelDocument[C][number];

const KIND_OF: Record<NamedCollection, ReferenceKind | null> = {
  interfaces: "interface",
  services: "service",
  addresses: "address",
  addressGroups: "address",
  serviceGroups: "service",
  schedules: "schedule",
  accounts: null,
};

/** Collections that share one name space (PRODUCT.md §3: objects with groups, services with groups). */
const NAME_SPACES: Record<NamedCollection, NamedCollection[]> = {
  interfaces: ["interfaces"],
  services: ["services", "serviceGroups"],
  serviceGroups: ["services", "serviceGroups"],
  addresses: ["addresses", "addressGroups"],
  addressGroups: ["addresses", "addressGroups"],
  schedules: ["schedules"],
  accounts: ["accounts"],
};

export const ELEMENT_LABELS: Record<NamedCollection, string> = {
  interfaces: "interface",
  services: "service",
  addresses: "address object",
  addressGroups: "address group",
  serviceGroups: "service group",
  schedules: "schedule",
  accounts: "account",
};

function nameTaken(document: ModelDocument, collection: NamedCollection, name: string): boolean {
  return NAME_SPACES[collection].some((other) => (document[other] as Array<{ name: string }>).some((item) => item.name === name));
}

/** Adds an element (originalName null) or replaces one in place; a rename follows every reference. */
export function upsertNamed<C extends NamedCollection>(document: ModelDocument, collection: C, originalName: string | null, item: ItemOf<C>): ModelDocument {
  const items = document[collection] as Array<ItemOf<C>>;
  const label = ELEMENT_LABELS[collection];
  if (originalName === null) {
    if (nameTaken(document, collection, item.name)) throw new EditError(`The name "${item.name}" is already used on this device.`, 409, "name");
    return { ...document, [collection]: [...items, item] };
  }
  const index = items.findIndex((existing) => existing.name === originalName);
  if (index < 0) throw new EditError(`There is no ${label} named "${originalName}" (it may have been deleted meanwhile).`, 404);
  if (item.name !== originalName && nameTaken(document, collection, item.name)) throw new EditError(`The name "${item.name}" is already used on this device.`, 409, "name");
  const replaced = { ...document, [collection]: items.map((existing, position) => (position === index ? item : existing)) } as ModelDocument;
  const kind = KIND_OF[collection];
  return kind && item.name !== originalName ? renameReferences(replaced, kind, originalName, item.name) : replaced;
}

/** Removes an element that nothing refers to; otherwise says where it is used. */
export function deleteNamed(document: ModelDocument, collection: NamedCollection, name: string): ModelDocument {
  const items = document[collection] as Array<{ name: string }>;
  const label = ELEMENT_LABELS[collection];
  if (!items.some((item) => item.name === name)) throw new EditError(`There is no ${label} named "${name}".`, 404);
  const kind = KIND_OF[collection];
  const usages = kind ? findUsages(document, kind, name) : [];
  if (usages.length > 0) {
    throw new EditError(`The ${label} "${name}" is in use: ${usages.map((usage) => usage.where).join("; ")}. Remove those references first.`, 409, undefined, usages);
  }
  return { ...document, [collection]: items.filter((item) => item.name !== name) } as ModelDocument;
}

type Rule = ModelDocument["inboundRules"][number];

/** The next free id of the form r1, r2, … */
export function nextRuleId(document: ModelDocument): string {
  const numbers = document.inboundRules.map((rule) => /^r(\d+)$/.exec(rule.id)?.[1]).filter(Boolean).map(Number);
  let candidate = Math.max(0, ...numbers) + 1;
  while (document.inboundRules.some((rule) => rule.id === `r${candidate}`)) candidate++;
  return `r${candidate}`;
}

function ruleIndex(document: ModelDocument, id: string): number {
  const index = document.inboundRules.findIndex((rule) => rule.id === id);
  if (index < 0) throw new EditError(`There is no inbound rule "${id}" (it may have been deleted meanwhile).`, 404);
  return index;
}

function clampPosition(position: number | undefined, length: number): number {
  if (position === undefined || !Number.isInteger(position)) return length;
  return Math.min(Math.max(position - 1, 0), length);
}

/** Inserts a rule at a 1-based position (default: last). */
export function insertRule(document: ModelDocument, rule: Rule, position?: number): ModelDocument {
  if (document.inboundRules.some((existing) => existing.id === rule.id)) throw new EditError(`A rule with id "${rule.id}" exists already.`, 409, "id");
  const rules = [...document.inboundRules];
  rules.splice(clampPosition(position, rules.length), 0, rule);
  return { ...document, inboundRules: rules };
}

export function updateRule(document: ModelDocument, id: string, rule: Rule): ModelDocument {
  const index = ruleIndex(document, id);
  if (rule.id !== id && document.inboundRules.some((existing) => existing.id === rule.id)) throw new EditError(`A rule with id "${rule.id}" exists already.`, 409, "id");
  return { ...document, inboundRules: document.inboundRules.map((existing, position) => (position === index ? rule : existing)) };
}

/** Moves a rule to a 1-based position; every other rule keeps its relative order. */
export function moveRule(document: ModelDocument, id: string, toPosition: number): ModelDocument {
  const index = ruleIndex(document, id);
  const rules = [...document.inboundRules];
  const [rule] = rules.splice(index, 1);
  rules.splice(clampPosition(toPosition, rules.length), 0, rule);
  return { ...document, inboundRules: rules };
}

/** A copy right below the original, with a new id, so it can be edited into a variant. */
export function duplicateRule(document: ModelDocument, id: string): ModelDocument {
  const index = ruleIndex(document, id);
  const copy = { ...document.inboundRules[index], id: nextRuleId(document) };
  return insertRule(document, copy, index + 2);
}

export function setRuleEnabled(document: ModelDocument, id: string, enabled: boolean): ModelDocument {
  const index = ruleIndex(document, id);
  return { ...document, inboundRules: document.inboundRules.map((rule, position) => (position === index ? { ...rule, enabled } : rule)) };
}

export function deleteRule(document: ModelDocument, id: string): ModelDocument {
  ruleIndex(document, id);
  return { ...document, inboundRules: document.inboundRules.filter((rule) => rule.id !== id) };
}

export function updateSettings(document: ModelDocument, device: ModelDocument["device"]): ModelDocument {
  return { ...document, device };
}

export function setOperatorNetworks(document: ModelDocument, names: string[]): ModelDocument {
  return { ...document, operatorNetworks: names };
}
