// The names each picker of the device editor offers, grouped by kind: what a rule's sources,
// a group's members or an account's login sources may name (PRODUCT.md §3–§4). Pure.
import { ANY_SERVICE, BUILTIN_ADDRESS_NAMES, type ServiceKind } from "#server/engine/vocabulary";
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
