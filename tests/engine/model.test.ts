// Validation of the device model document: every error names its path.

import { describe, expect, test } from "vitest";
import { compileModel, parseModel } from "#server/engine/index.ts";
import { parsedEntries } from "#server/engine/model.ts";
import type { DeviceModelInput } from "#server/engine/index.ts";

const base = (): DeviceModelInput => ({
  schemaVersion: 2,
  device: { name: "lab-fw" },
  interfaces: [{ name: "outside", role: "wan", addresses: ["192.0.2.1/24"], listeners: ["https"] }],
  addresses: [{ name: "noc", entries: ["198.51.100.0/26"] }],
  inboundRules: [{ id: "r1", interface: "outside", sources: ["noc"], destinations: ["any"], services: ["https"], action: "allow" }],
  accounts: [{ name: "ops", loginSources: ["noc"], secondFactor: "totp" }],
});

function errorsOf(doc: unknown): string[] {
  const result = parseModel(doc);
  return result.ok ? [] : result.errors.map((e) => `${e.path}: ${e.message}`);
}

describe("a valid document", () => {
  test("gets every default filled in", () => {
    const result = parseModel(base());
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    const m = result.model;
    expect(m.device).toEqual({ name: "lab-fw", timezone: "UTC", defaultInbound: "allow", unlistenedPort: "drop" });
    expect(m.inboundRules[0]).toMatchObject({ schedule: "all-week", enabled: true, note: "" });
    expect(m.accounts[0]).toMatchObject({ services: [], accessLevel: "full", enabled: true });
    expect(m.schedules).toEqual([]);
    expect(m.operatorNetworks).toEqual([]);
  });

  test("a CIDR with host bits is normalised with a warning naming its path", () => {
    const doc = base();
    doc.addresses = [{ name: "noc", entries: ["198.51.100.9/26"] }];
    const result = parseModel(doc);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.model.addresses[0].entries).toEqual(["198.51.100.0/26"]);
    expect(result.warnings).toEqual([{ path: "addresses[0].entries[0]", message: expect.stringContaining("normalised to 198.51.100.0/26") }]);
  });

  test("unknown fields are ignored with a warning", () => {
    const result = parseModel({ ...base(), colour: "teal" });
    expect(result.ok).toBe(true);
    expect(result.warnings.map((w) => w.path)).toEqual(["colour"]);
  });
});

