// The names each picker of the device editor offers, grouped by kind: what a rule's sources,
// a group's members or an account's login sources may name (PRODUCT.md §3–§4). Pure.
import { ANY_SERVICE, BUILTIN_ADDRESS_NAMES, BUILTIN_SERVICES, type ServiceKind } from "#server/engine/vocabulary";
import type { ModelDocument, SharedLibrary } from "#server/workspace/document";
import type { ListedService } from "./listener-toggles";
import type { NameGroup } from "./name-picker";

/** The names a device's forms may use, as the section loader lists them. */
export type EditorNames = {
  interfaces: string[];
  /** The catalogue: built-in services in catalogue order, then the device's own. */
  services: Array<{ name: string; kind: ServiceKind }>;
  serviceGroups: string[];
  addressObjects: string[];
  addressGroups: string[];
  /** The organisation's shared objects not shadowed by a device object of the same name. */
  sharedAddressObjects: string[];
  sharedAddressGroups: string[];
  schedules: string[];
};

const SERVICE_KIND_HEADINGS: Record<ServiceKind, string> = {
  login: "Login services",
  other: "Other services",
  echo: "Echo",
};

/** Address objects and groups, the device's then the shared ones, then the built-ins. */
export function addressNameGroups(names: EditorNames): NameGroup[] {
  return [
    { label: "Address objects", names: names.addressObjects },
    { label: "Address groups", names: names.addressGroups },
    { label: "Shared address objects", names: names.sharedAddressObjects },
    { label: "Shared address groups", names: names.sharedAddressGroups },
    { label: "Built-in (any: IPv4 and IPv6)", names: BUILTIN_ADDRESS_NAMES },
  ];
}

/** Catalogue services by kind, then service groups, then `any` (every protocol and port). */
export function serviceNameGroups(names: EditorNames): NameGroup[] {
  const kinds = Object.keys(SERVICE_KIND_HEADINGS) as ServiceKind[];
  return [
    ...kinds.map((kind) => ({ label: SERVICE_KIND_HEADINGS[kind], names: names.services.filter((service) => service.kind === kind).map((service) => service.name) })),
    { label: "Service groups", names: names.serviceGroups },
    { label: "Built-in (every protocol and port)", names: [ANY_SERVICE] },
  ];
}

/**
 * The names a document's forms may use, with the organisation's shared objects that no device
 * object of the same name shadows: what the live editor and a proposal's draft editor offer.
 */
export function editorNamesOf(document: ModelDocument, library: SharedLibrary): EditorNames & { services: ListedService[] } {
  const serviceCatalogue: ListedService[] = [
    ...BUILTIN_SERVICES.map((service) => ({ name: service.name, kind: service.kind, protocol: service.protocol, port: service.port, builtin: true })),
    ...document.services.map((service) => ({ name: service.name, kind: service.kind, protocol: service.protocol, port: service.port, builtin: false })),
  ];
  // A device object of the same name takes precedence over a shared one.
  const ownAddressNames = new Set([...document.addresses, ...document.addressGroups].map((object) => object.name));
  const notShadowed = (objects: Array<{ name: string }>) => objects.map((object) => object.name).filter((name) => !ownAddressNames.has(name));
  return {
    interfaces: document.interfaces.map((entry) => entry.name),
    services: serviceCatalogue,
    serviceGroups: document.serviceGroups.map((group) => group.name),
    addressObjects: document.addresses.map((object) => object.name),
    addressGroups: document.addressGroups.map((group) => group.name),
    sharedAddressObjects: notShadowed(library.addresses),
    sharedAddressGroups: notShadowed(library.addressGroups),
    schedules: document.schedules.map((schedule) => schedule.name),
  };
}
