// The product's words are defined once (server/engine/vocabulary.ts, models/roles.ts) and
// everything else follows them: the engine's results, the forms' schemas, the database's
// CHECK constraints and the pages' labels and colours. Published orders are checked here.

import { readFileSync } from "node:fs";
import { Info } from "luxon";
import { Sequelize } from "sequelize";
import { describe, expect, test } from "vitest";
import { OUTCOME_LABELS, OUTCOME_TONES } from "#app/components/outcome";
import { SEVERITY_ORDER, SEVERITY_TONES } from "#app/components/severity";
import { elementEditorPath } from "#app/components/device/element-link";
import { DEVICE_SECTIONS, SECTION_OF_ELEMENT, SECTION_TITLES } from "#app/components/device/sections";
import { LAYER_TITLES, outcomeSentence, type TraceView } from "#app/utils/trace-words";
import { ROLE_DESCRIPTIONS } from "#server/auth/roles";
import {
  BUILTIN_SERVICES,
  compileModel,
  countBySeverity,
  CUSTOM_SERVICE_KINDS,
  DAYS,
  ELEMENT_KINDS,
  emptySeverityCounts,
  findings,
  INTERFACE_ROLES,
  VERSION_1_ROLES,
  isOutcome,
  isSeverity,
  LAYERS,
  NAME_PATTERN,
  OUTCOMES,
  outcomeRank,
  parseFindingKey,
  parseModel,
  PORT_PROTOCOLS,
  presentsLogin,
  SEVERITIES,
  severityAtLeast,
  severityRank,
  trace,
  type DeviceModelInput,
} from "#server/engine/index";
import { ANSWERED, LOGIN_DENIED, LOGIN_MFA, LOGIN_PASSWORD, REFUSED, SILENT } from "#server/engine/vocabulary";
import { ElementNameSchema } from "#server/http/schemas";
import { Membership } from "#models/membership";
import { Invitation } from "#models/invitation";
import { ROLES } from "#models/roles";
import { SHARED_OBJECT_KINDS } from "#models/shared-address-object";

const lab = (overrides: Partial<DeviceModelInput> = {}): DeviceModelInput => ({
  schemaVersion: 2,
  device: { name: "lab-gw" },
  interfaces: [{ name: "uplink", role: "wan", addresses: ["192.0.2.1/24", "2001:db8::1/64"], listeners: ["ssh", "https", "snmp", "ping"] }],
  accounts: [{ name: "duty-engineer", secondFactor: "none" }],
  ...overrides,
});