describe("errors name their path", () => {
  test("an unknown address in a rule", () => {
    const doc = base();
    doc.inboundRules = [
      { id: "r1", interface: "outside", sources: ["noc"], destinations: ["any"], services: ["https"], action: "allow" },
      { id: "r2", interface: "outside", sources: ["noc"], destinations: ["any"], services: ["https"], action: "allow" },
      { id: "r3", interface: "outside", sources: ["noc"], destinations: ["any"], services: ["https"], action: "allow" },
      { id: "r4", interface: "outside", sources: ["nco"], destinations: ["any"], services: ["https"], action: "deny" },
    ];
    expect(errorsOf(doc)).toEqual(['inboundRules[3].sources[0]: unknown address "nco"']);
  });

  test("a group cycle is named", () => {
    const doc = base();
    doc.addressGroups = [
      { name: "a", members: ["noc", "b"] },
      { name: "b", members: ["a"] },
    ];
    expect(errorsOf(doc)).toEqual(['addressGroups[1].members[0]: group cycle "a" → "b" → "a"']);
  });

  test.each([
    [(d: DeviceModelInput) => (d.schemaVersion = 3 as 2), "schemaVersion"],
    [(d: DeviceModelInput) => (d.device.timezone = "Mars/Olympus"), "device.timezone"],
    [(d: DeviceModelInput) => (d.interfaces = [{ name: "bad name", addresses: [] }]), "interfaces[0].name"],
    [(d: DeviceModelInput) => (d.interfaces = [{ name: "any", addresses: [] }]), "interfaces[0].name"],
    [(d: DeviceModelInput) => (d.interfaces = [{ name: "o", addresses: ["10.0.0"] }]), "interfaces[0].addresses[0]"],
    [(d: DeviceModelInput) => (d.interfaces = [{ name: "o", addresses: ["10.0.0.1/24"] }, { name: "p", addresses: ["10.0.0.1/16"] }]), "interfaces[1].addresses[0]"],
    [(d: DeviceModelInput) => (d.interfaces = [{ name: "o", addresses: [], listeners: ["rdp"] }]), "interfaces[0].listeners[0]"],
    [(d: DeviceModelInput) => (d.addresses = [{ name: "any", entries: [] }]), "addresses[0].name"],
    [(d: DeviceModelInput) => (d.addresses = [{ name: "noc", entries: ["192.0.2.9-192.0.2.1"] }]), "addresses[0].entries[0]"],
    [(d: DeviceModelInput) => (d.addressGroups = [{ name: "noc", members: [] }]), "addressGroups[0].name"],
    [(d: DeviceModelInput) => (d.services = [{ name: "web2", protocol: "tcp", port: 443, kind: "login" }]), "services[0]"],
    [(d: DeviceModelInput) => (d.services = [{ name: "ssh", protocol: "tcp", port: 2222, kind: "login" }]), "services[0].name"],
    [(d: DeviceModelInput) => (d.services = [{ name: "x", protocol: "tcp", port: 70000, kind: "login" }]), "services[0].port"],
    [(d: DeviceModelInput) => (d.schedules = [{ name: "all-week", windows: [] }]), "schedules[0].name"],
    [(d: DeviceModelInput) => (d.schedules = [{ name: "s", windows: [{ days: ["mon"], start: "24:00", end: "08:00" }] }]), "schedules[0].windows[0].start"],
    [(d: DeviceModelInput) => (d.schedules = [{ name: "s", windows: [{ days: ["monday" as "mon"], start: "08:00", end: "09:00" }] }]), "schedules[0].windows[0].days[0]"],
    [(d: DeviceModelInput) => d.inboundRules?.push({ id: "r1", interface: "outside", sources: ["noc"], destinations: ["any"], services: ["any"], action: "deny" }), "inboundRules[1].id"],
    [(d: DeviceModelInput) => d.inboundRules?.push({ id: "", interface: "outside", sources: ["noc"], destinations: ["any"], services: ["any"], action: "deny" }), "inboundRules[1].id"],
    [(d: DeviceModelInput) => d.inboundRules?.push({ id: "r2", interface: "dmz", sources: ["noc"], destinations: ["any"], services: ["any"], action: "deny" }), "inboundRules[1].interface"],
    [(d: DeviceModelInput) => d.inboundRules?.push({ id: "r2", interface: "any", sources: ["noc"], destinations: ["any"], services: ["rdp"], action: "deny" }), "inboundRules[1].services[0]"],
    [(d: DeviceModelInput) => d.inboundRules?.push({ id: "r2", interface: "any", sources: ["noc"], destinations: ["any"], services: ["any"], schedule: "nights", action: "deny" }), "inboundRules[1].schedule"],
    [(d: DeviceModelInput) => d.inboundRules?.push({ id: "r2", interface: "any", sources: ["198.51.100.1"], destinations: ["any"], services: ["any"], action: "deny" }), "inboundRules[1].sources[0]"],
    [(d: DeviceModelInput) => (d.accounts = [{ name: "ops", loginSources: ["198.51.100.300"] }]), "accounts[0].loginSources[0]"],
    [(d: DeviceModelInput) => (d.accounts = [{ name: "ops", loginSources: ["somewhere"] }]), "accounts[0].loginSources[0]"],
    [(d: DeviceModelInput) => (d.accounts = [{ name: "ops" }, { name: "ops" }]), "accounts[1].name"],
    [(d: DeviceModelInput) => (d.accounts = [{ name: "ops", services: ["rdp"] }]), "accounts[0].services[0]"],
    [(d: DeviceModelInput) => (d.operatorNetworks = ["nowhere"]), "operatorNetworks[0]"],
  ])("%#: error at %s", (mutate, path) => {
    const doc = base();
    mutate(doc);
    const errors = errorsOf(doc);
    expect(errors.length).toBeGreaterThan(0);
    expect(errors[0].startsWith(`${path}: `)).toBe(true);
  });

  test("an account's services name login services only (PRODUCT.md §3)", () => {
    // PRODUCT.md §3 precise points: "an account's `services` name catalogue services of kind
    // `login` only (naming `ping` or `snmp` there is a validation error)".
    const doc = base();
    doc.services = [
      { name: "webconsole", protocol: "tcp", port: 8443, kind: "login" },
      { name: "syslog-in", protocol: "udp", port: 514, kind: "other" },
    ];
    doc.serviceGroups = [{ name: "admin-web", members: ["https", "webconsole"] }];
    doc.accounts = [
      { name: "ops", services: ["https", "ping", "ssh", "snmp"] },
      { name: "audit", services: ["syslog-in", "admin-web", "any", "rdp", "webconsole", "http", "telnet"] },
    ];
    expect(errorsOf(doc)).toEqual([
      'accounts[0].services[1]: "ping" is a service of kind echo (accounts name login services only)',
      'accounts[0].services[3]: "snmp" is a service of kind other (accounts name login services only)',
      'accounts[1].services[0]: "syslog-in" is a service of kind other (accounts name login services only)',
      'accounts[1].services[1]: "admin-web" is a service group (accounts name login services only)',
      'accounts[1].services[2]: "any" is not a service name (accounts name login services only; an empty list means all of them)',
      'accounts[1].services[3]: unknown service "rdp" (accounts name login services only)',
    ]);
  });

  test("every login service of the catalogue, built-in or custom, may be named by an account (PRODUCT.md §3)", () => {
    // PRODUCT.md §3 Services: login ssh, https, http, telnet; custom services of kind login.
    const doc = base();
    doc.services = [{ name: "webconsole", protocol: "tcp", port: 8443, kind: "login" }];
    doc.accounts = [{ name: "ops", services: ["https", "http", "ssh", "telnet", "webconsole"] }];
    expect(errorsOf(doc)).toEqual([]);
  });

  test("literal entries are accepted in login sources", () => {
    const doc = base();
    doc.accounts = [{ name: "ops", loginSources: ["198.51.100.0/26", "2001:db8::/48", "192.0.2.10-192.0.2.20", "noc"] }];
    expect(errorsOf(doc)).toEqual([]);
  });

  test("a document that is not an object is rejected at the root", () => {
    expect(errorsOf("nope")[0]).toMatch(/^: /);
  });
});

