// Random models and one-element edits of the kinds the editor makes, shared by the engine's
// properties that compare a changed model with the one before it.
import type { DeviceModel, DeviceModelInput } from "#server/engine/index.ts";
import { parseModel } from "#server/engine/index.ts";
import { SMALL_SIZE } from "#server/engine/testing/generate-model.ts";

export const MEDIUM = { ...SMALL_SIZE, interfaces: 4, rules: 30, addressObjects: 20, entries: 50, groups: 5, accounts: 5, schedules: 3 };

export function validated(input: DeviceModelInput): DeviceModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

export type Rule = DeviceModel["inboundRules"][number];
export type Edit = (model: DeviceModel, pick: () => number) => DeviceModel;

export const withRules = (model: DeviceModel, rules: Rule[]): DeviceModel => ({ ...model, inboundRules: rules });

/** One-rule edits of the kinds the editor makes. */
export const RULE_EDITS: Record<string, Edit> = {
  move: (m, pick) => {
    const rules = [...m.inboundRules];
    const [rule] = rules.splice(pick() % rules.length, 1);
    rules.splice(pick() % (rules.length + 1), 0, rule);
    return withRules(m, rules);
  },
  switch: (m, pick) => {
    const at = pick() % m.inboundRules.length;
    return withRules(m, m.inboundRules.map((r, i) => (i === at ? { ...r, enabled: !r.enabled } : r)));
  },
  action: (m, pick) => {
    const at = pick() % m.inboundRules.length;
    return withRules(m, m.inboundRules.map((r, i) => (i === at ? { ...r, action: r.action === "allow" ? "deny" : "allow" } : r)));
  },
  remove: (m, pick) => {
    const at = pick() % m.inboundRules.length;
    return withRules(m, m.inboundRules.filter((_, i) => i !== at));
  },
  add: (m, pick) => {
    const copy = { ...m.inboundRules[pick() % m.inboundRules.length], id: `added-${m.inboundRules.length}-${pick()}` };
    const rules = [...m.inboundRules];
    rules.splice(pick() % (rules.length + 1), 0, copy);
    return withRules(m, rules);
  },
  sources: (m, pick) => {
    const at = pick() % m.inboundRules.length;
    const other = m.inboundRules[pick() % m.inboundRules.length];
    return withRules(m, m.inboundRules.map((r, i) => (i === at ? { ...r, sources: other.sources } : r)));
  },
  services: (m, pick) => {
    const at = pick() % m.inboundRules.length;
    const other = m.inboundRules[pick() % m.inboundRules.length];
    return withRules(m, m.inboundRules.map((r, i) => (i === at ? { ...r, services: other.services, destinations: other.destinations } : r)));
  },
  interface: (m, pick) => {
    const at = pick() % m.inboundRules.length;
    const names = ["any", ...m.interfaces.map((f) => f.name)];
    return withRules(m, m.inboundRules.map((r, i) => (i === at ? { ...r, interface: names[pick() % names.length] } : r)));
  },
};
