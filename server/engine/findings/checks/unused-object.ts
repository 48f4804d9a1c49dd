// Unused objects: address objects and groups, services, service groups and schedules nothing refers to.
import type { DeviceModel } from "../../model.ts";
import { elementRef } from "../../vocabulary.ts";
import type { ElementRef } from "../../vocabulary.ts";
import type { FindingContext } from "../context.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

/** How many references each name has, by kind ("address|name", "service|name", "schedule|name"), and the findings they gave. */
interface References {
  readonly counts: Map<string, number>;
  readonly findings: Finding[];
  readonly byElement: ReadonlyMap<ElementRef, Finding>;
}

type Rule = DeviceModel["inboundRules"][number];

/** Adds `by` for each name one rule refers to. */
function countRule(counts: Map<string, number>, r: Rule, by: number): void {
  const add = (key: string) => counts.set(key, (counts.get(key) ?? 0) + by);
  for (const name of r.sources) add(`address|${name}`);
  for (const name of r.destinations) add(`address|${name}`);
  for (const name of r.services) add(`service|${name}`);
  add(`schedule|${r.schedule}`);
}

/** Every reference in the model, counted; after an edit of a few rules, the basis's counts with those rules' old and new names moved. */
function references(context: FindingContext, previous: References | undefined): References {
  const { engine, model } = context;
  const changed = engine.changedRuleIds;
  const basis = engine.incrementalBasis;
  let counts: Map<string, number>;
  if (previous !== undefined && changed !== null && basis !== undefined) {
    counts = new Map(previous.counts);
    for (const r of basis.model.inboundRules) if (changed.has(r.id)) countRule(counts, r, -1);
    for (const r of model.inboundRules) if (changed.has(r.id)) countRule(counts, r, 1);
  } else {
    counts = new Map();
    const add = (key: string) => counts.set(key, (counts.get(key) ?? 0) + 1);
    for (const r of model.inboundRules) countRule(counts, r, 1);
    for (const name of model.operatorNetworks) add(`address|${name}`);
    for (const g of model.addressGroups) for (const name of g.members) add(`address|${name}`);
    for (const g of model.serviceGroups) for (const name of g.members) add(`service|${name}`);
    for (const f of model.interfaces) for (const name of f.listeners) add(`service|${name}`);
    for (const a of model.accounts) {
      for (const name of a.loginSources) add(`address|${name}`);
      for (const name of a.services) add(`service|${name}`);
    }
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
  return { counts, findings, byElement };
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
