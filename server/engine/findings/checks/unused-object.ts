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
    const addressRefs = new Set<string>([
      ...model.inboundRules.flatMap((r) => [...r.sources, ...r.destinations]),
      ...model.addressGroups.flatMap((g) => g.members),
      ...model.accounts.flatMap((a) => a.loginSources),
      ...model.operatorNetworks,
    ]);
    const serviceRefs = new Set<string>([
      ...model.inboundRules.flatMap((r) => r.services),
      ...model.serviceGroups.flatMap((g) => g.members),
      ...model.interfaces.flatMap((f) => f.listeners),
      ...model.accounts.flatMap((a) => a.services),
    ]);
    const scheduleRefs = new Set(model.inboundRules.map((r) => r.schedule));
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
