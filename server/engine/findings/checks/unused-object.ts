// Unused objects: address objects and groups, services, service groups and schedules nothing refers to.
import type { DeviceModel } from "../../model.ts";
import { elementRef } from "../../vocabulary.ts";
import type { ElementRef } from "../../vocabulary.ts";
import type { FindingContext } from "../context.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

/**
 * How many references each name has, by kind ("address|name", "service|name",
 * "schedule|name"), and the findings they gave. After rule edits the counts are the first
 * full count (`base`) with the names whose count changed since in `delta`, so an edit costs
 * the names it touches, not a copy of every count.
 */
interface References {
  readonly base: ReadonlyMap<string, number>;
  readonly delta: ReadonlyMap<string, number>;
  readonly findings: Finding[];
  readonly byElement: ReadonlyMap<ElementRef, Finding>;
}

type Rule = DeviceModel["inboundRules"][number];

/** Past this many changed names the delta is folded into a new base. */
const MOST_DELTA_NAMES = 512;

/** Calls `each` with every name one rule refers to, by kind. */
function forRuleNames(r: Rule, each: (key: string) => void): void {
  for (const name of r.sources) each(`address|${name}`);
  for (const name of r.destinations) each(`address|${name}`);
  for (const name of r.services) each(`service|${name}`);
  each(`schedule|${r.schedule}`);
}

/** Every reference in the model, counted; after an edit of a few rules, the basis's counts with those rules' old and new names moved. */
function references(context: FindingContext, previous: References | undefined): References {
  const { engine, model } = context;
  const changed = engine.changedRuleIds;
  const basis = engine.incrementalBasis;
  if (previous !== undefined && changed !== null && basis !== undefined) return editedReferences(model, basis.model, changed, previous);
  const counts = new Map<string, number>();
  const add = (key: string) => counts.set(key, (counts.get(key) ?? 0) + 1);
  for (const r of model.inboundRules) forRuleNames(r, add);
  for (const name of model.operatorNetworks) add(`address|${name}`);
  for (const g of model.addressGroups) for (const name of g.members) add(`address|${name}`);
  for (const g of model.serviceGroups) for (const name of g.members) add(`service|${name}`);
  for (const f of model.interfaces) for (const name of f.listeners) add(`service|${name}`);
  for (const a of model.accounts) {
    for (const name of a.loginSources) add(`address|${name}`);
    for (const name of a.services) add(`service|${name}`);
  }
  const used = (kind: string, name: string) => (counts.get(`${kind}|${name}`) ?? 0) > 0;
  const unused: ElementRef[] = [];
  for (const a of model.addresses) if (!used("address", a.name)) unused.push(elementRef("address", a.name));
  for (const g of model.addressGroups) if (!used("address", g.name)) unused.push(elementRef("address-group", g.name));
  for (const s of model.services) if (!used("service", s.name)) unused.push(elementRef("service", s.name));
  for (const g of model.serviceGroups) if (!used("service", g.name)) unused.push(elementRef("service-group", g.name));
  for (const s of model.schedules) if (!used("schedule", s.name)) unused.push(elementRef("schedule", s.name));
  const byElement = new Map<ElementRef, Finding>();
  const findings = unused.map((element): Finding => {
    const finding = previous?.byElement.get(element) ?? unusedFinding(element);
    byElement.set(element, finding);
    return finding;
  });
  return { base: counts, delta: new Map(), findings, byElement };
}

/** After an edit of rules alone (everything but the rules is the basis's): the names of the changed rules recounted, and only their findings redone. */
function editedReferences(model: DeviceModel, before: DeviceModel, changed: ReadonlySet<string>, previous: References): References {
  const delta = new Map(previous.delta);
  const count = (key: string) => delta.get(key) ?? previous.base.get(key) ?? 0;
  const touched = new Map<string, number>();
  const move = (r: Rule, by: number) =>
    forRuleNames(r, (key) => {
      const now = count(key);
      if (!touched.has(key)) touched.set(key, now);
      delta.set(key, now + by);
    });
  for (const r of before.inboundRules) if (changed.has(r.id)) move(r, -1);
  for (const r of model.inboundRules) if (changed.has(r.id)) move(r, 1);
  let byElement = previous.byElement;
  for (const [key, was] of touched) {
    const now = count(key);
    if (was > 0 === now > 0) continue;
    const element = elementOfKey(model, key);
    if (element === undefined) continue;
    if (byElement === previous.byElement) byElement = new Map(previous.byElement);
    const mine = byElement as Map<ElementRef, Finding>;
    if (now > 0) mine.delete(element);
    else mine.set(element, unusedFinding(element));
  }
  const findings = byElement === previous.byElement ? previous.findings : [...byElement.values()];
  if (delta.size <= MOST_DELTA_NAMES) return { base: previous.base, delta, findings, byElement };
  const base = new Map(previous.base);
  for (const [key, value] of delta) base.set(key, value);
  return { base, delta: new Map(), findings, byElement };
}

/** The element a counted name stands for, or undefined for a built-in name (any, a catalogue service, all-week). */
function elementOfKey(model: DeviceModel, key: string): ElementRef | undefined {
  const bar = key.indexOf("|");
  const kind = key.slice(0, bar);
  const name = key.slice(bar + 1);
  if (kind === "address") {
    if (model.addressGroups.some((g) => g.name === name)) return elementRef("address-group", name);
    return model.addresses.some((a) => a.name === name) ? elementRef("address", name) : undefined;
  }
  if (kind === "service") {
    if (model.serviceGroups.some((g) => g.name === name)) return elementRef("service-group", name);
    return model.services.some((s) => s.name === name) ? elementRef("service", name) : undefined;
  }
  return model.schedules.some((s) => s.name === name) ? elementRef("schedule", name) : undefined;
}

function unusedFinding(element: ElementRef): Finding {
  return {
    code: "unused-object",
    severity: "info",
    title: `${element.split(":")[0]} "${element.slice(element.indexOf(":") + 1)}" is not used`,
    detail: "Nothing refers to it; remove it to keep the model readable.",
    elements: [element],
    source: SOURCES.hygiene,
  };
}

export const unusedObject: FindingCheck = {
  code: "unused-object",
  severityRule: "info",
  source: SOURCES.hygiene,
  check: (context) => context.kept<References>("unused-object", (previous) => references(context, previous)).findings,
};
