// Element edits as data: what one form of the device editor asks for, in a JSON-serialisable
// shape that can be stored with a proposal and re-applied later on another revision (bringing
// a stale proposal up to date). `applyElementEdit` runs the edit through the functions of
// edits.ts; `elementsTouchedBy` names the elements it changes, for conflict detection;
// `editsBetween` turns two whole documents into the edits that lead from one to the other
// (a proposal made from an imported or posted document). Pure.
import { z } from "zod";
import {
  ACCESS_LEVELS,
  accountServiceProblem,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  INTERFACE_ROLES,
  PORT_PROTOCOLS,
  RULE_ACTIONS,
  SECOND_FACTORS,
  UNLISTENED_PORT_ACTIONS,
} from "../engine/index.ts";
import { Refusal } from "../errors.ts";
import type { ModelDocument } from "./document.ts";
import { movedRuleIds } from "../engine/index.ts";
import { canonicalJson, diffDocuments, type DocumentChange } from "./document-diff.ts";
import {
  deleteNamed,
  deleteRule,
  duplicateRule,
  ELEMENT_LABELS,
  insertRule,
  moveRule,
  nextRuleId,
  setOperatorNetworks,
  setRuleEnabled,
  updateRule,
  updateSettings,
  upsertNamed,
  type NamedCollection,
} from "./edits.ts";

// Structure only: names, references and addresses are the engine's to judge when the edited
// document is validated, exactly as for a document typed by hand.
const TEXT = z.string().max(2_000);
const TEXTS = z.array(TEXT).max(20_000);

const InterfaceItem = z.object({ name: TEXT, role: z.enum(INTERFACE_ROLES), addresses: TEXTS, listeners: TEXTS });
const ServiceItem = z.object({ name: TEXT, protocol: z.enum(PORT_PROTOCOLS), port: z.number().int(), kind: z.enum(CUSTOM_SERVICE_KINDS) });
const AddressItem = z.object({ name: TEXT, entries: TEXTS });
const GroupItem = z.object({ name: TEXT, members: TEXTS });
const ScheduleItem = z.object({ name: TEXT, windows: z.array(z.object({ days: z.array(z.enum(DAYS)), start: TEXT, end: TEXT })).max(1_000) });
const AccountItem = z.object({
  name: TEXT,
  loginSources: TEXTS,
  secondFactor: z.enum(SECOND_FACTORS),
  services: TEXTS,
  accessLevel: z.enum(ACCESS_LEVELS),
  enabled: z.boolean(),
});
const RuleItem = z.object({
  // Empty only in a rule.insert not yet resolved: the next free id is chosen when it is applied.
  id: TEXT,
  interface: TEXT,
  sources: TEXTS,
  destinations: TEXTS,
  services: TEXTS,
  schedule: TEXT,
  action: z.enum(RULE_ACTIONS),
  enabled: z.boolean(),
  note: TEXT,
});
const DeviceSettings = z.object({ name: TEXT, timezone: TEXT, defaultInbound: z.enum(RULE_ACTIONS), unlistenedPort: z.enum(UNLISTENED_PORT_ACTIONS) });

const upsertOf = <C extends NamedCollection, S extends z.ZodType>(collection: C, item: S) =>
  z.object({ kind: z.literal("upsert"), collection: z.literal(collection), original: TEXT.nullable(), item });

/** Where a placed rule goes when the edit is re-applied: right after this rule (null: first); the position is the fallback. */
const ANCHOR = TEXT.nullable().optional();
const POSITION = z.number().int().min(1).max(1_000_000);

const COLLECTIONS = ["interfaces", "services", "addresses", "addressGroups", "serviceGroups", "schedules", "accounts"] as const satisfies readonly NamedCollection[];

