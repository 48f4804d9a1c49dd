// Where a document uses a name, and renaming a name everywhere it is used. Pure.
import type { ElementKind } from "../engine/index.ts";
import type { ModelDocument } from "./document.ts";

/** The kinds of element other elements refer to by name (groups share their members' name space). */
export type ReferenceKind = Extract<ElementKind, "interface" | "address" | "service" | "schedule">;

export type Usage = { path: string; where: string };

/** Every place that refers to `name` as an element of `kind`, with a readable description. */
export function findUsages(document: ModelDocument, kind: ReferenceKind, name: string): Usage[] {
  const usages: Usage[] = [];
  const add = (path: string, where: string) => usages.push({ path, where });
  document.inboundRules.forEach((rule, index) => {
    const label = `inbound rule ${rule.id} (position ${index + 1})`;
    if (kind === "interface" && rule.interface === name) add(`inboundRules[${index}].interface`, label);
    if (kind === "address") {
      rule.sources.forEach((source, position) => source === name && add(`inboundRules[${index}].sources[${position}]`, `${label}, sources`));
      rule.destinations.forEach((destination, position) => destination === name && add(`inboundRules[${index}].destinations[${position}]`, `${label}, destinations`));
    }
    if (kind === "service") rule.services.forEach((service, position) => service === name && add(`inboundRules[${index}].services[${position}]`, `${label}, services`));
    if (kind === "schedule" && rule.schedule === name) add(`inboundRules[${index}].schedule`, `${label}, schedule`);
  });
  if (kind === "address") {
    document.addressGroups.forEach((group, index) =>
      group.members.forEach((member, position) => member === name && add(`addressGroups[${index}].members[${position}]`, `address group ${group.name}`)),
    );
    document.accounts.forEach((account, index) =>
      account.loginSources.forEach((source, position) => source === name && add(`accounts[${index}].loginSources[${position}]`, `account ${account.name}, login sources`)),
    );
    document.operatorNetworks.forEach((network, position) => network === name && add(`operatorNetworks[${position}]`, "operator networks"));
  }
  if (kind === "service") {
    document.interfaces.forEach((entry, index) =>
      entry.listeners.forEach((listener, position) => listener === name && add(`interfaces[${index}].listeners[${position}]`, `interface ${entry.name}, listeners`)),
    );
    document.accounts.forEach((account, index) =>
      account.services.forEach((service, position) => service === name && add(`accounts[${index}].services[${position}]`, `account ${account.name}, services`)),
    );
    document.serviceGroups.forEach((group, index) =>
      group.members.forEach((member, position) => member === name && add(`serviceGroups[${index}].members[${position}]`, `service group ${group.name}`)),
    );
  }
  return usages;
}

/** The document with every reference to `from` (as `kind`) pointing at `to`; definitions are left to the caller. */
export function renameReferences(document: ModelDocument, kind: ReferenceKind, from: string, to: string): ModelDocument {
  if (from === to) return document;
  const swap = (value: string) => (value === from ? to : value);
  const swapAll = (values: string[]) => values.map(swap);
  return {
    ...document,
    interfaces: document.interfaces.map((entry) => (kind === "service" ? { ...entry, listeners: swapAll(entry.listeners) } : entry)),
    addressGroups: document.addressGroups.map((group) => (kind === "address" ? { ...group, members: swapAll(group.members) } : group)),
    serviceGroups: document.serviceGroups.map((group) => (kind === "service" ? { ...group, members: swapAll(group.members) } : group)),
    inboundRules: document.inboundRules.map((rule) => ({
      ...rule,
      interface: kind === "interface" ? swap(rule.interface) : rule.interface,
      sources: kind === "address" ? swapAll(rule.sources) : rule.sources,
      destinations: kind === "address" ? swapAll(rule.destinations) : rule.destinations,
      services: kind === "service" ? swapAll(rule.services) : rule.services,
      schedule: kind === "schedule" ? swap(rule.schedule) : rule.schedule,
    })),
    accounts: document.accounts.map((account) => ({
      ...account,
      loginSources: kind === "address" ? swapAll(account.loginSources) : account.loginSources,
      services: kind === "service" ? swapAll(account.services) : account.services,
    })),
    operatorNetworks: kind === "address" ? swapAll(document.operatorNetworks) : document.operatorNetworks,
  };
}