describe("the entries validation parsed, read again by compilation", () => {
  test("compiling reads them, and an entries array changed in place after validation is parsed afresh", () => {
    const doc = base();
    doc.addresses = [{ name: "noc", entries: ["198.51.100.0/26", "198.51.100.77", "198.51.100.90-198.51.100.99"] }];
    const result = parseModel(doc);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    const entries = result.model.addresses[0].entries;
    expect(parsedEntries(entries)?.map((r) => [r.first, r.last])).toEqual([
      [0xc6336400n, 0xc633643fn],
      [0xc633644dn, 0xc633644dn],
      [0xc633645an, 0xc6336463n],
    ]);
    expect(compileModel(result.model).addressSetOf("noc").v4).toEqual([0xc6336400n, 0xc633643fn, 0xc633644dn, 0xc633644dn, 0xc633645an, 0xc6336463n]);
    // Changed in place (not through parseModel): the ranges kept for the array no longer apply.
    entries[1] = "203.0.113.5";
    expect(parsedEntries(entries)).toBeUndefined();
    expect(compileModel(result.model).addressSetOf("noc").v4).toEqual([0xc6336400n, 0xc633643fn, 0xc633645an, 0xc6336463n, 0xcb007105n, 0xcb007105n]);
    // An array validation never saw (an edit's copy) has none.
    expect(parsedEntries([...entries])).toBeUndefined();
  });
});