export const ElementEditSchema = z.discriminatedUnion("kind", [
  z.discriminatedUnion("collection", [
    upsertOf("interfaces", InterfaceItem),
    upsertOf("services", ServiceItem),
    upsertOf("addresses", AddressItem),
    upsertOf("addressGroups", GroupItem),
    upsertOf("serviceGroups", GroupItem),
    upsertOf("schedules", ScheduleItem),
    upsertOf("accounts", AccountItem),
  ]),
  z.object({ kind: z.literal("delete"), collection: z.enum(COLLECTIONS), name: TEXT }),
  z.object({ kind: z.literal("rule.insert"), rule: RuleItem, position: POSITION.optional(), after: ANCHOR }),
  z.object({ kind: z.literal("rule.update"), ruleId: TEXT, rule: RuleItem, position: POSITION.optional(), after: ANCHOR }),
  z.object({ kind: z.literal("rule.move"), ruleId: TEXT, to: POSITION, after: ANCHOR }),
  z.object({ kind: z.literal("rule.duplicate"), ruleId: TEXT, copyId: TEXT.optional() }),
  z.object({ kind: z.literal("rule.enable"), ruleId: TEXT, enabled: z.boolean() }),
  z.object({ kind: z.literal("rule.delete"), ruleId: TEXT }),
  z.object({ kind: z.literal("settings"), device: DeviceSettings }),
  z.object({ kind: z.literal("operator-networks"), names: TEXTS }),
  // The last resort of editsBetween: the whole document, with the elements it changes.
  z.object({ kind: z.literal("replace"), document: z.custom<ModelDocument>((value) => typeof value === "object" && value !== null), touched: z.array(TEXT) }),
]);

export type ElementEdit = z.infer<typeof ElementEditSchema>;
export type ElementEditKind = ElementEdit["kind"];

// The schemas above describe the document's own element types; a drift fails typecheck here.
type Assignable<A extends B, B> = A;
export type ItemsMatchTheModel = [
  Assignable<z.infer<typeof InterfaceItem>, ModelDocument["interfaces"][number]>,
  Assignable<z.infer<typeof ServiceItem>, ModelDocument["services"][number]>,
  Assignable<z.infer<typeof AddressItem>, ModelDocument["addresses"][number]>,
  Assignable<z.infer<typeof GroupItem>, ModelDocument["addressGroups"][number]>,
  Assignable<z.infer<typeof ScheduleItem>, ModelDocument["schedules"][number]>,
  Assignable<z.infer<typeof AccountItem>, ModelDocument["accounts"][number]>,
  Assignable<z.infer<typeof RuleItem>, ModelDocument["inboundRules"][number]>,
  Assignable<z.infer<typeof DeviceSettings>, ModelDocument["device"]>,
];

/** A stored list of edits read back: typed, or a bug (they were written by this module). */
export function parseElementEdits(value: unknown): ElementEdit[] {
  return z.array(ElementEditSchema).parse(value);
}

// ---------------------------------------------------------------------------------------------
// Applying

/** The 1-based position right after the anchor rule (first when the anchor is null), leaving `id` out; undefined when there is no usable anchor. */
function anchoredPosition(document: ModelDocument, id: string, after: string | null | undefined): number | undefined {
  if (after === undefined) return undefined;
  if (after === null) return 1;
  const others = document.inboundRules.filter((rule) => rule.id !== id);
  const index = others.findIndex((rule) => rule.id === after);
  return index < 0 ? undefined : index + 2;
}

/** The rule that precedes `id` in the document (null when it is first): the anchor a re-application places it after. */
function anchorOf(document: ModelDocument, id: string): string | null {
  const index = document.inboundRules.findIndex((rule) => rule.id === id);
  return index > 0 ? document.inboundRules[index - 1].id : null;
}

/** An account names login services only (PRODUCT.md §3); said beside the form's services field. */
function checkAccountServices(document: ModelDocument, services: readonly string[]): void {
  const problems = services.map((name) => accountServiceProblem(name, document)).filter((problem) => problem !== null);
  if (problems.length > 0) throw new Refusal(`Not saved: ${problems.join("; ")}.`, 400, { field: "services" });
}

