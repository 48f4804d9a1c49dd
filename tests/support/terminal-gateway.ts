// An invented ferry terminal gateway the effect's unit tests share: the NOC works from
// 10.60.4.0/24 (RFC 1918) and, over IPv6, 2001:db8:4c40::/48 (RFC 3849); the harbour office's
// contractor from 198.51.100.0/25 on weekdays (RFC 5737 stands in for the internet); the whole
// internet may ping wan.
import { compileModel, parseModel, type CompiledModel, type DeviceModel, type DeviceModelInput } from "#server/engine/index";

export const TERMINAL: DeviceModelInput = {
  schemaVersion: 2,
  device: { name: "terminal-gw", timezone: "Europe/Oslo" },
  interfaces: [
    { name: "wan", role: "wan", addresses: ["203.0.113.5/24", "2001:db8:5::5/64"], listeners: ["https", "ssh", "ping"] },
    { name: "mgmt", role: "management", addresses: ["10.60.0.1/16"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "noc", entries: ["10.60.4.0/24"] },
    { name: "contractor", entries: ["198.51.100.0/25"] },
    { name: "noc-v6", entries: ["2001:db8:4c40::/48"] },
  ],
  schedules: [{ name: "weekdays", windows: [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "07:00", end: "17:00" }] }],
  inboundRules: [
    { id: "noc-in", interface: "mgmt", sources: ["noc"], destinations: ["any"], services: ["ssh", "https"], action: "allow" },
    { id: "noc-v6-ssh", interface: "wan", sources: ["noc-v6"], destinations: ["any"], services: ["ssh"], action: "allow" },
    { id: "contractor-web", interface: "wan", sources: ["contractor"], destinations: ["any"], services: ["https"], schedule: "weekdays", action: "allow" },
    { id: "ping-all", interface: "wan", sources: ["any"], destinations: ["any"], services: ["ping"], action: "allow" },
    { id: "drop", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
  ],
  accounts: [
    { name: "ops-sol", loginSources: ["noc", "noc-v6"], secondFactor: "totp" },
    { name: "contractor-kai", loginSources: ["contractor"], secondFactor: "none" },
  ],
  operatorNetworks: ["noc"],
};

export const TIMEZONE = "Europe/Oslo";

/**
 * The change the effect tests propose on TERMINAL: a deny on mgmt above the NOC's rule,
 * contractor web all week instead of weekdays, the v6 NOC's ssh on wan gone and ping no longer
 * allowed — unless `extra` rules, put before the final drop, allow some of it back.
 */
export function proposedTerminal(extra: DeviceModelInput["inboundRules"] = []): DeviceModelInput {
  return {
    ...TERMINAL,
    inboundRules: [
      { id: "mgmt-drop", interface: "mgmt", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      { id: "noc-in", interface: "mgmt", sources: ["noc"], destinations: ["any"], services: ["ssh", "https"], action: "allow" },
      { id: "contractor-web", interface: "wan", sources: ["contractor"], destinations: ["any"], services: ["https"], action: "allow" },
      ...(extra ?? []),
      { id: "drop", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
    ],
  };
}

/** A model compiled (on `basis`, when given, as a draft is compiled on its base). */
export function compiled(input: DeviceModelInput | DeviceModel, basis?: CompiledModel): CompiledModel {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(`fixture invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return compileModel(parsed.model, basis ? { basis } : {});
}
