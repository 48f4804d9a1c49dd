// A device the field-check tests share: an invented harbour-office gateway, documentation
// addresses outside (RFC 5737), RFC 1918 inside, in two revisions. Its first revision shows the
// web console on the uplink (and lets nobody in from outside: the only account logs in from
// the office LAN); the second drops it there.
import type { DeviceModelInput } from "#server/engine/index.ts";

export const SALTMARSH: DeviceModelInput = {
  schemaVersion: 2,
  device: { name: "saltmarsh-gw", timezone: "Europe/Dublin", unlistenedPort: "reset" },
  interfaces: [
    { name: "uplink", role: "wan", addresses: ["198.51.100.20/28"], listeners: ["https", "ping"] },
    { name: "office", role: "lan", addresses: ["10.30.0.1/24"], listeners: ["https", "ssh"] },
  ],
  addresses: [{ name: "office-lan", entries: ["10.30.0.0/24"] }],
  inboundRules: [{ id: "office-admin", interface: "office", sources: ["office-lan"], destinations: ["any"], services: ["https", "ssh"], action: "allow" }],
  accounts: [{ name: "ops-maeve", loginSources: ["office-lan"], secondFactor: "totp" }],
  operatorNetworks: ["office-lan"],
};

/** The next revision: the web console is dropped on the uplink. */
export const SALTMARSH_R2: DeviceModelInput = {
  ...SALTMARSH,
  inboundRules: [{ id: "drop-uplink-web", interface: "uplink", sources: ["any"], destinations: ["any"], services: ["https"], action: "deny" }, ...(SALTMARSH.inboundRules ?? [])],
};
