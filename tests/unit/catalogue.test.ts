// The service catalogue as the pages list it (PRODUCT.md §3 "Services": listed grouped by kind —
// login ssh, https, http, telnet; other snmp; echo ping), and the interface editor's listener
// control built on it: switches grouped under their kind, a note per service.

import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, test } from "vitest";
import { ListenersByKind, ListenerToggles, type ListedService } from "#app/components/device/listener-toggles";
import { groupByKind, inCatalogueOrder, namesByKind } from "#server/analysis/catalogue";
import { BUILTIN_SERVICES, compileModel, parseModel, reach } from "#server/engine/index";

const BUILTINS: ListedService[] = BUILTIN_SERVICES.map((service) => ({ ...service }));
/** A device's own services (invented): a web console moved to tcp/8443 and a syslog receiver. */
const CATALOGUE: ListedService[] = [
  ...BUILTINS,
  { name: "webconsole", kind: "login", protocol: "tcp", port: 8443, builtin: false },
  { name: "syslog-in", kind: "other", protocol: "udp", port: 514, builtin: false },
];

describe("The catalogue, grouped by kind", () => {
  test("The built-in catalogue is in the brief's order, which is also the engine's output order", () => {
    // PRODUCT.md §3: "login ssh, https, http, telnet; other snmp; echo ping. This is also the order of catalogue services in every output."
    expect(BUILTIN_SERVICES.map((service) => service.name)).toEqual(["ssh", "https", "http", "telnet", "snmp", "ping"]);
    const parsed = parseModel({ schemaVersion: 2, device: { name: "lab-gw" }, interfaces: [{ name: "uplink", role: "wan", addresses: ["192.0.2.1/24"] }] });
    if (!parsed.ok) throw new Error("lab model invalid");
    const reached = reach(compileModel(parsed.model), "198.51.100.7", "2026-12-02T10:00:00Z");
    expect(reached.results.map((result) => result.service)).toEqual(["ssh", "https", "http", "telnet", "snmp", "ping"]);
  });

  test("Custom services join their kind's group, after the built-ins; kinds with nothing are left out", () => {
    expect(groupByKind(CATALOGUE).map((group) => [group.kind, group.services.map((service) => service.name)])).toEqual([
      ["login", ["ssh", "https", "http", "telnet", "webconsole"]],
      ["other", ["snmp", "syslog-in"]],
      ["echo", ["ping"]],
    ]);
    expect(namesByKind(CATALOGUE)).toEqual(["ssh", "https", "http", "telnet", "webconsole", "snmp", "syslog-in", "ping"]);
    expect(groupByKind(CATALOGUE.filter((service) => service.kind !== "other")).map((group) => group.kind)).toEqual(["login", "echo"]);
  });

  test("An interface's listeners, as stored in any order, are listed in the grouped order", () => {
    expect(inCatalogueOrder(["ping", "webconsole", "https", "snmp", "ssh"], CATALOGUE)).toEqual(["ssh", "https", "webconsole", "snmp", "ping"]);
    expect(inCatalogueOrder(["ping", "retired-svc"], CATALOGUE)).toEqual(["ping", "retired-svc"]);
  });
});

describe("The listener control", () => {
  const markup = renderToStaticMarkup(createElement(ListenerToggles, { services: CATALOGUE, checked: ["https", "telnet", "ping"], hint: "Listen only where administrators connect." }));

  test("Each kind is a group headed by the kind, in the brief's order, holding its services in catalogue order", () => {
    const legends = [...markup.matchAll(/<legend[^>]*>(.*?)<\/legend>/g)].map((match) => match[1].replace(/<[^>]+>/g, ""));
    expect(legends).toEqual(["Listeners", "Login · shows a login page or banner", "Other · answers without a login", "Echo · answers ping"]);
    const values = [...markup.matchAll(/value="([^"]+)"/g)].map((match) => match[1]);
    expect(values).toEqual(["ssh", "https", "http", "telnet", "webconsole", "snmp", "syslog-in", "ping"]);
  });

  test("Every service is a named switch posting `listeners`, on where the interface listens, with its port and a note", () => {
    const inputs = [...markup.matchAll(/<input[^>]*>/g)].map((match) => match[0]);
    expect(inputs).toHaveLength(CATALOGUE.length);
    for (const input of inputs) {
      expect(input).toContain('type="checkbox"');
      expect(input).toContain('role="switch"');
      expect(input).toContain('name="listeners"');
    }
    const checked = inputs.filter((input) => / checked=""/.test(input)).map((input) => input.match(/value="([^"]+)"/)?.[1]);
    expect(checked).toEqual(["https", "telnet", "ping"]);
    const text = markup.replace(/<[^>]+>/g, " ").replace(/\s+/g, " ");
    // Cleartext services carry the word (common practice, no source: http and telnet send credentials unencrypted).
    expect(text).toContain("http tcp/80 cleartext");
    expect(text).toContain("telnet tcp/23 cleartext");
    expect(text).toContain("ssh tcp/22 encrypted");
    expect(text).toContain("ping icmp echo any reply reveals the device");
    expect(text).toContain("webconsole tcp/8443 custom service");
  });

  test("The interfaces table lists listeners by kind, naming the kind", () => {
    const cell = renderToStaticMarkup(createElement(ListenersByKind, { listeners: ["ping", "https", "ssh"], services: CATALOGUE })).replace(/<[^>]+>/g, " ").replace(/\s+/g, " ").trim();
    expect(cell).toBe("login ssh, https echo ping");
    expect(renderToStaticMarkup(createElement(ListenersByKind, { listeners: [], services: CATALOGUE }))).toContain("none");
  });
});
