// The service catalogue as the pages list it: grouped by kind in the brief's order (login,
// other, echo — PRODUCT.md §3 "Services"), each group in catalogue order (the built-ins, then
// the device's custom services). Pure and browser-safe: the device editor, the reach table
// and the exposure filters list services this way.
import { SERVICE_KINDS, type ServiceKind } from "../engine/vocabulary.ts";

export type KindGroup<Service> = { kind: ServiceKind; services: Service[] };

/** The services by kind, login first; kinds with no service are left out. */
export function groupByKind<Service extends { kind: ServiceKind }>(services: readonly Service[]): Array<KindGroup<Service>> {
  return SERVICE_KINDS.map((kind) => ({ kind, services: services.filter((service) => service.kind === kind) })).filter((group) => group.services.length > 0);
}

/** Names (an interface's listeners) in the grouped catalogue order; a name the catalogue lacks keeps its place at the end. */
export function inCatalogueOrder(names: readonly string[], catalogue: ReadonlyArray<{ name: string; kind: ServiceKind }>): string[] {
  const wanted = new Set(names);
  const ordered = groupByKind(catalogue).flatMap((group) => group.services.map((service) => service.name).filter((name) => wanted.has(name)));
  const known = new Set(ordered);
  return [...ordered, ...names.filter((name) => !known.has(name))];
}

/** Every catalogue service's name, grouped by kind: the order the pages list services in. */
export function namesByKind(catalogue: ReadonlyArray<{ name: string; kind: ServiceKind }>): string[] {
  return groupByKind(catalogue).flatMap((group) => group.services.map((service) => service.name));
}
