// The device editor's account form: an account names login services only (PRODUCT.md §3), and
// the refusal belongs beside the form's services field. Pure: no database.

import { describe, expect, test } from "vitest";
import { Refusal } from "#server/errors.ts";
import { planDeviceEdit } from "#server/http/device-forms.server.ts";
import { EMPTY_LIBRARY, validateDocument, type ModelDocument } from "#server/workspace/index.ts";

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
  return planned.plan.edit;
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
