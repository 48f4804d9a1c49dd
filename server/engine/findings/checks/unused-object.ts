// Unused objects: address objects and groups, services, service groups and schedules nothing refers to.
import type { DeviceModel } from "../../model.ts";
import { elementRef } from "../../vocabulary.ts";
import type { ElementRef } from "../../vocabulary.ts";
import type { FindingContext } from "../context.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

/** The kinds of name a reference counts under: address objects and groups share one namespace, services and service groups another. */
type NameKind = 0 | 1 | 2;
const ADDRESS: NameKind = 0;
const SERVICE: NameKind = 1;
const SCHEDULE: NameKind = 2;
type Counts = readonly [ReadonlyMap<string, number>, ReadonlyMap<string, number>, ReadonlyMap<string, number>];

/**
 * How many references each name has, by kind, and the findings they gave. After rule edits
 * the counts are the first full count (`base`) with the names whose count changed since in
 * `delta`, so an edit costs the names it touches, not a copy of every count.
 */
interface References {
  readonly base: Counts;
  readonly delta: Counts;
  /** In the order of the elements: a finding's only element is the unused one. */
  readonly findings: Finding[];
}

type Rule = DeviceModel["inboundRules"][number];

/** Past this many changed names the delta is folded into a new base. */
const MOST_DELTA_NAMES = 64;

const emptyCounts = (): [Map<string, number>, Map<string, number>, Map<string, number>] => [new Map(), new Map(), new Map()];

/** Calls `each` with every name one rule refers to, by kind. */
function forRuleNames(r: Rule, each: (kind: NameKind, name: string) => void): void {
  for (const name of r.sources) each(ADDRESS, name);
  for (const name of r.destinations) each(ADDRESS, name);
  for (const name of r.services) each(SERVICE, name);
  each(SCHEDULE, r.schedule);
}

/** Every reference in the model, counted; after an edit of a few rules, the basis's counts with those rules' old and new names moved. */
function references(context: FindingContext, previous: References | undefined): References {
  const { engine, model } = context;
  const changed = engine.changedRuleIds;
  const basis = engine.incrementalBasis;
  if (previous !== undefined && changed !== null && basis !== undefined) return editedReferences(model, basis.model, changed, previous);
  const counts = emptyCounts();
  const add = (kind: NameKind, name: string) => counts[kind].set(name, (counts[kind].get(name) ?? 0) + 1);
  for (const r of model.inboundRules) forRuleNames(r, add);
  for (const name of model.operatorNetworks) add(ADDRESS, name);
  for (const g of model.addressGroups) for (const name of g.members) add(ADDRESS, name);
  for (const g of model.serviceGroups) for (const name of g.members) add(SERVICE, name);
  for (const f of model.interfaces) for (const name of f.listeners) add(SERVICE, name);
  for (const a of model.accounts) {
    for (const name of a.loginSources) add(ADDRESS, name);
    for (const name of a.services) add(SERVICE, name);
  }
  const used = (kind: NameKind, name: string) => (counts[kind].get(name) ?? 0) > 0;
  const unused: ElementRef[] = [];
  for (const a of model.addresses) if (!used(ADDRESS, a.name)) unused.push(elementRef("address", a.name));
  for (const g of model.addressGroups) if (!used(ADDRESS, g.name)) unused.push(elementRef("address-group", g.name));
  for (const s of model.services) if (!used(SERVICE, s.name)) unused.push(elementRef("service", s.name));
  for (const g of model.serviceGroups) if (!used(SERVICE, g.name)) unused.push(elementRef("service-group", g.name));
  for (const s of model.schedules) if (!used(SCHEDULE, s.name)) unused.push(elementRef("schedule", s.name));
  // Counted afresh on a basis (too many changed rules): its findings are kept for the elements still unused.
  const prior = previous === undefined ? undefined : new Map(previous.findings.map((finding) => [finding.elements[0], finding]));
  const findings = unused.map((element): Finding => prior?.get(element) ?? unusedFinding(element));
  return { base: counts, delta: emptyCounts(), findings };
}

/** After an edit of rules alone (everything but the rules is the basis's): the names of the changed rules recounted, and only their findings redone. */
function editedReferences(model: DeviceModel, before: DeviceModel, changed: ReadonlySet<string>, previous: References): References {
  const delta: [Map<string, number>, Map<string, number>, Map<string, number>] = [new Map(previous.delta[0]), new Map(previous.delta[1]), new Map(previous.delta[2])];
  const count = (kind: NameKind, name: string) => delta[kind].get(name) ?? previous.base[kind].get(name) ?? 0;
  const touched: [Map<string, number>, Map<string, number>, Map<string, number>] = emptyCounts();
  const move = (r: Rule, by: number) =>
    forRuleNames(r, (kind, name) => {
      const now = count(kind, name);
      if (!touched[kind].has(name)) touched[kind].set(name, now);
      delta[kind].set(name, now + by);
    });
  for (const r of before.inboundRules) if (changed.has(r.id)) move(r, -1);
  for (const r of model.inboundRules) if (changed.has(r.id)) move(r, 1);
  // A name used again loses its finding; one no longer used gets one, last (the list is sorted later).
  // The few changes go into a new list; no map of every finding is copied.
  let findings = previous.findings;
  for (const kind of [ADDRESS, SERVICE, SCHEDULE]) {
    for (const [name, was] of touched[kind]) {
      const now = count(kind, name);
      if (was > 0 === now > 0) continue;
      const element = elementOfName(model, kind, name);
      if (element === undefined) continue;
      findings = now > 0 ? findings.filter((finding) => finding.elements[0] !== element) : [...findings, unusedFinding(element)];
    }
  }
  if (delta[0].size + delta[1].size + delta[2].size <= MOST_DELTA_NAMES) return { base: previous.base, delta, findings };
  const fold = (kind: NameKind) => new Map([...previous.base[kind], ...delta[kind]]);
  const base: Counts = [fold(ADDRESS), fold(SERVICE), fold(SCHEDULE)];
  return { base, delta: emptyCounts(), findings };
}

/** The element a counted name stands for, or undefined for a built-in name (any, a catalogue service, all-week). */
function elementOfName(model: DeviceModel, kind: NameKind, name: string): ElementRef | undefined {
  if (kind === ADDRESS) {
    if (model.addressGroups.some((g) => g.name === name)) return elementRef("address-group", name);
    return model.addresses.some((a) => a.name === name) ? elementRef("address", name) : undefined;
  }
  if (kind === SERVICE) {
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
