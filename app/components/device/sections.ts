// The device editor's sections: the URL segment of each tab, its title, and which section
// edits each kind of element that findings and traces name. Pure, for loaders and components.
import type { ElementKind } from "#server/engine/vocabulary";

/** Tab order of the device editor; each is the last URL segment of `…/model/<section>`. */
export const DEVICE_SECTIONS = ["interfaces", "addresses", "services", "schedules", "rules", "accounts", "operator-networks", "settings"] as const;
export type DeviceSection = (typeof DEVICE_SECTIONS)[number];

export const SECTION_TITLES: Record<DeviceSection, string> = {
  interfaces: "Interfaces",
  addresses: "Addresses",
  services: "Services",
  schedules: "Schedules",
  rules: "Inbound rules",
  accounts: "Accounts",
  "operator-networks": "Operator networks",
  settings: "Settings",
};

export function isDeviceSection(value: unknown): value is DeviceSection {
  return typeof value === "string" && (DEVICE_SECTIONS as readonly string[]).includes(value);
}

/** The section whose editor opens an element named "kind:name". */
export const SECTION_OF_ELEMENT: Record<ElementKind, DeviceSection> = {
  interface: "interfaces",
  address: "addresses",
  "address-group": "addresses",
  service: "services",
  "service-group": "services",
  schedule: "schedules",
  rule: "rules",
  account: "accounts",
  "operator-network": "operator-networks",
};