function applyUpsert(document: ModelDocument, edit: Extract<ElementEdit, { kind: "upsert" }>): ModelDocument {
  switch (edit.collection) {
    case "interfaces":
      return upsertNamed(document, "interfaces", edit.original, edit.item);
    case "services":
      return upsertNamed(document, "services", edit.original, edit.item);
    case "addresses":
      return upsertNamed(document, "addresses", edit.original, edit.item);
    case "addressGroups":
      return upsertNamed(document, "addressGroups", edit.original, edit.item);
    case "serviceGroups":
      return upsertNamed(document, "serviceGroups", edit.original, edit.item);
    case "schedules":
      return upsertNamed(document, "schedules", edit.original, edit.item);
    case "accounts":
      checkAccountServices(document, edit.item.services);
      return upsertNamed(document, "accounts", edit.original, edit.item);
  }
}

/**
 * The edit with every choice made that depends on the document it meets: a new rule's id, a
 * copy's id, and the neighbour a placed rule ends up after. Applying the resolved edit to the
 * same document gives the same result; re-applied elsewhere it means the same thing.
 */
export function resolveElementEdit(document: ModelDocument, edit: ElementEdit): ElementEdit {
  switch (edit.kind) {
    case "rule.insert": {
      const rule = edit.rule.id === "" ? { ...edit.rule, id: nextRuleId(document) } : edit.rule;
      const placed = { ...edit, rule };
      return { ...placed, after: anchorOf(applyResolved(document, placed), rule.id) };
    }
    case "rule.update":
      return edit.position === undefined ? edit : { ...edit, after: anchorOf(applyResolved(document, edit), edit.rule.id) };
    case "rule.move":
      return { ...edit, after: anchorOf(applyResolved(document, edit), edit.ruleId) };
    case "rule.duplicate":
      return edit.copyId === undefined ? { ...edit, copyId: nextRuleId(document) } : edit;
    default:
      return edit;
  }
}

function applyResolved(document: ModelDocument, edit: ElementEdit): ModelDocument {
  switch (edit.kind) {
    case "upsert":
      return applyUpsert(document, edit);
    case "delete":
      return deleteNamed(document, edit.collection, edit.name);
    case "rule.insert": {
      const rule = edit.rule.id === "" ? { ...edit.rule, id: nextRuleId(document) } : edit.rule;
      return insertRule(document, rule, anchoredPosition(document, rule.id, edit.after) ?? edit.position);
    }
    case "rule.update": {
      const updated = updateRule(document, edit.ruleId, edit.rule);
      const position = edit.position === undefined ? undefined : (anchoredPosition(updated, edit.rule.id, edit.after) ?? edit.position);
      return position === undefined ? updated : moveRule(updated, edit.rule.id, position);
    }
    case "rule.move":
      return moveRule(document, edit.ruleId, anchoredPosition(document, edit.ruleId, edit.after) ?? edit.to);
    case "rule.duplicate": {
      if (edit.copyId === undefined) return duplicateRule(document, edit.ruleId);
      const index = document.inboundRules.findIndex((rule) => rule.id === edit.ruleId);
      // duplicateRule's own refusal for a missing rule, with its words.
      if (index < 0) return duplicateRule(document, edit.ruleId);
      return insertRule(document, { ...document.inboundRules[index], id: edit.copyId }, index + 2);
    }
    case "rule.enable":
      return setRuleEnabled(document, edit.ruleId, edit.enabled);
    case "rule.delete":
      return deleteRule(document, edit.ruleId);
    case "settings":
      return updateSettings(document, edit.device);
    case "operator-networks":
      return setOperatorNetworks(document, edit.names);
    case "replace":
      return edit.document;
  }
}