/** The word lists of a migration's `CHECK (column IN ('a', 'b'))` constraints. */
function checkLists(file: string, column: string): string[][] {
  const sql = readFileSync(file, "utf8");
  return [...sql.matchAll(new RegExp(`CHECK \\(${column} IN \\(([^)]*)\\)\\)`, "g"))].map((match) => match[1].split(",").map((word) => word.trim().replace(/'/g, "")));
}

function compiled(input: DeviceModelInput) {
  const parsed = parseModel(input);
  if (!parsed.ok) throw new Error(parsed.errors.map((issue) => `${issue.path}: ${issue.message}`).join("; "));
  return compileModel(parsed.model);
}

describe("Outcomes", () => {
  test("Outcomes run from least to most exposed exactly as the product brief orders them", () => {
    // PRODUCT.md §3: silent < refused < answered < login-denied < login-mfa < login-password.
    expect(OUTCOMES).toEqual(["silent", "refused", "answered", "login-denied", "login-mfa", "login-password"]);
    expect(OUTCOMES.map(outcomeRank)).toEqual([0, 1, 2, 3, 4, 5]);
    expect([SILENT, REFUSED, ANSWERED, LOGIN_DENIED, LOGIN_MFA, LOGIN_PASSWORD]).toEqual([0, 1, 2, 3, 4, 5]);
  });

  test("Only the three login outcomes show an outsider a login; only real outcome words pass the guard", () => {
    // PRODUCT.md §3 layers 5 and 6: login-denied, login-mfa and login-password present a login.
    expect(OUTCOMES.filter(presentsLogin)).toEqual(["login-denied", "login-mfa", "login-password"]);
    for (const outcome of OUTCOMES) expect(isOutcome(outcome)).toBe(true);
    for (const other of ["Silent", "login", "", " silent", null, 3]) expect(isOutcome(other)).toBe(false);
  });

  test("A probe that reaches the last layer passes through every layer, in the vocabulary's order", () => {
    // PRODUCT.md §3: arrival, inbound rules, listener, service kind, login sources, second factor.
    expect(LAYERS).toEqual(["arrival", "inbound-rules", "listener", "service-kind", "login-sources", "second-factor"]);
    const result = trace(compiled(lab()), { from: "198.51.100.7", interface: "uplink", service: "ssh", at: "2026-12-02T10:00:00Z" });
    expect(result.outcome).toBe("login-password");
    expect(result.layers.map((layer) => layer.layer)).toEqual([...LAYERS]);
  });
});

describe("The built-in catalogue", () => {
  test("Catalogue services sit on their registered ports", () => {
    const byName = new Map(BUILTIN_SERVICES.map((service) => [service.name, `${service.protocol}/${service.port ?? "echo"}`]));
    // IANA service-name and port registry: ssh 22/tcp (RFC 4251), telnet 23/tcp (RFC 854),
    // http 80/tcp and https 443/tcp (RFC 9110), snmp 161/udp.
    expect(byName.get("ssh")).toBe("tcp/22");
    expect(byName.get("telnet")).toBe("tcp/23");
    expect(byName.get("http")).toBe("tcp/80");
    expect(byName.get("https")).toBe("tcp/443");
    expect(byName.get("snmp")).toBe("udp/161");
    // RFC 792 / RFC 4443: ping is ICMP echo, no port.
    expect(byName.get("ping")).toBe("icmp/echo");
    expect(byName.size).toBe(6);
  });

  test("Catalogue kinds follow the brief: four logins, snmp answers, ping echoes", () => {
    // PRODUCT.md §3 "Services": login ssh, https, http, telnet; other snmp; echo ping.
    const kinds = Object.fromEntries(BUILTIN_SERVICES.map((service) => [service.name, service.kind]));
    expect(kinds).toEqual({ ssh: "login", https: "login", http: "login", telnet: "login", snmp: "other", ping: "echo" });
    // PRODUCT.md §4: custom services are tcp or udp, of kind login or other.
    expect(PORT_PROTOCOLS).toEqual(["tcp", "udp"]);
    expect(CUSTOM_SERVICE_KINDS).toEqual(["login", "other"]);
  });

  test("The engine matches a probe by the catalogue's protocol and port", () => {
    const device = compiled(lab());
    const probe = (service: string) => trace(device, { from: "198.51.100.7", interface: "uplink", service, at: "2026-12-02T10:00:00Z" }).outcome;
    expect(probe("tcp/22")).toBe(probe("ssh"));
    expect(probe("tcp/443")).toBe("login-password");
    expect(probe("udp/161")).toBe("answered"); // kind other → answered (PRODUCT.md §3 layer 4)
    expect(probe("icmp/echo")).toBe("answered");
    expect(probe("tcp/23")).toBe("silent"); // telnet is not listening; unlisted ports drop by default
  });
});

describe("Severities", () => {
  test("Severities run from least to most severe and are counted per word", () => {
    // The order of the CVSS v3.1 qualitative rating scale (from memory), with info for None.
    expect(SEVERITIES).toEqual(["info", "low", "medium", "high", "critical"]);
    expect(SEVERITIES.map(severityRank)).toEqual([0, 1, 2, 3, 4]);
    expect(severityRank("urgent")).toBe(-1);
    expect(severityAtLeast("high", "medium") && severityAtLeast("medium", "medium") && !severityAtLeast("low", "medium")).toBe(true);
    expect(Object.keys(emptySeverityCounts())).toEqual([...SEVERITIES]);
    expect(countBySeverity([{ severity: "high" }, { severity: "high" }, { severity: "bogus" }, { severity: "info" }])).toEqual({ info: 1, low: 0, medium: 0, high: 2, critical: 0 });
    expect(isSeverity("critical") && !isSeverity("Critical")).toBe(true);
  });
});

describe("The device model document's words", () => {
  test("Interface roles are the brief's five roles, in its order; version 1's words are read as them", () => {
    // PRODUCT.md §4 (version 2): wan, lan, dmz, management, other — WAN/LAN as RFC 7084 names a
    // router's interfaces, DMZ as NIST SP 800-41. Version 1 said outside, inside, dmz, mgmt, other.
    expect(INTERFACE_ROLES).toEqual(["wan", "lan", "dmz", "management", "other"]);
    expect(VERSION_1_ROLES).toEqual({ outside: "wan", inside: "lan", dmz: "dmz", mgmt: "management", other: "other" });
    for (const role of INTERFACE_ROLES) expect(parseModel(lab({ interfaces: [{ name: "uplink", role }] })).ok).toBe(true);
    const refused = parseModel({ ...lab(), interfaces: [{ name: "uplink", role: "perimeter" }] });
    expect(refused.ok ? [] : refused.errors.map((issue) => issue.path)).toEqual(["interfaces[0].role"]);
    for (const [before, after] of Object.entries(VERSION_1_ROLES)) {
      const read = parseModel({ ...lab(), schemaVersion: 1, interfaces: [{ name: "uplink", role: before }] });
      expect(read.ok ? read.model.interfaces[0].role : read.errors, before).toBe(after);
    }
  });

  test("Schedule days run Monday to Sunday", () => {
    // ISO 8601 weekday order (Monday = 1), as luxon's English short weekday names give it.
    expect(DAYS).toEqual(Info.weekdays("short", { locale: "en" }).map((day) => day.toLowerCase()));
  });

  test("Names are 1–63 letters, digits, dots, underscores and dashes, in the engine and in every form", () => {
    // PRODUCT.md §4: "Names are unique per kind, 1–63 chars of [A-Za-z0-9._-]".
    const good = ["a", "x".repeat(63), "edge-01.fw_2", "A.B"];
    const bad = ["", "x".repeat(64), "a b", "café", "a/b", "a:b", "tab\tname"];
    for (const name of good) {
      expect(NAME_PATTERN.test(name), name).toBe(true);
      expect(ElementNameSchema.safeParse(name).success, name).toBe(true);
      expect(parseModel(lab({ device: { name } })).ok, name).toBe(true);
      // Every name can be part of a finding key, so any finding can be dismissed.
      expect(parseFindingKey(`unused-object address:${name}`), name).not.toBeNull();
    }
    for (const name of bad) {
      expect(NAME_PATTERN.test(name), name).toBe(false);
      const form = ElementNameSchema.safeParse(name);
      expect(form.success ? "" : form.error.issues[0].message, name).toBe("Use 1–63 characters: letters, digits, dot, underscore, dash.");
      expect(parseModel(lab({ device: { name } })).ok, name).toBe(false);
    }
  });

  test("Every element a finding names has a known kind and an editor section", () => {
    const elements = findings(
      compiled(
        lab({
          interfaces: [{ name: "uplink", role: "wan", addresses: ["192.0.2.1/24"], listeners: ["http", "ssh"] }],
          addresses: [{ name: "spare-net", entries: ["198.51.100.0/28"] }],
          addressGroups: [{ name: "spare-group", members: ["any4"] }],
          services: [{ name: "spare-svc", protocol: "tcp", port: 8443, kind: "login" }],
          serviceGroups: [{ name: "spare-svcs", members: ["ssh"] }],
          schedules: [{ name: "spare-hours", windows: [{ days: ["mon"], start: "08:00", end: "09:00" }] }],
          inboundRules: [
            { id: "open", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "allow" },
            { id: "late", interface: "uplink", sources: ["any"], destinations: ["any"], services: ["ssh"], action: "deny" },
          ],
          accounts: [{ name: "admin" }],
          operatorNetworks: ["any6"],
        }),
      ),
    ).flatMap((finding) => finding.elements);
    const kinds = new Set(elements.map((element) => element.slice(0, element.indexOf(":"))));
    // This model has a finding about every kind of element.
    expect([...kinds].sort()).toEqual([...ELEMENT_KINDS].sort());
    for (const element of elements) expect(elementEditorPath("/o/x/devices/1", element), element).toMatch(/\/model\/[a-z-]+\?edit=/);
  });
});

describe("The pages' words cover every engine word", () => {
  test("Every outcome has a label, a tone and a colour token, in the engine's order", () => {
    const css = readFileSync("app/app.css", "utf8");
    expect(Object.keys(OUTCOME_LABELS)).toEqual([...OUTCOMES]);
    expect(new Set(Object.values(OUTCOME_LABELS)).size).toBe(OUTCOMES.length);
    for (const outcome of OUTCOMES) {
      expect(OUTCOME_LABELS[outcome].trim()).not.toBe("");
      expect(OUTCOME_TONES[outcome]).toContain(`text-outcome-${outcome} `);
      expect(css).toContain(`--color-outcome-${outcome}:`);
    }
  });

  test("Every outcome has its sentence and every layer its title", () => {
    const base: TraceView = { outcome: "silent", layers: [], ruleId: null, eligibleAccounts: ["duty-engineer"], interface: "uplink", service: "ssh", from: "198.51.100.7", to: "192.0.2.1" };
    const sentences = OUTCOMES.map((outcome) => outcomeSentence({ ...base, outcome }));
    expect(new Set(sentences).size).toBe(OUTCOMES.length);
    expect(Object.keys(LAYER_TITLES)).toEqual([...LAYERS]);
  });

  test("Every severity has a tone, and lists show the most severe first", () => {
    expect(Object.keys(SEVERITY_TONES).sort()).toEqual([...SEVERITIES].sort());
    expect(SEVERITY_ORDER).toEqual(["critical", "high", "medium", "low", "info"]);
  });

  test("Every element kind opens an editor section, and every section has a tab title", () => {
    expect(Object.keys(SECTION_OF_ELEMENT).sort()).toEqual([...ELEMENT_KINDS].sort());
    for (const section of Object.values(SECTION_OF_ELEMENT)) expect(DEVICE_SECTIONS).toContain(section);
    expect(Object.keys(SECTION_TITLES)).toEqual([...DEVICE_SECTIONS]);
  });
});

describe("Organisation roles", () => {
  test("Every role has a description, and the models and the database accept exactly the roles", () => {
    // PRODUCT.md §6: owner, admin, engineer, reviewer, trainee.
    expect([...ROLES].reverse()).toEqual(["owner", "admin", "engineer", "reviewer", "trainee"]);
    expect(Object.keys(ROLE_DESCRIPTIONS)).toEqual([...ROLES]);
    const sequelize = new Sequelize("postgres://nobody@127.0.0.1:1/none", { logging: false });
    Membership.initModel(sequelize);
    Invitation.initModel(sequelize);
    expect(Membership.getAttributes().role.validate).toEqual({ isIn: [ROLES] });
    expect(Invitation.getAttributes().role.validate).toEqual({ isIn: [ROLES] });
    // Migrations keep their own copy (they must not change with the code); it must agree.
    expect(checkLists("migrations/20261201-0001-foundation.ts", "role")).toEqual([[...ROLES], [...ROLES]]);
  });

  test("The database accepts exactly the engine's severities and the shared object kinds", () => {
    expect(checkLists("migrations/20261201-0003-finding-dismissals.ts", "severity")).toEqual([[...SEVERITIES]]);
    expect(checkLists("migrations/20261201-0002-device-workspace.ts", "kind")).toEqual([[...SHARED_OBJECT_KINDS]]);
    expect(checkLists("migrations/20261202-0001-revision-analyses.ts", "worst_outside_outcome")).toEqual([[...OUTCOMES]]);
  });
});
