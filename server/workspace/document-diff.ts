// A readable difference between two device documents: what a reviewer reads in the revision
// history and what a conflict message lists. Pure.
import { ruleMoves } from "../engine/index.ts";
import type { RuleMove } from "../engine/index.ts";
import type { ModelDocument } from "./document.ts";

export type DocumentChange = {
  section: string;
  change: "added" | "removed" | "changed" | "moved";
  element: string;
  details: string[];
};

const SECTIONS = [
  ["interfaces", "Interfaces"],
  ["addresses", "Address objects"],
  ["addressGroups", "Address groups"],
  ["services", "Services"],
  ["serviceGroups", "Service groups"],
  ["schedules", "Schedules"],
  ["accounts", "Accounts"],
] as const;

function show(value: unknown): string {
  if (Array.isArray(value)) return value.length === 0 ? "(none)" : value.map((item) => (typeof item === "string" ? item : JSON.stringify(item))).join(", ");
  if (typeof value === "string") return value === "" ? '""' : value;
  return JSON.stringify(value);
}

/**
 * JSON text with every object's keys in order: equal for equal values, whatever order the keys
 * came in (PostgreSQL's jsonb hands objects back with its own key order).
 */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_key, item: unknown) =>
    item !== null && typeof item === "object" && !Array.isArray(item) ? Object.fromEntries(Object.entries(item).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) : item,
  );
}

function fieldChanges(before: object, after: object, skip: string[] = []): string[] {
  const beforeFields = new Map<string, unknown>(Object.entries(before));
  const afterFields = new Map<string, unknown>(Object.entries(after));
  const keys = [...new Set([...beforeFields.keys(), ...afterFields.keys()])].filter((key) => !skip.includes(key));
  return keys
    .filter((key) => canonicalJson(beforeFields.get(key)) !== canonicalJson(afterFields.get(key)))
    .map((key) => `${key}: ${show(beforeFields.get(key))} → ${show(afterFields.get(key))}`);
}

/**
 * A move in words: its positions, and where they alone would mislead, where it went — a swap
 * of two neighbours names the other rule, and a position that reads the same before and after
 * (rules added or removed above it) names the rule now above it.
 */
function moveDetails(move: RuleMove): string[] {
  const details = [`position ${move.from} → ${move.to}`];
  if (move.swappedWith !== undefined) details.push(`swapped places with ${move.swappedWith}`);
  else if (move.from === move.to) details.push(move.below === null ? "now first, above the rules it followed before" : `now below ${move.below}`);
  return details;
}

/** Changes from `before` to `after`, section by section, rules by id with their moves. */
export function diffDocuments(before: ModelDocument, after: ModelDocument): DocumentChange[] {
  const changes: DocumentChange[] = [];
  const settings = fieldChanges(before.device, after.device);
  if (settings.length) changes.push({ section: "Settings", change: "changed", element: "device", details: settings });

  for (const [key, section] of SECTIONS) {
    const beforeItems = new Map((before[key] as Array<{ name: string }>).map((item) => [item.name, item]));
    const afterItems = new Map((after[key] as Array<{ name: string }>).map((item) => [item.name, item]));
    for (const [name, item] of afterItems) {
      const old = beforeItems.get(name);
      if (!old) changes.push({ section, change: "added", element: name, details: fieldChanges({}, item, ["name"]).map((line) => line.replace(/^(\w+): .* → /, "$1: ")) });
      else {
        const details = fieldChanges(old, item);
        if (details.length) changes.push({ section, change: "changed", element: name, details });
      }
    }
    for (const name of beforeItems.keys()) if (!afterItems.has(name)) changes.push({ section, change: "removed", element: name, details: [] });
  }

  const beforeRules = new Map(before.inboundRules.map((rule, index) => [rule.id, { rule, index }]));
  const afterRules = new Map(after.inboundRules.map((rule, index) => [rule.id, { rule, index }]));
  // The engine's move detection (a longest common subsequence of the ids): one move names the moved rule.
  const moved = new Map(
    ruleMoves(
      before.inboundRules.map((rule) => rule.id),
      after.inboundRules.map((rule) => rule.id),
    ).map((move) => [move.id, move]),
  );
  for (const [id, { rule, index }] of afterRules) {
    const old = beforeRules.get(id);
    if (!old) {
      changes.push({ section: "Inbound rules", change: "added", element: id, details: [`at position ${index + 1}`, `${rule.action} ${show(rule.sources)} → ${show(rule.destinations)} on ${rule.interface}, services ${show(rule.services)}`] });
      continue;
    }
    const details = fieldChanges(old.rule, rule);
    if (details.length) changes.push({ section: "Inbound rules", change: "changed", element: id, details });
    const move = moved.get(id);
    if (move) changes.push({ section: "Inbound rules", change: "moved", element: id, details: moveDetails(move) });
  }
  for (const id of beforeRules.keys()) if (!afterRules.has(id)) changes.push({ section: "Inbound rules", change: "removed", element: id, details: [] });

  if (canonicalJson(before.operatorNetworks) !== canonicalJson(after.operatorNetworks)) {
    changes.push({ section: "Operator networks", change: "changed", element: "operator networks", details: [`${show(before.operatorNetworks)} → ${show(after.operatorNetworks)}`] });
  }
  return changes;
}