/**
 * The document after the edit (the input is never changed). Refusals are those of edits.ts
 * (a missing element, a name taken, an element in use) and an account naming a service that
 * is not a login service; the caller validates the result with the engine.
 */
export function applyElementEdit(document: ModelDocument, edit: ElementEdit): ModelDocument {
  return applyResolved(document, edit);
}

/** Every edit in order. */
export function applyElementEdits(document: ModelDocument, edits: readonly ElementEdit[]): ModelDocument {
  return edits.reduce(applyElementEdit, document);
}

// ---------------------------------------------------------------------------------------------
// What an edit touches

/** An element of a document: a named element ("addresses:noc-net"), a rule ("inboundRules:r3"), the settings ("device") or the operator networks ("operatorNetworks"). */
export type ElementKey = string;

const keyOf = (collection: NamedCollection | "inboundRules", name: string): ElementKey => `${collection}:${name}`;
export const SETTINGS_KEY: ElementKey = "device";
export const OPERATOR_NETWORKS_KEY: ElementKey = "operatorNetworks";

/**
 * The elements an edit changes by itself: a renamed element under both names, a moved or
 * changed rule by its id, a copy by its new id. References a rename follows are not counted:
 * re-applied on another revision the rename follows that revision's references.
 */
export function elementsTouchedBy(edit: ElementEdit): ElementKey[] {
  switch (edit.kind) {
    case "upsert":
      return [...new Set([...(edit.original === null ? [] : [keyOf(edit.collection, edit.original)]), keyOf(edit.collection, edit.item.name)])];
    case "delete":
      return [keyOf(edit.collection, edit.name)];
    case "rule.insert":
      return edit.rule.id === "" ? [] : [keyOf("inboundRules", edit.rule.id)];
    case "rule.update":
      return [...new Set([keyOf("inboundRules", edit.ruleId), keyOf("inboundRules", edit.rule.id)])];
    case "rule.move":
    case "rule.enable":
    case "rule.delete":
      return [keyOf("inboundRules", edit.ruleId)];
    case "rule.duplicate":
      return edit.copyId === undefined ? [] : [keyOf("inboundRules", edit.copyId)];
    case "settings":
      return [SETTINGS_KEY];
    case "operator-networks":
      return [OPERATOR_NETWORKS_KEY];
    case "replace":
      return edit.touched;
  }
}

const SECTION_COLLECTIONS: Record<string, NamedCollection | "inboundRules"> = {
  Interfaces: "interfaces",
  "Address objects": "addresses",
  "Address groups": "addressGroups",
  Services: "services",
  "Service groups": "serviceGroups",
  Schedules: "schedules",
  Accounts: "accounts",
  "Inbound rules": "inboundRules",
};

/** The elements a readable diff (diffDocuments) reports as changed, as keys. */
export function elementsChangedIn(changes: readonly DocumentChange[]): ElementKey[] {
  const keys = changes.map((change) => {
    if (change.section === "Settings") return SETTINGS_KEY;
    if (change.section === "Operator networks") return OPERATOR_NETWORKS_KEY;
    const collection = SECTION_COLLECTIONS[change.section];
    return collection ? keyOf(collection, change.element) : `${change.section}:${change.element}`;
  });
  return [...new Set(keys)];
}

/** An element key in words: "address object noc-net", "inbound rule r3", "device settings". */
export function elementKeyWords(key: ElementKey): string {
  if (key === SETTINGS_KEY) return "device settings";
  if (key === OPERATOR_NETWORKS_KEY) return "operator networks";
  const [collection, ...rest] = key.split(":");
  const name = rest.join(":");
  if (collection === "inboundRules") return `inbound rule ${name}`;
  const label = (ELEMENT_LABELS as Record<string, string | undefined>)[collection];
  return label ? `${label} ${name}` : key;
}

// ---------------------------------------------------------------------------------------------
// Words

