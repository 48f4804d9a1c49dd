// The device editor's account form: an account names login services only (PRODUCT.md §3), and
// the refusal belongs beside the form's services field. Pure: no database.

import { describe, expect, test } from "vitest";
import { Refusal } from "#server/errors.ts";
import { planDeviceEdit } from "#server/http/device-forms.server.ts";
import { applyElementEdit, EMPTY_LIBRARY, validateDocument, type ModelDocument } from "#server/workspace/index.ts";

/** Invented scenario: a harbour office's edge appliance; RFC 5737 outside, RFC 1918 inside. */
function document(): ModelDocument {
  const validated = validateDocument(
    {
      schemaVersion: 2,
      device: { name: "quay-edge" },
      interfaces: [{ name: "inside", role: "lan", addresses: ["10.20.0.1/24"], listeners: ["https", "ssh", "webconsole"] }],
      services: [
        { name: "webconsole", protocol: "tcp", port: 8443, kind: "login" },
        { name: "syslog-in", protocol: "udp", port: 514, kind: "other" },
      ],
      serviceGroups: [{ name: "admin-web", members: ["https", "webconsole"] }],
      addresses: [{ name: "noc-net", entries: ["10.20.30.0/24"] }],
      accounts: [{ name: "ops-lena", loginSources: ["noc-net"], secondFactor: "totp" }],
    },
    EMPTY_LIBRARY,
  );
  if (!validated.ok) throw new Error(JSON.stringify(validated.errors));
  return validated.document;
}

function saveAccount(services: string): (document: ModelDocument) => ModelDocument {
  const planned = planDeviceEdit("save-account", { original: "ops-lena", name: "ops-lena", loginSources: "noc-net", secondFactor: "totp", services, accessLevel: "full", enabled: "on" });
  if (!planned?.ok) throw new Error("the form itself should be valid");
  const edit = planned.plan.edit;
  return (document) => applyElementEdit(document, edit);
}

describe("The account form names login services only (PRODUCT.md §3)", () => {
  test("built-in and custom login services are saved", () => {
    const saved = saveAccount("https\nssh\nwebconsole")(document());
    expect(saved.accounts[0].services).toEqual(["https", "ssh", "webconsole"]);
  });

  test.each([
    ["ping", '"ping" is a service of kind echo'],
    ["snmp", '"snmp" is a service of kind other'],
    ["syslog-in", '"syslog-in" is a service of kind other'],
    ["admin-web", '"admin-web" is a service group'],
  ])("%s is refused (400) beside the services field", (service, message) => {
    const edit = saveAccount(`https\n${service}`);
    expect(() => edit(document())).toThrow(
      expect.objectContaining({ constructor: Refusal, status: 400, field: "services", message: `Not saved: ${message} (accounts name login services only).` }),
    );
  });
});

describe("Interface addresses carry the link's prefix length", () => {
  const saveInterface = (addresses: string) => planDeviceEdit("save-interface", { original: "", name: "outside", role: "other", addresses, listeners: "" });

  test("addresses with a prefix length are accepted, IPv4 and IPv6", () => {
    // PRODUCT.md §4 writes interface addresses as "192.0.2.1/24", "2001:db8:1::1/64" (RFC 5737, RFC 3849).
    expect(saveInterface("192.0.2.1/24\n2001:db8:1::1/64")?.ok).toBe(true);
  });

  test.each([
    ["192.0.2.1", "“192.0.2.1” has no prefix length: add the link's, e.g. 192.0.2.1/24 (/32 for the address alone)."],
    ["2001:db8:1::1", "“2001:db8:1::1” has no prefix length: add the link's, e.g. 2001:db8:1::1/64 (/128 for the address alone)."],
  ])("a bare address (%s) is refused beside the addresses field", (address, message) => {
    expect(saveInterface(`192.0.2.9/24\n${address}`)).toEqual({ ok: false, errors: { addresses: message } });
  });
});

describe("Lists of names say when an address was typed instead", () => {
  const saveRule = (sources: string) => planDeviceEdit("save-rule", { interface: "any", sources, destinations: "any", services: "ssh", schedule: "office-hours", action: "allow" });

  test("a CIDR among a rule's sources is refused with the reason, not the name pattern", () => {
    // PRODUCT.md §3: rule sources take names; literal entries only in login sources.
    expect(saveRule("noc-net 10.0.0.0/8")).toEqual({ ok: false, errors: { sources: "“10.0.0.0/8” is an address, but this list takes the names of address objects and groups: add an address object for it first." } });
    expect(saveRule("noc net!")).toEqual({ ok: false, errors: { sources: "“net!” is not a name: names have 1–63 characters, letters, digits, dot, underscore, dash." } });
    expect(saveRule("noc-net any4")?.ok).toBe(true);
  });
});
