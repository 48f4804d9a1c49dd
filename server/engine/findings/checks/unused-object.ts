// Unused objects: address objects and groups, services, service groups and schedules nothing refers to.
import { elementRef } from "../../vocabulary.ts";
import type { ElementRef } from "../../vocabulary.ts";
import { SOURCES } from "../sources.ts";
import type { Finding, FindingCheck } from "../types.ts";

export const unusedObject: FindingCheck = {
  code: "unused-object",
  severityRule: "info",
  source: SOURCES.hygiene,
  check: ({ model }) => {
    // Loops rather than spread lists: a model has thousands of rules, and this runs on every edit.
    const addressRefs = new Set<string>(model.operatorNetworks);
    const serviceRefs = new Set<string>();
    const scheduleRefs = new Set<string>();
    for (const r of model.inboundRules) {
      for (const name of r.sources) addressRefs.add(name);
      for (const name of r.destinations) addressRefs.add(name);
      for (const name of r.services) serviceRefs.add(name);
      scheduleRefs.add(r.schedule);
    }
    for (const g of model.addressGroups) for (const name of g.members) addressRefs.add(name);
    for (const g of model.serviceGroups) for (const name of g.members) serviceRefs.add(name);
    for (const f of model.interfaces) for (const name of f.listeners) serviceRefs.add(name);
    for (const a of model.accounts) {
      for (const name of a.loginSources) addressRefs.add(name);
      for (const name of a.services) serviceRefs.add(name);
    }
    const unused: ElementRef[] = [
      ...model.addresses.filter((a) => !addressRefs.has(a.name)).map((a) => elementRef("address", a.name)),
      ...model.addressGroups.filter((g) => !addressRefs.has(g.name)).map((g) => elementRef("address-group", g.name)),
      ...model.services.filter((s) => !serviceRefs.has(s.name)).map((s) => elementRef("service", s.name)),
      ...model.serviceGroups.filter((g) => !serviceRefs.has(g.name)).map((g) => elementRef("service-group", g.name)),
      ...model.schedules.filter((s) => !scheduleRefs.has(s.name)).map((s) => elementRef("schedule", s.name)),
    ];
    return unused.map(
      (element): Finding => ({
        code: "unused-object",
        severity: "info",
        title: `${element.split(":")[0]} "${element.slice(element.indexOf(":") + 1)}" is not used`,
        detail: "Nothing refers to it; remove it to keep the model readable.",
        elements: [element],
        source: SOURCES.hygiene,
      }),
    );
  },
};