const verb = (original: string | null, name: string, label: string) => (original === null ? `Added ${label} ${name}` : original === name ? `Changed ${label} ${name}` : `Renamed ${label} ${original} to ${name}`);

/** One line about the edit, as the editor's toast and a proposal's list of edits say it. */
export function describeElementEdit(edit: ElementEdit): string {
  switch (edit.kind) {
    case "upsert":
      return verb(edit.original, edit.item.name, ELEMENT_LABELS[edit.collection]);
    case "delete":
      return `Deleted ${ELEMENT_LABELS[edit.collection]} ${edit.name}`;
    case "rule.insert":
      return `Added inbound rule${edit.rule.id ? ` ${edit.rule.id}` : ""}`;
    case "rule.update":
      return `Changed inbound rule ${edit.ruleId}`;
    case "rule.move":
      return `Moved inbound rule ${edit.ruleId} to position ${edit.to}`;
    case "rule.duplicate":
      return `Duplicated inbound rule ${edit.ruleId}`;
    case "rule.enable":
      return `${edit.enabled ? "Enabled" : "Disabled"} inbound rule ${edit.ruleId}`;
    case "rule.delete":
      return `Deleted inbound rule ${edit.ruleId}`;
    case "settings":
      return "Changed device settings";
    case "operator-networks":
      return "Changed operator networks";
    case "replace":
      return "Replaced the whole document";
  }
}

// ---------------------------------------------------------------------------------------------
// From two documents to the edits between them

const same = (a: unknown, b: unknown) => canonicalJson(a) === canonicalJson(b);

/** Groups first, so a group is gone before the members it named are deleted. */
const DELETE_ORDER: readonly NamedCollection[] = ["addressGroups", "serviceGroups", "accounts", "interfaces", "schedules", "addresses", "services"];

/**
 * Edits that turn `before` into `after`, element by element, so a proposal made from a whole
 * document can be brought up to date like one drafted in the editor: additions and changes,
 * rules changed, removed, added and moved (only the rules outside the longest run that kept
 * its order, each placed after its new neighbour), the settings and operator networks, then
 * deletions in an order that never deletes an element still in use. The result equals `after`
 * but for the order of named elements (an added one comes last). When that cannot reproduce
 * `after` (a name that moves from an address object to a group, say), the
 * answer is one "replace" edit that touches every element that differs.
 */
export function editsBetween(before: ModelDocument, after: ModelDocument): ElementEdit[] {
  try {
    const { edits, result } = elementwise(before, after);
    // The order of named elements means nothing (an added one is appended); everything else must match.
    if (diffDocuments(result, after).length === 0) return edits;
  } catch {
    // Falls through to the whole-document edit below.
  }
  const touched = new Set<ElementKey>();
  for (const collection of COLLECTIONS) {
    const names = new Set([...before[collection], ...after[collection]].map((item) => item.name));
    for (const name of names) {
      const was = before[collection].find((item) => item.name === name);
      const is = after[collection].find((item) => item.name === name);
      if (!same(was, is)) touched.add(keyOf(collection, name));
    }
  }
  const beforeOrder = before.inboundRules.map((rule) => rule.id);
  const afterOrder = after.inboundRules.map((rule) => rule.id);
  for (const id of new Set([...beforeOrder, ...afterOrder])) {
    const was = before.inboundRules.find((rule) => rule.id === id);
    const is = after.inboundRules.find((rule) => rule.id === id);
    if (!same(was, is) || beforeOrder.indexOf(id) !== afterOrder.indexOf(id)) touched.add(keyOf("inboundRules", id));
  }
  if (!same(before.device, after.device)) touched.add(SETTINGS_KEY);
  if (!same(before.operatorNetworks, after.operatorNetworks)) touched.add(OPERATOR_NETWORKS_KEY);
  return touched.size === 0 ? [] : [{ kind: "replace", document: after, touched: [...touched] }];
}

