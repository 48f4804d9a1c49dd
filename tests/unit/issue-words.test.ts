// The engine's validation problems in words beside a form's fields (issue 10, "Forms"): each
// problem of the edited element under its field, with "did you mean" for an unknown name of
// the right kind; the summary names the field; no document path reaches the form.
import { describe, expect, test } from "vitest";
import { ALL_WEEK_SCHEDULE } from "#server/engine/vocabulary.ts";
import {
  EMPTY_LIBRARY,
  fieldMessagesForIssues,
  parseIssuePath,
  timeZoneProblem,
  validateDocument,
  type FormTarget,
  type ModelDocument,
  type SharedLibrary,
} from "#server/workspace/index.ts";

/** Invented scenario: a harbour office's edge appliance; RFC 5737 outside, RFC 1918 inside. */
function base(): ModelDocument {
  const validated = validateDocument(
    {
      schemaVersion: 1,
      device: { name: "quay-edge", timezone: "Europe/Amsterdam" },
      interfaces: [
        { name: "outside", role: "outside", addresses: ["203.0.113.2/24"], listeners: ["https"] },
        { name: "inside", role: "inside", addresses: ["10.20.0.1/24"], listeners: ["https", "ssh"] },
      ],
      services: [{ name: "webconsole", protocol: "tcp", port: 8443, kind: "login" }],
      addresses: [
        { name: "admin-desks", entries: ["10.20.30.0/28"] },
        { name: "noc-net", entries: ["10.20.40.0/24"] },
      ],
      addressGroups: [{ name: "operators", members: ["admin-desks", "noc-net"] }],
      schedules: [{ name: "night-shift", windows: [{ days: ["mon"], start: "22:00", end: "06:00" }] }],
      inboundRules: [
        { id: "r1", interface: "inside", sources: ["operators"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "r2", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      ],
      accounts: [{ name: "ops-lena", loginSources: ["noc-net"], secondFactor: "totp" }],
      operatorNetworks: ["noc-net"],
    },
    EMPTY_LIBRARY,
  );
  if (!validated.ok) throw new Error(JSON.stringify(validated.errors));
  return validated.document;
}

/** The form messages for a changed document, as the device editor shows them. */
function messagesFor(change: (document: ModelDocument) => ModelDocument, target: FormTarget, library: SharedLibrary = EMPTY_LIBRARY) {
  const candidate = change(base());
  const validated = validateDocument(candidate, library);
  if (validated.ok) throw new Error("the change was expected not to validate");
  const messages = fieldMessagesForIssues(validated.errors, candidate, library, target);
  // Document paths stay in the CLI and the API, never in a form's words.
  for (const text of Object.values(messages)) expect(text).not.toMatch(/\w+\[\d+\]|device\.\w+/);
  return messages;
}

const withRule = (rule: Partial<ModelDocument["inboundRules"][number]>) => (document: ModelDocument) => ({
  ...document,
  inboundRules: [{ id: "r0", interface: "any", sources: ["any"], destinations: ["any"], services: ["ssh"], schedule: ALL_WEEK_SCHEDULE, action: "allow" as const, enabled: true, note: "", ...rule }, ...document.inboundRules],
});
const RULE_R0: FormTarget = { collection: "inboundRules", name: "r0" };

describe("Problems beside the rule form's fields", () => {
  test("an unknown source is said in words under Sources, with the close address name suggested", () => {
    // PRODUCT.md §3: an unknown name is a validation error naming the path (here said in words).
    const messages = messagesFor(withRule({ sources: ["admin-desk"] }), RULE_R0);
    expect(messages.sources).toBe("No address object or group is named “admin-desk”. Did you mean “admin-desks”?");
    expect(messages.form).toBe("Not saved. Sources: no address object or group is named “admin-desk”. Did you mean “admin-desks”?");
  });

  test("only names of the kind the field takes are suggested", () => {
    // "noc-nett" is one slip from the address object noc-net, but Services takes services.
    const messages = messagesFor(withRule({ services: ["noc-nett"] }), RULE_R0);
    expect(messages.services).toBe("No service or service group is named “noc-nett”.");
    expect(messagesFor(withRule({ services: ["webconsle"] }), RULE_R0).services).toBe("No service or service group is named “webconsle”. Did you mean “webconsole”?");
  });

  test("a name of another kind, or an address where a name belongs, is said so", () => {
    expect(messagesFor(withRule({ sources: ["https"] }), RULE_R0).sources).toBe("“https” is a service; this list takes address objects and groups.");
    expect(messagesFor(withRule({ destinations: ["10.20.0.1"] }), RULE_R0).destinations).toMatch(/^“10\.20\.0\.1” is an address, but this list takes the names of address objects and groups/);
  });

  test("several problems of one rule sit beside their own fields", () => {
    const messages = messagesFor(withRule({ interface: "outsdie", schedule: "night-shfit", services: ["ssh", "pign"] }), RULE_R0);
    expect(messages.interface).toBe("No interface is named “outsdie”. Did you mean “outside”?");
    expect(messages.schedule).toBe("No schedule is named “night-shfit”. Did you mean “night-shift”?");
    expect(messages.services).toBe("No service or service group is named “pign”. Did you mean “ping”?");
    expect(messages.form).toContain("Interface: no interface is named “outsdie”.");
    expect(messages.form).toContain("Schedule: no schedule is named “night-shfit”.");
  });
});

describe("Problems beside the other forms' fields", () => {
  test("an unknown login source suggests shared address objects too", () => {
    const library: SharedLibrary = { addresses: [{ name: "vpn-pool", entries: ["10.99.0.0/24"] }], addressGroups: [] };
    const messages = messagesFor(
      (document) => ({ ...document, accounts: [{ ...document.accounts[0], loginSources: ["vpn-pol", "192.0.2.0/28"] }] }),
      { collection: "accounts", name: "ops-lena" },
      library,
    );
    expect(messages.loginSources).toBe("No address object or group is named “vpn-pol”. Did you mean “vpn-pool”?");
  });

  test("a service whose port another service has: the clash sits beside Port, naming the other service, whichever comes first", () => {
    const clash = (document: ModelDocument) => ({ ...document, services: [{ name: "web-alt", protocol: "tcp" as const, port: 8443, kind: "login" as const }, ...document.services] });
    // IANA registry aside, two custom services on tcp/8443 clash (PRODUCT.md §3).
    expect(messagesFor(clash, { collection: "services", name: "web-alt" }).port).toBe("tcp/8443 is already the service “webconsole”; two services cannot share a protocol and port.");
    expect(messagesFor(clash, { collection: "services", name: "webconsole" }).port).toBe("tcp/8443 is already the service “web-alt”; two services cannot share a protocol and port.");
  });

  test("an address already on another interface sits beside Addresses", () => {
    const messages = messagesFor(
      (document) => ({ ...document, interfaces: document.interfaces.map((entry) => (entry.name === "outside" ? { ...entry, addresses: ["10.20.0.1/24"] } : entry)) }),
      { collection: "interfaces", name: "outside" },
    );
    expect(messages.addresses).toBe("10.20.0.1 is already on interface “inside”; an address sits on one interface only.");
  });

  test("a group that would contain itself: the loop is spelled out beside Members", () => {
    const messages = messagesFor(
      (document) => ({ ...document, addressGroups: [...document.addressGroups, { name: "everyone", members: ["operators"] }].map((group) => (group.name === "operators" ? { ...group, members: ["everyone"] } : group)) }),
      { collection: "addressGroups", name: "operators" },
    );
    expect(messages.members).toMatch(/^Groups would contain each other in a loop: (operators → everyone → operators|everyone → operators → everyone)\.$/);
  });

  test("a schedule window time past 23:59 names the window", () => {
    const messages = messagesFor(
      (document) => ({ ...document, schedules: [{ name: "night-shift", windows: [{ days: ["mon"], start: "08:00", end: "17:00" }, { days: ["tue"], start: "22:00", end: "24:00" }] }] }),
      { collection: "schedules", name: "night-shift" },
    );
    expect(messages.windows).toBe("Window 2: times run from 00:00 to 23:59 (HH:MM).");
  });

  test("an unknown time zone suggests the IANA zone it nearly is", () => {
    // IANA time zone database: Europe/Amsterdam.
    const messages = messagesFor((document) => ({ ...document, device: { ...document.device, timezone: "Europe/Amsterdamm" } }), { collection: "device" });
    expect(messages.timezone).toBe("“Europe/Amsterdamm” is not a known IANA time zone (such as Europe/Amsterdam). Did you mean “Europe/Amsterdam”?");
  });

  test("an unknown operator network sits beside the operator networks field", () => {
    const messages = messagesFor((document) => ({ ...document, operatorNetworks: ["noc-net", "operator"] }), { collection: "operatorNetworks" });
    expect(messages.operatorNetworks).toBe("No address object or group is named “operator”. Did you mean “operators”?");
  });

  test("a problem in another element is named in the summary, not put beside a field of this form", () => {
    const messages = messagesFor(
      (document) => ({ ...document, inboundRules: document.inboundRules.map((rule) => (rule.id === "r2" ? { ...rule, sources: ["admin-desk"] } : rule)) }),
      { collection: "interfaces", name: "outside" },
    );
    expect(Object.keys(messages)).toEqual(["form"]);
    expect(messages.form).toBe("Not saved. Inbound rule “r2” (position 2), sources: no address object or group is named “admin-desk”. Did you mean “admin-desks”?");
  });
});

describe("Problems in shared objects", () => {
  test("a shared object the device uses is named as shared in the summary", () => {
    const library: SharedLibrary = { addresses: [{ name: "vpn-pool", entries: ["10.99.0"] }], addressGroups: [] };
    const messages = messagesFor((document) => ({ ...document, accounts: [{ ...document.accounts[0], loginSources: ["vpn-pool"] }] }), { collection: "accounts", name: "ops-lena" }, library);
    expect(Object.keys(messages)).toEqual(["form"]);
    // Short IPv4 forms such as 10.0.0 are malformed (PRODUCT.md §3).
    expect(messages.form).toMatch(/^Not saved\. Shared address object “vpn-pool”, entries: “10\.99\.0” is not an IPv4 address/);
  });
});

describe("Time zones on the forms that ask for one", () => {
  test("a known IANA zone passes; a near miss names the zone it nearly is; nonsense gets no guess", () => {
    // IANA time zone database names (tz database, "Area/Location").
    expect(timeZoneProblem("Europe/Amsterdam")).toBeNull();
    expect(timeZoneProblem("UTC")).toBeNull();
    expect(timeZoneProblem("Europe/Amsterdamm")).toBe("“Europe/Amsterdamm” is not a known IANA time zone (such as Europe/Amsterdam). Did you mean “Europe/Amsterdam”?");
    // Nearest first: Tokyo is one slip away, Tomsk two.
    expect(timeZoneProblem("Asia/Tokio")).toMatch(/Did you mean “Asia\/Tokyo” or “Asia\/Tomsk”\?$/);
    expect(timeZoneProblem("Atlantis/Harbour")).toBe("“Atlantis/Harbour” is not a known IANA time zone (such as Europe/Amsterdam).");
  });
});

describe("Document paths", () => {
  test("a path is read into its element, field and item", () => {
    expect(parseIssuePath("inboundRules[3].sources[0]")).toEqual({ section: "inboundRules", index: 3, field: "sources", item: 0, rest: "" });
    expect(parseIssuePath("schedules[1].windows[2].start")).toEqual({ section: "schedules", index: 1, field: "windows", item: 2, rest: ".start" });
    expect(parseIssuePath("operatorNetworks[4]")).toEqual({ section: "operatorNetworks", index: null, field: "", item: 4, rest: "" });
    expect(parseIssuePath("device.timezone")).toEqual({ section: "device", index: null, field: "timezone", item: null, rest: "" });
    expect(parseIssuePath("constructor").section).toBeNull();
    expect(parseIssuePath("").section).toBeNull();
  });
});