function elementwise(before: ModelDocument, after: ModelDocument): { edits: ElementEdit[]; result: ModelDocument } {
  const edits: ElementEdit[] = [];
  let document = before;
  const push = (edit: ElementEdit) => {
    const resolved = resolveElementEdit(document, edit);
    document = applyElementEdit(document, resolved);
    edits.push(resolved);
  };

  for (const collection of COLLECTIONS) {
    for (const item of after[collection]) {
      const existing = before[collection].find((candidate) => candidate.name === item.name);
      if (existing && same(existing, item)) continue;
      const original = existing ? item.name : null;
      // One arm per collection keeps the item's type tied to its collection.
      switch (collection) {
        case "interfaces":
          push({ kind: "upsert", collection, original, item: after.interfaces.find((candidate) => candidate.name === item.name)! });
          break;
        case "services":
          push({ kind: "upsert", collection, original, item: after.services.find((candidate) => candidate.name === item.name)! });
          break;
        case "addresses":
          push({ kind: "upsert", collection, original, item: after.addresses.find((candidate) => candidate.name === item.name)! });
          break;
        case "addressGroups":
          push({ kind: "upsert", collection, original, item: after.addressGroups.find((candidate) => candidate.name === item.name)! });
          break;
        case "serviceGroups":
          push({ kind: "upsert", collection, original, item: after.serviceGroups.find((candidate) => candidate.name === item.name)! });
          break;
        case "schedules":
          push({ kind: "upsert", collection, original, item: after.schedules.find((candidate) => candidate.name === item.name)! });
          break;
        case "accounts":
          push({ kind: "upsert", collection, original, item: after.accounts.find((candidate) => candidate.name === item.name)! });
          break;
      }
    }
  }

  const afterIds = new Set(after.inboundRules.map((rule) => rule.id));
  for (const rule of before.inboundRules) if (!afterIds.has(rule.id)) push({ kind: "rule.delete", ruleId: rule.id });
  for (const rule of after.inboundRules) {
    const existing = document.inboundRules.find((candidate) => candidate.id === rule.id);
    if (existing && !same(existing, rule)) push({ kind: "rule.update", ruleId: rule.id, rule });
  }
  const kept = document.inboundRules.map((rule) => rule.id);
  const moved = movedRuleIds(kept, after.inboundRules.map((rule) => rule.id).filter((id) => kept.includes(id)));
  // Each new or moved rule, in the new order, goes right after its new predecessor: the rules
  // already in place keep their order, so the last placement completes it.
  after.inboundRules.forEach((rule, index) => {
    const isNew = !kept.includes(rule.id);
    if (!isNew && !moved.has(rule.id)) return;
    const predecessor = index === 0 ? null : after.inboundRules[index - 1].id;
    const position = anchoredPosition(document, rule.id, predecessor) ?? index + 1;
    push(isNew ? { kind: "rule.insert", rule, position, after: predecessor } : { kind: "rule.move", ruleId: rule.id, to: position, after: predecessor });
  });

  if (!same(document.device, after.device)) push({ kind: "settings", device: after.device });
  if (!same(document.operatorNetworks, after.operatorNetworks)) push({ kind: "operator-networks", names: after.operatorNetworks });

  // Deletions, retried while any succeeds: a group may name another group that goes too.
  let pending = DELETE_ORDER.flatMap((collection) => before[collection].filter((item) => !after[collection].some((candidate) => candidate.name === item.name)).map((item) => ({ collection, name: item.name })));
  while (pending.length > 0) {
    const failed: typeof pending = [];
    for (const entry of pending) {
      try {
        push({ kind: "delete", collection: entry.collection, name: entry.name });
      } catch (error) {
        if (!(error instanceof Refusal)) throw error;
        failed.push(entry);
      }
    }
    if (failed.length === pending.length) throw new Refusal("elements still in use", 409);
    pending = failed;
  }
  return { edits, result: document };
}
