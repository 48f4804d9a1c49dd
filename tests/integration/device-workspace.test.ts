// The device workspace over HTTP, as a browser uses it: create a device, edit each kind of
// element through the section forms, reorder rules, concurrent edits, refusals, import and
// export, CSV import of shared objects, and who may do what. Each test that changes data
// uses its own organisation, so tests do not interfere.
// Semantics: PRODUCT.md §3–§4, docs/decisions/003-device-models-as-revisioned-documents.md.

import fc from "fast-check";
import { beforeAll, describe, expect, test } from "vitest";
import type { Role } from "#server/auth/roles";
import { generateModel, type ModelSize } from "#server/engine/testing/generate-model";
import { EMPTY_LIBRARY, validateDocument, type ModelDocument } from "#server/workspace/index";
import { DEMO_PASSWORDS, postMultipart, signUpNewOrganisation, TestClient, type FetchResult } from "../support/client";
import { fieldError, formAlert, plain, UUID, visibleText } from "../support/html";
import { confirmReview } from "../support/shared-objects";



function normalised(input: unknown): ModelDocument {
  const validated = validateDocument(input, EMPTY_LIBRARY);
  if (!validated.ok) throw new Error(`expected document invalid: ${JSON.stringify(validated.errors)}`);
  return validated.document;
}

type Fields = Record<string, string | string[]>;

/** A form body; an array value repeats the field, as a group of checkboxes does. */
function formBody(fields: Fields): URLSearchParams {
  const body = new URLSearchParams();
  for (const [key, value] of Object.entries(fields)) for (const item of Array.isArray(value) ? value : [value]) body.append(key, item);
  return body;
}

/**
 * For a save the lockout guard blocks (docs/decisions/010): these owners mean the change and
 * save it anyway, with a written reason, as an admin or owner may.
 */
const PAST_THE_GUARD = { overrideReason: "Editor test: the lockout is intended here." };

/** A signed-up owner with their own organisation and one site. */
async function newOrganisationWithSite(label: string): Promise<{ client: TestClient; slug: string; siteId: string }> {
  const { client, slug } = await signUpNewOrganisation(label);
  const created = await client.post(`/o/${slug}/sites`, { intent: "create", name: "Harbour office", customer: "", location: "" });
  expect(created.status).toBe(302);
  const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
  if (!siteId) throw new Error("no site id on the sites page");
  return { client, slug, siteId };
}

/** The ids of the devices listed on the fleet page. */
async function fleetDeviceIds(client: TestClient, slug: string): Promise<string[]> {
  const page = await client.get(`/o/${slug}/devices`);
  expect(page.status).toBe(200);
  return [...new Set([...page.text.matchAll(new RegExp(`href="/o/${slug}/devices/(${UUID})"`, "g"))].map((match) => match[1]))];
}

/** One device's editor, as a user with a browser sees it. */
class Workspace {
  /** The revision this user last saw after their own save; forgotten after any other post. */
  private known: number | undefined;

  constructor(
    readonly client: TestClient,
    readonly slug: string,
    readonly id: string,
  ) {}

  get path(): string {
    return `/o/${this.slug}/devices/${this.id}`;
  }

  /** The revision the editor page shows: its hidden baseRevision field, or (read-only) the current revision's export link. */
  async revision(section = "interfaces"): Promise<number> {
    const page = await this.client.get(`${this.path}/model/${section}`);
    expect(page.status).toBe(200);
    const match = page.text.match(/name="baseRevision" value="(\d+)"/) ?? page.text.match(new RegExp(`href="${this.path}/revisions/(\\d+)/export"`));
    if (!match) throw new Error(`no revision on the ${section} page`);
    return Number(match[1]);
  }

  /** Posts an intent to a section, based on `base` (default: the revision the page shows now). */
  async edit(section: string, fields: Fields, base?: number): Promise<FetchResult> {
    const baseRevision = base ?? (await this.revision(section));
    this.known = undefined;
    return this.client.request(`${this.path}/model/${section}`, { method: "POST", body: formBody({ ...fields, baseRevision: String(baseRevision) }) });
  }

  /** An edit that must be saved as the next revision; returns the new revision number. */
  async save(section: string, fields: Fields): Promise<number> {
    const before = this.known ?? (await this.revision(section));
    const response = await this.edit(section, fields, before);
    expect(response.status, `${fields.intent}: ${plain(response.text).match(/Not saved[^<]*/)?.[0] ?? ""}`).toBe(302);
    expect(response.location).toBe(`${this.path}/model/${section}`);
    expect(await this.revision(section)).toBe(before + 1);
    this.known = before + 1;
    return before + 1;
  }

  async exported(revision: number): Promise<ModelDocument> {
    const response = await this.client.get(`${this.path}/revisions/${revision}/export`);
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toContain("application/json");
    return JSON.parse(response.text) as ModelDocument;
  }
}

async function createDevice(client: TestClient, slug: string, siteId: string, name: string, timezone = "UTC"): Promise<Workspace> {
  const response = await client.post(`/o/${slug}/devices/new`, { name, siteId, timezone });
  expect(response.status).toBe(302);
  const id = response.location?.match(new RegExp(`^/o/${slug}/devices/(${UUID})/model/interfaces$`))?.[1];
  if (!id) throw new Error(`unexpected redirect ${response.location}`);
  return new Workspace(client, slug, id);
}

/** Imports a model document as a new device at the site, through preview then import; returns the device. */
async function importDocument(client: TestClient, slug: string, siteId: string, document: unknown): Promise<Workspace> {
  const file = new Blob([JSON.stringify(document)], { type: "application/json" });
  const preview = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "preview", target: `site:${siteId}`, file });
  expect(preview.status, plain(preview.text).match(/not a valid[^<]*|This is not JSON[^<]*/)?.[0]).toBe(200);
  const documentText = preview.text.match(/name="documentText" value="([^"]*)"/)?.[1];
  if (documentText === undefined) throw new Error("the preview has no documentText");
  const imported = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: `site:${siteId}`, fileName: "model.json", documentText: plain(documentText) });
  expect(imported.status).toBe(302);
  const id = imported.location?.match(new RegExp(`^/o/${slug}/devices/(${UUID})$`))?.[1];
  if (!id) throw new Error(`unexpected redirect ${imported.location}`);
  return new Workspace(client, slug, id);
}

/** Invented scenario: a harbour office's edge appliance. Internet side RFC 5737 / RFC 3849, inside RFC 1918 / RFC 4193. */
const QUAY_EDGE = {
  schemaVersion: 2,
  device: { name: "quay-edge", timezone: "UTC" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["203.0.113.2/24"], listeners: ["https", "ping"] },
    { name: "inside", role: "lan", addresses: ["10.20.0.1/24"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "noc-net", entries: ["10.20.30.0/24"] },
    { name: "partner-hq", entries: ["198.51.100.0/26"] },
  ],
  inboundRules: [
    { id: "r1", interface: "outside", sources: ["partner-hq"], destinations: ["any"], services: ["https"], action: "allow" },
    { id: "r2", interface: "inside", sources: ["noc-net"], destinations: ["any"], services: ["ssh"], action: "allow" },
    { id: "r3", interface: "outside", sources: ["any"], destinations: ["any"], services: ["ping"], action: "deny" },
    { id: "r4", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny", note: "final drop" },
  ],
  accounts: [{ name: "ops-lena", loginSources: ["noc-net"], secondFactor: "totp" }],
  operatorNetworks: ["noc-net"],
};

describe("Building a device model through the editor", () => {
  test("An engineer creates a device, which opens on its interfaces with an empty first revision", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-create");
    const device = await createDevice(client, slug, siteId, "pier-gw-01", "Europe/Berlin");
    expect(await device.revision()).toBe(1);
    // PRODUCT.md §3 defaults: defaultInbound allow, unlistenedPort drop; top-level arrays [].
    expect(await device.exported(1)).toEqual(normalised({ schemaVersion: 2, device: { name: "pier-gw-01", timezone: "Europe/Berlin", defaultInbound: "allow", unlistenedPort: "drop" } }));
    expect(await fleetDeviceIds(client, slug)).toEqual([device.id]);

    // Refusals create nothing: a taken name, a bad time zone, a site of no one.
    const taken = await client.post(`/o/${slug}/devices/new`, { name: "pier-gw-01", siteId, timezone: "UTC" });
    expect(taken.status).toBe(409);
    expect(plain(taken.text)).toContain('A device named "pier-gw-01" exists already');
    const badZone = await client.post(`/o/${slug}/devices/new`, { name: "pier-gw-02", siteId, timezone: "Mars/Olympus" });
    expect(badZone.status).toBe(400);
    expect(plain(badZone.text)).toContain("is not a known IANA time zone");
    expect((await client.post(`/o/${slug}/devices/new`, { name: "pier-gw-03", siteId: "00000000-0000-4000-8000-000000000000", timezone: "UTC" })).status).toBe(404);
    expect((await client.post(`/o/${slug}/devices/new`, { name: "bad name!", siteId, timezone: "UTC" })).status).toBe(400);
    expect(await fleetDeviceIds(client, slug)).toEqual([device.id]);
  });

  test("Every kind of element is added, renamed and deleted through the section forms, each save a new revision", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-elements");
    const device = await createDevice(client, slug, siteId, "pier-gw-01");

    await device.save("interfaces", { intent: "save-interface", original: "", name: "outside", role: "wan", addresses: "203.0.113.2/24\n2001:db8:20::2/64", listeners: ["https", "ping"] });
    await device.save("interfaces", { intent: "save-interface", name: "inside", role: "lan", addresses: "10.20.0.1/24", listeners: "https\nssh" });
    await device.save("addresses", { intent: "save-address", original: "", name: "noc-net", entries: "10.20.30.0/24" });
    await device.save("addresses", { intent: "save-address", name: "vpn-pool", entries: "10.20.40.0/25\nfd20:0:0:40::/64" });
    await device.save("addresses", { intent: "save-address-group", name: "operators", members: "noc-net\nvpn-pool" });
    await device.save("services", { intent: "save-service", name: "webconsole", protocol: "tcp", port: "8443", kind: "login" });
    await device.save("services", { intent: "save-service-group", name: "admin-web", members: "https webconsole" });
    await device.save("schedules", { intent: "save-schedule", name: "support-hours", windows: "mon tue wed thu fri 08:00-17:00" });
    const rule = { original: "", interface: "outside", destinations: "any", schedule: "all-week", enabled: "on" };
    await device.save("rules", { ...rule, intent: "save-rule", sources: "operators", services: "admin-web", action: "allow", note: "" });
    await device.save("rules", { ...rule, intent: "save-rule", interface: "any", sources: "any", services: "any", schedule: "support-hours", action: "deny", note: "final drop" });
    await device.save("accounts", { intent: "save-account", name: "ops-lena", loginSources: "operators", secondFactor: "totp", services: "https\nwebconsole", accessLevel: "full", enabled: "on" });
    await device.save("operator-networks", { intent: "save-operator-networks", operatorNetworks: "operators" });
    const built = await device.save("settings", { intent: "save-settings", name: "pier-gw-01", siteId, timezone: "Europe/Berlin", defaultInbound: "deny", unlistenedPort: "reset" });
    expect(built).toBe(14);

    const expected = normalised({
      schemaVersion: 2,
      device: { name: "pier-gw-01", timezone: "Europe/Berlin", defaultInbound: "deny", unlistenedPort: "reset" },
      interfaces: [
        { name: "outside", role: "wan", addresses: ["203.0.113.2/24", "2001:db8:20::2/64"], listeners: ["https", "ping"] },
        { name: "inside", role: "lan", addresses: ["10.20.0.1/24"], listeners: ["https", "ssh"] },
      ],
      services: [{ name: "webconsole", protocol: "tcp", port: 8443, kind: "login" }],
      addresses: [
        { name: "noc-net", entries: ["10.20.30.0/24"] },
        { name: "vpn-pool", entries: ["10.20.40.0/25", "fd20:0:0:40::/64"] },
      ],
      addressGroups: [{ name: "operators", members: ["noc-net", "vpn-pool"] }],
      serviceGroups: [{ name: "admin-web", members: ["https", "webconsole"] }],
      schedules: [{ name: "support-hours", windows: [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "08:00", end: "17:00" }] }],
      inboundRules: [
        { id: "r1", interface: "outside", sources: ["operators"], destinations: ["any"], services: ["admin-web"], schedule: "all-week", action: "allow", enabled: true, note: "" },
        { id: "r2", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], schedule: "support-hours", action: "deny", enabled: true, note: "final drop" },
      ],
      accounts: [{ name: "ops-lena", loginSources: ["operators"], secondFactor: "totp", services: ["https", "webconsole"], accessLevel: "full", enabled: true }],
      operatorNetworks: ["operators"],
    });
    expect(await device.exported(built)).toEqual(expected);

    // Renames follow every reference.
    await device.save("addresses", { intent: "save-address", original: "noc-net", name: "noc-core", entries: "10.20.30.0/24" });
    await device.save("interfaces", { intent: "save-interface", original: "outside", name: "uplink", role: "wan", addresses: "203.0.113.2/24\n2001:db8:20::2/64", listeners: ["https", "ping"] });
    await device.save("services", { intent: "save-service", original: "webconsole", name: "console-alt", protocol: "tcp", port: "9443", kind: "login" });
    await device.save("schedules", { intent: "save-schedule", original: "support-hours", name: "office-hours", windows: "mon tue wed thu fri 07:30-18:00\nsat 09:00-12:00" });
    const renamed = await device.exported(built + 4);
    expect(renamed.addressGroups).toEqual([{ name: "operators", members: ["noc-core", "vpn-pool"] }]);
    expect(renamed.inboundRules.map((entry) => [entry.interface, entry.schedule])).toEqual([
      ["uplink", "all-week"],
      ["any", "office-hours"],
    ]);
    expect(renamed.serviceGroups).toEqual([{ name: "admin-web", members: ["https", "console-alt"] }]);
    expect(renamed.accounts[0].services).toEqual(["https", "console-alt"]);
    expect(renamed.services).toEqual([{ name: "console-alt", protocol: "tcp", port: 9443, kind: "login" }]);
    expect(renamed.schedules[0].windows).toEqual([
      { days: ["mon", "tue", "wed", "thu", "fri"], start: "07:30", end: "18:00" },
      { days: ["sat"], start: "09:00", end: "12:00" },
    ]);

    // Deletes, each once nothing uses the element any more.
    await device.save("rules", { intent: "delete-rule", ruleId: "r1", ...PAST_THE_GUARD });
    await device.save("services", { intent: "delete-service-group", name: "admin-web" });
    await device.save("accounts", { intent: "delete-account", name: "ops-lena" });
    await device.save("services", { intent: "delete-service", name: "console-alt" });
    await device.save("rules", { ...rule, intent: "save-rule", original: "r2", interface: "any", sources: "any", services: "any", schedule: "all-week", action: "deny", note: "final drop" });
    await device.save("schedules", { intent: "delete-schedule", name: "office-hours" });
    await device.save("operator-networks", { intent: "save-operator-networks", operatorNetworks: "" });
    await device.save("addresses", { intent: "delete-address-group", name: "operators" });
    await device.save("addresses", { intent: "delete-address", name: "noc-core" });
    await device.save("addresses", { intent: "delete-address", name: "vpn-pool" });
    const last = await device.save("interfaces", { intent: "delete-interface", name: "uplink" });
    expect(last).toBe(built + 4 + 11);
    expect(await device.exported(last)).toEqual(
      normalised({
        schemaVersion: 2,
        device: { name: "pier-gw-01", timezone: "Europe/Berlin", defaultInbound: "deny", unlistenedPort: "reset" },
        interfaces: [{ name: "inside", role: "lan", addresses: ["10.20.0.1/24"], listeners: ["https", "ssh"] }],
        inboundRules: [{ id: "r2", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny", note: "final drop" }],
      }),
    );
    // Revisions are immutable: the fully built revision still exports as it was.
    expect(await device.exported(built)).toEqual(expected);
  });

  test("The history lists every revision with its message, and compares two of them", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-history");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    await device.save("addresses", { intent: "save-address", original: "partner-hq", name: "partner-hq", entries: "198.51.100.64/26" });
    const history = await client.get(`${device.path}/history?from=1&to=2`);
    expect(history.status).toBe(200);
    const text = plain(history.text);
    expect(text).toContain("Changed address object partner-hq");
    expect(text).toContain("Imported model.json");
    expect(text).toContain("entries: 198.51.100.0/26 → 198.51.100.64/26");
    expect((await client.get(`${device.path}/history?from=1&to=9`)).text).toContain("One of these revisions does not exist.");
    expect((await client.get(`${device.path}/revisions/3/export`)).status).toBe(404);
    expect((await client.get(`${device.path}/revisions/abc/export`)).status).toBe(400);
  });
});

describe("Inbound rule order", () => {
  test("Moving, duplicating, inserting and disabling rules saves the new order; old revisions keep theirs", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-order");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const order = async (revision: number) => (await device.exported(revision)).inboundRules.map((entry) => entry.id);
    expect(await order(1)).toEqual(["r1", "r2", "r3", "r4"]);

    // Common practice, no source: rules are read top to bottom, first match wins — order is meaning.
    expect(await device.save("rules", { intent: "move-rule", ruleId: "r4", to: "1", ...PAST_THE_GUARD })).toBe(2);
    expect(await order(2)).toEqual(["r4", "r1", "r2", "r3"]);
    expect(await device.save("rules", { intent: "move-rule", ruleId: "r4", to: "4" })).toBe(3);
    expect(await order(3)).toEqual(["r1", "r2", "r3", "r4"]);
    expect(await device.exported(3)).toEqual(await device.exported(1));

    expect(await device.save("rules", { intent: "duplicate-rule", ruleId: "r2" })).toBe(4);
    const duplicated = await device.exported(4);
    expect(duplicated.inboundRules.map((entry) => entry.id)).toEqual(["r1", "r2", "r5", "r3", "r4"]);
    expect({ ...duplicated.inboundRules[2], id: "r2" }).toEqual(duplicated.inboundRules[1]);

    await device.save("rules", { intent: "save-rule", original: "", id: "vendor-window", position: "2", interface: "outside", sources: "partner-hq", destinations: "any", services: "ssh", schedule: "all-week", action: "allow", enabled: "on", note: "temporary" });
    expect(await order(5)).toEqual(["r1", "vendor-window", "r2", "r5", "r3", "r4"]);
    await device.save("rules", { intent: "save-rule", original: "r3", interface: "outside", sources: "any", destinations: "any", services: "ping", position: "1", schedule: "all-week", action: "deny", enabled: "on", note: "no ping" });
    expect(await order(6)).toEqual(["r3", "r1", "vendor-window", "r2", "r5", "r4"]);

    await device.save("rules", { intent: "disable-rule", ruleId: "r5" });
    expect((await device.exported(7)).inboundRules.find((entry) => entry.id === "r5")?.enabled).toBe(false);
    await device.save("rules", { intent: "enable-rule", ruleId: "r5" });
    expect((await device.exported(8)).inboundRules.find((entry) => entry.id === "r5")?.enabled).toBe(true);
    expect(await order(8)).toEqual(["r3", "r1", "vendor-window", "r2", "r5", "r4"]);

    // Every earlier revision still exports with its own order.
    expect(await order(1)).toEqual(["r1", "r2", "r3", "r4"]);
    expect(await order(2)).toEqual(["r4", "r1", "r2", "r3"]);
    expect(await order(5)).toEqual(["r1", "vendor-window", "r2", "r5", "r3", "r4"]);

    // An edit that changes nothing makes no revision.
    const same = await device.edit("rules", { intent: "move-rule", ruleId: "r3", to: "1" });
    expect(same.status).toBe(302);
    expect(await device.revision()).toBe(8);
  });
});

describe("The rule list's view", () => {
  test("The compact view is chosen by a form post, remembered in a cookie and read by the rules page; a view that does not exist is refused (400)", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-rule-view");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const rulesPath = `${device.path}/model/rules`;
    expect((await client.get(rulesPath)).text).toMatch(/<ol[^>]*aria-label="Inbound rules in order"/);

    const chosen = await client.post("/preferences", { ruleView: "compact", returnTo: rulesPath });
    expect(chosen.status).toBe(302);
    expect(chosen.location).toBe(rulesPath);
    expect(chosen.setCookies.join("\n")).toMatch(/sallyport-rule-view=/);
    const compact = await client.get(rulesPath);
    expect(compact.text).toMatch(/<table[^>]*aria-label="Inbound rules in order"/);
    // One row per rule, each with its position, in document order.
    expect([...compact.text.matchAll(/<tr[^>]*aria-label="Rule (\S+) at position (\d+)"/g)].map((match) => `${match[2]}:${match[1]}`)).toEqual(["1:r1", "2:r2", "3:r3", "4:r4"]);

    expect((await client.post("/preferences", { ruleView: "sideways", returnTo: rulesPath })).status).toBe(400);
    // Only paths on this site are returned to.
    expect((await client.post("/preferences", { ruleView: "detailed", returnTo: "https://elsewhere.example/" })).location).toBe("/");
    expect((await client.get(rulesPath)).text).toMatch(/<ol[^>]*aria-label="Inbound rules in order"/);
  });
});

describe("Concurrent edits and refused edits", () => {
  test("Two edits from the same revision: the second is refused (409) with what changed meanwhile, and nothing is overwritten", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-conflict");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const opened = await device.revision("addresses");
    expect(opened).toBe(1);

    const first = await device.edit("addresses", { intent: "save-address", name: "jump-hosts", entries: "10.20.50.0/28" }, opened);
    expect(first.status).toBe(302);
    const second = await device.edit("addresses", { intent: "save-address", original: "partner-hq", name: "partner-hq", entries: "192.0.2.0/28" }, opened);
    expect(second.status).toBe(409);
    const text = plain(second.text);
    expect(text).toContain("changed since you opened it");
    expect(text).toContain("now revision r2");
    // The conflict lists what the other edit did (section, change, element).
    expect(text).toMatch(/Address objects(<[^>]+>|\s|:)*added(<[^>]+>|\s)*jump-hosts/);
    // The user's input is kept in the form.
    expect(text).toContain("192.0.2.0/28");

    const current = await device.exported(2);
    expect(current.addresses).toEqual([
      { name: "noc-net", entries: ["10.20.30.0/24"] },
      { name: "partner-hq", entries: ["198.51.100.0/26"] },
      { name: "jump-hosts", entries: ["10.20.50.0/28"] },
    ]);
    expect((await client.get(`${device.path}/revisions/3/export`)).status).toBe(404);

    // A stale delete and a stale move are refused the same way.
    expect((await device.edit("rules", { intent: "delete-rule", ruleId: "r1" }, opened)).status).toBe(409);
    expect((await device.edit("rules", { intent: "move-rule", ruleId: "r4", to: "1" }, opened)).status).toBe(409);
    expect(await device.revision()).toBe(2);
    // Two saves sent at the same moment from the same revision: exactly one is saved.
    const racing = await Promise.all([
      device.edit("addresses", { intent: "save-address", name: "race-a", entries: "10.20.60.0/28" }, 2),
      device.edit("addresses", { intent: "save-address", name: "race-b", entries: "10.20.61.0/28" }, 2),
    ]);
    expect(racing.map((response) => response.status).sort()).toEqual([302, 409]);
    const afterRace = (await device.exported(3)).addresses.map((object) => object.name);
    expect(afterRace.filter((name) => name.startsWith("race-"))).toHaveLength(1);
    expect((await client.get(`${device.path}/revisions/4/export`)).status).toBe(404);
    // Applied again on top of the current revision, the change goes through.
    expect((await device.edit("addresses", { intent: "save-address", original: "partner-hq", name: "partner-hq", entries: "192.0.2.0/28" }, 3)).status).toBe(302);
    expect((await device.exported(4)).addresses).toContainEqual({ name: "partner-hq", entries: ["192.0.2.0/28"] });
  });

  test("Deleting an element in use is refused (409) naming where; an unknown name is refused (400) in words beside its field; nothing is saved", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-refuse");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);

    const inUse = await device.edit("addresses", { intent: "delete-address", name: "noc-net" });
    expect(inUse.status).toBe(409);
    const inUseText = plain(inUse.text);
    expect(inUseText).toContain('The address object "noc-net" is in use');
    expect(inUseText).toContain("inbound rule r2 (position 2), sources");
    expect(inUseText).toContain("account ops-lena, login sources");
    expect(inUseText).toContain("operator networks");
    expect((await device.edit("interfaces", { intent: "delete-interface", name: "outside" })).status).toBe(409);

    // PRODUCT.md §3: an unknown name is a validation error; the form says it beside the field, in
    // words (the path stays in the CLI and the API).
    const unknown = await device.edit("rules", { intent: "save-rule", position: "1", interface: "outside", sources: "noc", destinations: "any", services: "ssh", schedule: "all-week", action: "allow", enabled: "on", note: "" });
    expect(unknown.status).toBe(400);
    expect(fieldError(unknown.text, "Sources")).toBe("No address object or group is named “noc”.");
    expect(visibleText(unknown.text)).not.toContain("inboundRules[");

    const unknownSchedule = await device.edit("rules", { intent: "save-rule", interface: "outside", sources: "noc-net", destinations: "any", services: "ssh", schedule: "night-shift", action: "allow", enabled: "on", note: "" });
    expect(unknownSchedule.status).toBe(400);
    expect(fieldError(unknownSchedule.text, "Schedule")).toBe("No schedule is named “night-shift”.");

    const badField = await device.edit("services", { intent: "save-service", name: "webconsole", protocol: "tcp", port: "70000", kind: "login" });
    expect(badField.status).toBe(400);
    expect(plain(badField.text)).toContain("Ports run from 1 to 65535.");
    // IANA service registry: https is tcp/443 — a custom service on a catalogue port is refused.
    const clash = await device.edit("services", { intent: "save-service", name: "web-alt", protocol: "tcp", port: "443", kind: "login" });
    expect(clash.status).toBe(400);
    expect(fieldError(clash.text, "Port")).toBe("tcp/443 is already the service “https”; two services cannot share a protocol and port.");
    expect((await device.edit("rules", { intent: "delete-rule", ruleId: "r9" })).status).toBe(404);
    expect((await device.edit("rules", { intent: "explode" })).status).toBe(400);
    expect((await device.client.request(`${device.path}/model/rules`, { method: "POST", body: formBody({ intent: "delete-rule", ruleId: "r1" }) })).status).toBe(400);
    expect((await device.edit("firewall-zones", { intent: "delete-rule", ruleId: "r1" }, 1)).status).toBe(404);

    // Settings: a name another device has, or a time zone that does not exist.
    await createDevice(client, slug, siteId, "quay-spare");
    const settings = { intent: "save-settings", siteId, defaultInbound: "allow", unlistenedPort: "drop" };
    const nameTaken = await device.edit("settings", { ...settings, name: "quay-spare", timezone: "UTC" });
    expect(nameTaken.status).toBe(409);
    expect(plain(nameTaken.text)).toContain("Another device of this organisation already has that name.");
    const badZone = await device.edit("settings", { ...settings, name: "quay-edge", timezone: "Atlantis/Harbour" });
    expect(badZone.status).toBe(400);
    expect(fieldError(badZone.text, "Time zone")).toBe("“Atlantis/Harbour” is not a known IANA time zone (such as Europe/Amsterdam).");

    expect(await device.revision()).toBe(1);
    expect(await device.exported(1)).toEqual(normalised(QUAY_EDGE));
  });
});

describe("Refused forms say each problem beside its field and keep what was typed", () => {
  test("A rule with mistyped names is refused (400): each problem under its field in words, with the close name, and the typed values back in the form", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-field-words");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const typed = { intent: "save-rule", id: "partner-ssh", position: "2", interface: "outside", sources: "noc-nte\npartner-hq", destinations: "any", services: "sshh", schedule: "all-week", action: "allow", enabled: "on", note: "partner maintenance" };

    const refused = await device.edit("rules", typed);
    expect(refused.status).toBe(400);
    // PRODUCT.md §3: unknown names are validation errors; here said beside Sources and Services.
    expect(fieldError(refused.text, "Sources")).toBe("No address object or group is named “noc-nte”. Did you mean “noc-net”?");
    // IANA service-name registry: ssh is tcp/22, the built-in the typo is closest to.
    expect(fieldError(refused.text, "Services")).toBe("No service or service group is named “sshh”. Did you mean “ssh”?");
    expect(fieldError(refused.text, "Destinations")).toBeNull();
    expect(formAlert(refused.text)).toBe("Not saved. Sources: no address object or group is named “noc-nte”. Did you mean “noc-net”? Services: no service or service group is named “sshh”. Did you mean “ssh”?");
    expect(visibleText(refused.text)).not.toMatch(/inboundRules\[/);
    // What was typed is back in the form (without JavaScript the pickers are text areas).
    const ruleForm = /<form[^>]*aria-label="Inbound rule"[\s\S]*?<\/form>/.exec(refused.text)?.[0] ?? "";
    expect(ruleForm).toMatch(/name="id"[^>]*value="partner-ssh"|value="partner-ssh"[^>]*name="id"/);
    expect(plain(ruleForm)).toMatch(/<textarea[^>]*name="sources"[^>]*>noc-nte\npartner-hq<\/textarea>/);
    expect(plain(ruleForm)).toMatch(/<textarea[^>]*name="services"[^>]*>sshh<\/textarea>/);
    expect(plain(ruleForm)).toContain('value="partner maintenance"');
    expect(await device.revision()).toBe(1);

    // Corrected, it saves.
    await device.save("rules", { ...typed, sources: "noc-net\npartner-hq", services: ["ssh"] });
    expect((await device.exported(2)).inboundRules[1]).toMatchObject({ id: "partner-ssh", sources: ["noc-net", "partner-hq"], services: ["ssh"] });
  });

  test("An interface address without its prefix length is refused beside Addresses; with it, saved", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-prefix");
    const device = await createDevice(client, slug, siteId, "pier-gw-02");
    const typed = { intent: "save-interface", original: "", name: "outside", role: "other", addresses: "203.0.113.2", listeners: "https" };
    const refused = await device.edit("interfaces", typed);
    expect(refused.status).toBe(400);
    // PRODUCT.md §4 writes interface addresses with the link's prefix (RFC 5737 documentation address here).
    expect(fieldError(refused.text, "Addresses")).toBe("“203.0.113.2” has no prefix length: add the link's, e.g. 203.0.113.2/24 (/32 for the address alone).");
    expect(plain(refused.text)).toMatch(/<textarea[^>]*name="addresses"[^>]*>203\.0\.113\.2<\/textarea>/);
    await device.save("interfaces", { ...typed, addresses: "203.0.113.2/24" });
  });

  test("An unknown login source suggests the organisation's shared object it nearly names", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-shared-words");
    expect((await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind: "address", name: "vpn-pool", items: "10.99.0.0/24", description: "" })).status).toBe(302);
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const refused = await device.edit("accounts", { intent: "save-account", original: "ops-lena", name: "ops-lena", loginSources: "vpn-pol\n192.0.2.0/28", secondFactor: "totp", accessLevel: "full", enabled: "on" });
    expect(refused.status).toBe(400);
    expect(fieldError(refused.text, "Login sources")).toBe("No address object or group is named “vpn-pol”. Did you mean “vpn-pool”?");
    await device.save("accounts", { intent: "save-account", original: "ops-lena", name: "ops-lena", loginSources: ["vpn-pool", "192.0.2.0/28"], secondFactor: "totp", accessLevel: "full", enabled: "on", ...PAST_THE_GUARD });
    expect((await device.exported(2)).accounts[0].loginSources).toEqual(["vpn-pool", "192.0.2.0/28"]);
  });
});

describe("Refused shared objects are said in words too", () => {
  test("A shared group naming a missing object is refused (400) beside its members, with the close name; what was typed stays", async () => {
    const { client, slug } = await signUpNewOrganisation("ws-shared-group-words");
    expect((await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind: "address", name: "vpn-pool", items: "10.99.0.0/24", description: "" })).status).toBe(302);
    const refused = await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind: "group", name: "operators", items: "vpn-pol", description: "remote staff" });
    expect(refused.status).toBe(400);
    // PRODUCT.md §3: group members must exist (an unknown name is a validation error).
    expect(fieldError(refused.text, "Entries or members")).toBe("No address object or group is named “vpn-pol”. Did you mean “vpn-pool”?");
    expect(visibleText(refused.text)).not.toMatch(/addressGroups\[/);
    expect(plain(refused.text)).toMatch(/<textarea[^>]*name="items"[^>]*>vpn-pol<\/textarea>/);
    expect(plain(refused.text)).toContain('value="remote staff"');
  });
});

describe("Accounts name login services only", () => {
  test("Posting ping or snmp as an account's service is refused (400) with the message beside the services field; nothing is saved", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-account-services");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const account = { intent: "save-account", original: "ops-lena", name: "ops-lena", loginSources: "noc-net", secondFactor: "totp", accessLevel: "full", enabled: "on" };

    // PRODUCT.md §3: an account's services name catalogue services of kind login only.
    const page = await client.get(`${device.path}/model/accounts?edit=ops-lena`);
    expect(page.status).toBe(200);
    const offered = [...servicesFieldset(page.text).matchAll(/name="services" value="([^"]+)"/g)].map((match) => match[1]);
    expect(offered).toEqual(["ssh", "https", "http", "telnet"]); // PRODUCT.md §3: the catalogue's login services, in its order

    const refused = await device.edit("accounts", { ...account, services: ["ssh", "ping"] });
    expect(refused.status).toBe(400);
    const message = 'Not saved: "ping" is a service of kind echo (accounts name login services only).';
    expect(plain(servicesFieldset(refused.text))).toContain(message);
    const snmp = await device.edit("accounts", { ...account, services: "snmp" });
    expect(snmp.status).toBe(400);
    expect(plain(servicesFieldset(snmp.text))).toContain('"snmp" is a service of kind other');

    expect(await device.revision()).toBe(1);
    await device.save("accounts", { ...account, services: ["ssh", "https"] });
    expect((await device.exported(2)).accounts[0].services).toEqual(["ssh", "https"]);
  });
});

/** The account form's fieldset of login services, as rendered. */
function servicesFieldset(html: string): string {
  const match = /<fieldset[^>]*>(?:(?!<\/fieldset>)[\s\S])*?name="services"[\s\S]*?<\/fieldset>/.exec(html);
  if (!match) throw new Error("no services fieldset on the accounts page");
  return match[0];
}

/** Small models, so a property run stays well within the time budget. */
const TINY: ModelSize = { interfaces: 2, rules: 4, addressObjects: 3, entries: 5, groups: 2, accounts: 2, schedules: 1, spread: "narrow", scheduledShare: 0.3, scheduleStyle: "random" };

describe("Import and export", () => {
  test("Random models imported then exported come back as the same normalised document (property)", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-roundtrip");
    let counter = 0;
    await fc.assert(
      fc.asyncProperty(fc.integer(), async (seed) => {
        counter += 1;
        const model = structuredClone(generateModel(seed, TINY).model);
        model.device.name = `gen-${counter}-${seed >>> 0}`;
        const device = await importDocument(client, slug, siteId, model);
        const exported = await device.exported(1);
        expect(exported).toEqual(normalised(model));
        // The export is self-contained: importing it again gives the same document.
        exported.device.name = `${model.device.name}-again`;
        const again = await importDocument(client, slug, siteId, exported);
        expect(await again.exported(1)).toEqual(exported);
      }),
      { numRuns: 5 },
    );
    expect(await fleetDeviceIds(client, slug)).toHaveLength(10);
  });

  test("An export carries the shared objects the device uses, with their values, and imports elsewhere unchanged", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-shared");
    expect((await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind: "address", name: "hq-admins", items: "10.30.0.0/24\nfd30::/48", description: "" })).status).toBe(302);
    expect((await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind: "group", name: "all-admins", items: "hq-admins", description: "" })).status).toBe(302);
    expect((await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "", kind: "address", name: "lab-net", items: "192.168.77.0/24", description: "" })).status).toBe(302);
    const { operatorNetworks: _, ...rest } = QUAY_EDGE;
    const document = { ...rest, operatorNetworks: ["all-admins"], accounts: [{ name: "ops-lena", loginSources: ["hq-admins"], secondFactor: "totp" }] };
    const device = await importDocument(client, slug, siteId, document);
    const exported = await device.exported(1);
    expect(exported.addresses.map((object) => object.name)).toEqual(["noc-net", "partner-hq", "hq-admins"]);
    expect(exported.addresses[2].entries).toEqual(["10.30.0.0/24", "fd30::/48"]);
    expect(exported.addressGroups).toEqual([{ name: "all-admins", members: ["hq-admins"] }]);

    // The library changes: the device uses it, so saving first shows the review, and the
    // confirmation gives the device a new revision; revision 1 keeps the values it was saved
    // with (docs/decisions/003).
    const review = await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "hq-admins", kind: "address", name: "hq-admins", items: "10.31.0.0/24", description: "" });
    expect(review.status).toBe(200);
    expect(plain(review.text)).toContain("Save and create 1 new revision");
    expect((await confirmReview(client, `/o/${slug}/settings/shared-objects`, review)).status).toBe(302);
    expect((await device.exported(1)).addresses[2].entries).toEqual(["10.30.0.0/24", "fd30::/48"]);
    expect((await device.exported(2)).addresses[2].entries).toEqual(["10.31.0.0/24"]);
    // Renaming or deleting a shared object a device uses is refused, naming the device (docs/decisions/003).
    const rename = await client.post(`/o/${slug}/settings/shared-objects`, { intent: "save", original: "hq-admins", kind: "address", name: "hq-admins-2", items: "10.31.0.0/24", description: "" });
    expect(rename.status).toBe(409);
    expect(plain(rename.text)).toContain('"hq-admins" is used by quay-edge; renaming it would break them.');
    const refused = await client.post(`/o/${slug}/settings/shared-objects`, { intent: "delete", name: "all-admins" });
    expect(refused.status).toBe(409);
    expect(plain(refused.text)).toContain("device quay-edge");

    // Imported into another organisation with no library, the export re-creates the same model.
    const other = await newOrganisationWithSite("ws-shared-elsewhere");
    const copy = await importDocument(other.client, other.slug, other.siteId, exported);
    expect(await copy.exported(1)).toEqual(exported);
  });

  test("Bad uploads are refused with the reason and create nothing", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-bad-upload");
    const target = `site:${siteId}`;
    const upload = (intent: string, text: string) => postMultipart(client, `/o/${slug}/devices/import`, { intent, target, file: new Blob([text], { type: "application/json" }) });
    for (const intent of ["preview", "import"]) {
      const notJson = await upload(intent, "interfaces: outside\n  address 203.0.113.2");
      expect(notJson.status).toBe(400);
      expect(plain(notJson.text)).toContain("This is not JSON");

      const version3 = await upload(intent, JSON.stringify({ ...QUAY_EDGE, schemaVersion: 3 }));
      expect(version3.status).toBe(400);
      expect(plain(version3.text)).toMatch(/schemaVersion<\/span>: 3 is not a version Sallyport reads: it reads 1 and 2/);

      const unknown = await upload(intent, JSON.stringify({ ...QUAY_EDGE, inboundRules: [{ ...QUAY_EDGE.inboundRules[0], sources: ["noc"] }] }));
      expect(unknown.status).toBe(400);
      expect(plain(unknown.text)).toMatch(/inboundRules\[0\]\.sources\[0\]<\/span>: unknown address "noc"/);

      const empty = await upload(intent, "");
      expect(empty.status).toBe(400);
      expect(plain(empty.text)).toContain("The chosen file is empty.");
    }
    // Over 8 MiB (the largest document Sallyport stores, so any export re-imports) but under the
    // import's 9 MiB request limit: the import page refuses it with its size.
    const padding = " ".repeat(8 * 1024 * 1024 + 10);
    const large = await upload("import", JSON.stringify(QUAY_EDGE) + padding);
    expect(large.status).toBe(400);
    expect(plain(large.text)).toContain("model documents may be at most 8 MiB");
    // Over the request limit: the server refuses the body before reading it.
    const huge = await upload("import", JSON.stringify(QUAY_EDGE) + padding + " ".repeat(1024 * 1024));
    expect(huge.status).toBe(413);
    expect(huge.text).toContain("the limit is 9437184 bytes");
    // The same document pasted as text over 8 MiB is refused too.
    const pasted = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target, documentText: JSON.stringify(QUAY_EDGE) + padding });
    expect(pasted.status).toBe(400);
    expect(plain(pasted.text)).toContain("larger than 8 MiB");
    // Any other route keeps the 2 MiB limit.
    const elsewhere = await client.request(`/o/${slug}/sites`, { method: "POST", body: new URLSearchParams({ intent: "create", name: "x".repeat(3 * 1024 * 1024) }) });
    expect(elsewhere.status).toBe(413);
    expect(elsewhere.text).toContain("the limit is 2097152 bytes");
    // A valid document with nowhere to go is refused as well.
    const noTarget = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: "", file: new Blob([JSON.stringify(QUAY_EDGE)]) });
    expect(noTarget.status).toBe(400);
    expect((await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: "site:00000000-0000-4000-8000-000000000000", file: new Blob([JSON.stringify(QUAY_EDGE)]) })).status).toBe(404);

    expect(await fleetDeviceIds(client, slug)).toEqual([]);
  });

  test("A version-1 document is imported as version 2: the preview says so, and the export has the new names", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-version-1");
    // QUAY_EDGE as the first release wrote it (PRODUCT.md §4): roles outside and inside, the built-in schedule always.
    const versionOne = {
      ...QUAY_EDGE,
      schemaVersion: 1,
      interfaces: QUAY_EDGE.interfaces.map((entry) => ({ ...entry, role: entry.role === "wan" ? "outside" : "inside" })),
      inboundRules: QUAY_EDGE.inboundRules.map((rule) => ({ ...rule, schedule: "always" })),
    };
    const preview = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "preview", target: `site:${siteId}`, file: new Blob([JSON.stringify(versionOne)], { type: "application/json" }) });
    expect(preview.status).toBe(200);
    expect(plain(preview.text)).toContain("Written in version 1 of the model document; read and saved as version 2 (roles outside → wan, inside → lan, mgmt → management; schedule always → all-week)");
    const device = await importDocument(client, slug, siteId, versionOne);
    const exported = await device.exported(1);
    expect(exported).toEqual(normalised(QUAY_EDGE));
    expect(exported.schemaVersion).toBe(2);
    expect(exported.interfaces.map((entry) => entry.role)).toEqual(["wan", "lan"]);
    expect(new Set(exported.inboundRules.map((rule) => rule.schedule))).toEqual(new Set(["all-week"]));
  });

  test("Importing over an existing device makes a new revision; a stale or same-named import is refused", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-reimport");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const file = (document: unknown) => new Blob([JSON.stringify(document)], { type: "application/json" });
    const changed = { ...QUAY_EDGE, operatorNetworks: ["noc-net", "partner-hq"] };
    // A change is imported only once its effect was read (the box on the preview).
    const unread = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: `device:${device.id}`, baseRevision: "1", file: file(changed) });
    expect(unread.status).toBe(400);
    expect(await device.revision()).toBe(1);
    const asRevision = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: `device:${device.id}`, baseRevision: "1", effectRead: "yes", file: file(changed) });
    expect(asRevision.status).toBe(302);
    expect(asRevision.location).toBe(`${device.path}/history`);
    expect((await device.exported(2)).operatorNetworks).toEqual(["noc-net", "partner-hq"]);
    const stale = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: `device:${device.id}`, baseRevision: "1", file: file(QUAY_EDGE) });
    expect(stale.status).toBe(409);
    expect(plain(stale.text)).toContain("changed since you opened it");
    const sameName = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: `site:${siteId}`, file: file(QUAY_EDGE) });
    expect(sameName.status).toBe(409);
    expect(await device.revision()).toBe(2);
    expect(await fleetDeviceIds(client, slug)).toEqual([device.id]);
  });
});

describe("Importing a new revision is judged by its effect", () => {
  // Issue 11: the catch-all deny dragged to the top locks out the operator network. The lockout
  // guard and the findings come from the engine's diff (docs/engine.md, "The diff"); the
  // catch-all first makes every later rule shadowed (first match wins, PRODUCT.md §3).
  const lockedOut = { ...QUAY_EDGE, inboundRules: [QUAY_EDGE.inboundRules[3], QUAY_EDGE.inboundRules[0], QUAY_EDGE.inboundRules[1]] };
  /** The page's words as read: no scripts, no tags, nothing between the pieces of one sentence. */
  const words = (html: string) => plain(html.replace(/<script[\s\S]*?<\/script>/g, "")).replace(/<[^>]+>/g, "");

  test("The preview shows counts before → after, findings new and resolved, and the lockout in words; the import waits for 'I have read the effect'", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-import-effect");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const path = `/o/${slug}/devices/import`;
    const target = `device:${device.id}`;
    const preview = await postMultipart(client, path, { intent: "preview", target, file: new Blob([JSON.stringify(lockedOut)], { type: "application/json" }) });
    expect(preview.status).toBe(200);
    const text = plain(preview.text);
    const shown = words(preview.text);
    expect(shown).toContain("Effect on quay-edge: r1 → r2");
    // Element counts before → after: one inbound rule fewer, the rest unchanged.
    const counts = Object.fromEntries([...text.matchAll(/data-kind="(\w+)" data-before="(\d+)" data-after="(\d+)"/g)].map((match) => [match[1], [Number(match[2]), Number(match[3])]]));
    expect(counts).toEqual({ interfaces: [2, 2], addressObjects: [2, 2], inboundRules: [4, 3], accounts: [1, 1] });
    // The lockout guard names the network, in the effect and in words beside the import button.
    expect(text).toMatch(/data-testid="lockout-guard"[\s\S]*noc-net/);
    expect(shown).toContain("Importing this locks the team out: operator network “noc-net” would have no login path left on any interface, service or time.");
    // Findings new: the lockout itself (critical) and the rules the catch-all now shadows.
    const added = text.slice(text.indexOf("New findings"), text.indexOf("Resolved findings"));
    expect(added).toContain('Operator network "noc-net" has no login path');
    expect(added).toContain('Rule "r1" is never the first match');
    // Resolved: the removed rule's own finding, and partner-hq's login on the wan, now silent.
    const resolved = text.slice(text.indexOf("Resolved findings"), text.indexOf("Model changes"));
    expect(resolved).toContain('Rule "r3" is redundant');
    expect(resolved).toContain('https on "outside" presents a login to non-private sources');
    expect(shown).toContain("I have read the effect, including the lockout warning");

    // The last step without the box: 400, the reason beside it, the preview and the document kept, nothing saved.
    const documentText = preview.text.match(/name="documentText" value="([^"]*)"/)?.[1];
    if (documentText === undefined) throw new Error("the preview has no documentText");
    const last = { intent: "import", target, baseRevision: "1", fileName: "locked.json", documentText: plain(documentText) };
    const unread = await postMultipart(client, path, last);
    expect(unread.status).toBe(400);
    // The message sits beside the box, which names it (aria-describedby).
    expect(unread.text).toMatch(/name="effectRead"[^>]*aria-describedby="effect-read-error"|aria-describedby="effect-read-error"[^>]*name="effectRead"/);
    expect(plain(unread.text).match(/id="effect-read-error"[^>]*>([^<]*)/)?.[1]).toBe(
      "Read the effect of this import above, then tick “I have read the effect” to import it.",
    );
    expect(unread.text).toMatch(/name="documentText" value="[^"]+"/);
    expect(plain(unread.text)).toMatch(/name="target" value="device:[0-9a-f-]{36}"/);
    expect(words(unread.text)).toContain("Effect on quay-edge: r1 → r2");
    expect(await device.revision()).toBe(1);
    // Another value than the box's is not a confirmation either.
    expect((await postMultipart(client, path, { ...last, effectRead: "on" })).status).toBe(400);

    // With the box ticked, the lockout guard still stops it, as it stops a save in the editor
    // (docs/decisions/017): the owner imports it anyway only with a written reason.
    const guarded = await postMultipart(client, path, { ...last, effectRead: "yes" });
    expect(guarded.status).toBe(409);
    expect(words(guarded.text)).toContain("Not saved: the lockout guard blocks this change.");
    expect(await device.revision()).toBe(1);
    const imported = await postMultipart(client, path, { ...last, effectRead: "yes", overrideReason: "Retiring the NOC's access on purpose: the new NOC moves in tomorrow." });
    expect(imported.status).toBe(302);
    expect(await device.revision()).toBe(2);
    expect((await device.exported(2)).inboundRules.map((rule) => rule.id)).toEqual(["r4", "r1", "r2"]);
  });

  test("An import that changes nothing says so and needs no box; a new device shows what it will create", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("ws-import-same");
    const device = await importDocument(client, slug, siteId, QUAY_EDGE);
    const path = `/o/${slug}/devices/import`;
    const same = await postMultipart(client, path, { intent: "preview", target: `device:${device.id}`, file: new Blob([JSON.stringify(QUAY_EDGE)]) });
    expect(same.status).toBe(200);
    expect(words(same.text)).toContain("This document matches revision r1: importing it changes nothing.");
    expect(same.text).not.toContain('name="effectRead"');
    const again = await postMultipart(client, path, { intent: "import", target: `device:${device.id}`, baseRevision: "1", file: new Blob([JSON.stringify(QUAY_EDGE)]) });
    expect(again.status).toBe(302);
    expect(await device.revision()).toBe(1);
    const fresh = await postMultipart(client, path, { intent: "preview", target: `site:${siteId}`, file: new Blob([JSON.stringify({ ...QUAY_EDGE, device: { name: "quay-edge-b" } })]) });
    expect(words(fresh.text)).toContain("Will create");
    expect(fresh.text).not.toContain("import-effect");
    expect(fresh.text).not.toContain('name="effectRead"');
  });
});

describe("Shared address objects from CSV", () => {
  const importCsv = (client: TestClient, slug: string, csv: string) =>
    postMultipart(client, `/o/${slug}/settings/shared-objects`, { intent: "import-csv", file: new Blob([csv], { type: "text/csv" }) });

  test("Each CSV row is reported as created, updated or refused with a reason; the good rows are saved", async () => {
    const { client, slug } = await signUpNewOrganisation("ws-csv");
    const csv = [
      "name,entries",
      "hq-admins,10.30.0.0/24;10.30.1.0/24",
      '"vpn-users","fd30::/48 10.30.8.0/22"',
      "bad name!,10.0.0.1",
      "no-entries,",
      "wrong-address,10.300.0.1",
      "too-many,10.0.0.1,extra",
      "hq-admins,10.30.0.0/23",
      "",
    ].join("\r\n");
    const response = await importCsv(client, slug, csv);
    expect(response.status).toBe(200);
    const text = plain(response.text);
    const report = text.slice(text.indexOf("Import address objects from CSV"));
    const rows = [...report.matchAll(/<tr>(.*?)<\/tr>/g)]
      .map((match) => [...match[1].matchAll(/<td[^>]*>(.*?)<\/td>/g)].map((cell) => cell[1].replace(/<[^>]+>/g, "")))
      .filter((cells) => cells.length === 4);
    expect(rows.map(([row, name, result]) => [row, name, result])).toEqual([
      ["2", "hq-admins", "created"],
      ["3", "vpn-users", "created"],
      ["4", "bad name!", "refused"],
      ["5", "no-entries", "refused"],
      ["6", "wrong-address", "refused"],
      ["7", "too-many", "refused"],
      ["8", "hq-admins", "updated"],
    ]);
    expect(rows[2][3]).toContain("letters, digits, dot, underscore, dash");
    expect(rows[3][3]).toContain("No entries");
    expect(rows[4][3]).toContain("10.300.0.1");
    expect(rows[5][3]).toContain("Too many columns");
    expect(text).toContain("3 saved, 4 refused");

    const library = plain((await client.get(`/o/${slug}/settings/shared-objects`)).text);
    expect(library).toContain("10.30.0.0/23");
    expect(library).toContain("fd30::/48, 10.30.8.0/22");
    expect(library).not.toContain("wrong-address");
    expect(library).not.toContain("no-entries");
  });

  test("A file with a stray quote is refused as a whole with the line to fix, and nothing is saved", async () => {
    const { client, slug } = await signUpNewOrganisation("ws-csv-bad");
    // RFC 4180 §2.5: an unquoted field may not hold a double quote; rows after it cannot be trusted.
    const csv = ["name,entries", "hq-admins,10.30.0.0/24", 'vpn"users,10.30.8.0/22', "branch,10.40.0.0/24", ""].join("\r\n");
    const response = await importCsv(client, slug, csv);
    expect(response.status).toBe(400);
    const text = plain(response.text);
    expect(text).toContain("The file is not valid CSV, nothing was imported: line 3:");
    expect(text).toContain("double quote inside an unquoted field");
    expect(text).not.toMatch(/\d+ saved, \d+ refused/);

    const library = plain((await client.get(`/o/${slug}/settings/shared-objects`)).text);
    expect(library).toContain("No shared objects yet");
    expect(library).not.toContain("10.30.0.0/24");
  });

  test("A quoted field may span lines: its entries are read as one row", async () => {
    const { client, slug } = await signUpNewOrganisation("ws-csv-lines");
    const csv = 'name,entries\n"hq-admins","10.30.0.0/24\n10.30.1.0/24"\nbranch,10.40.0.0/24\n';
    const response = await importCsv(client, slug, csv);
    expect(response.status).toBe(200);
    expect(plain(response.text)).toContain("2 saved, 0 refused"); // RFC 4180 §2.6: line breaks inside a quoted field
    const library = plain((await client.get(`/o/${slug}/settings/shared-objects`)).text);
    expect(library).toContain("10.30.0.0/24, 10.30.1.0/24");
    expect(library).toContain("10.40.0.0/24");
  });
});

describe("Who may do what on the device pages", () => {
  const clients = new Map<Role, TestClient>();
  let demoDevice: string;
  let revision: number;
  let operatorNetworks: string;

  beforeAll(async () => {
    for (const role of ["trainee", "reviewer", "engineer", "admin", "owner"] as const) {
      const client = new TestClient();
      const [email, password] = DEMO_PASSWORDS[role];
      expect((await client.signIn(email, password)).status).toBe(302);
      clients.set(role, client);
    }
    const ids = await fleetDeviceIds(clients.get("trainee")!, "lanternfield");
    expect(ids.length).toBeGreaterThanOrEqual(6);
    demoDevice = ids[0];
    const workspace = new Workspace(clients.get("trainee")!, "lanternfield", demoDevice);
    revision = await workspace.revision();
    operatorNetworks = (await workspace.exported(revision)).operatorNetworks.join("\n");
  });

  const readPaths = () => {
    const device = `/o/lanternfield/devices/${demoDevice}`;
    return ["/o/lanternfield/devices", device, `${device}/model/rules`, `${device}/model/settings`, `${device}/history`, `${device}/revisions/${revision}/export`, "/o/lanternfield/settings/shared-objects"];
  };

  for (const role of ["trainee", "reviewer"] as const) {
    test(`A ${role} reads the fleet, the device, its sections, history and export, but every change is refused (403)`, async () => {
      const client = clients.get(role)!;
      for (const path of readPaths()) expect((await client.get(path)).status, path).toBe(200);
      const device = new Workspace(client, "lanternfield", demoDevice);
      expect((await device.edit("operator-networks", { intent: "save-operator-networks", operatorNetworks }, revision)).status).toBe(403);
      expect((await device.edit("rules", { intent: "delete-rule", ruleId: "r1" }, revision)).status).toBe(403);
      expect((await device.edit("addresses", { intent: "save-address", name: "intruder-net", entries: "192.0.2.0/24" }, revision)).status).toBe(403);
      expect((await client.get("/o/lanternfield/devices/new")).status).toBe(403);
      expect((await client.post("/o/lanternfield/devices/new", { name: `probe-${role}`, siteId: "00000000-0000-4000-8000-000000000000", timezone: "UTC" })).status).toBe(403);
      expect((await client.get("/o/lanternfield/devices/import")).status).toBe(403);
      expect((await postMultipart(client, "/o/lanternfield/devices/import", { intent: "preview", target: "", file: new Blob([JSON.stringify(QUAY_EDGE)]) })).status).toBe(403);
      expect((await client.post("/o/lanternfield/settings/shared-objects", { intent: "save", kind: "address", name: "intruder-net", items: "192.0.2.0/24" })).status).toBe(403);
      expect(await device.revision()).toBe(revision);
    });
  }

  test("An engineer may edit devices but not the shared objects; an admin and an owner may do both", async () => {
    for (const role of ["engineer", "admin", "owner"] as const) {
      const client = clients.get(role)!;
      for (const path of readPaths()) expect((await client.get(path)).status, `${role} ${path}`).toBe(200);
      const device = new Workspace(client, "lanternfield", demoDevice);
      // Saving the current value is allowed and changes nothing: no new revision of the demo device.
      const unchanged = await device.edit("operator-networks", { intent: "save-operator-networks", operatorNetworks });
      expect(unchanged.status, role).toBe(302);
      expect(await device.revision()).toBe(revision);
      expect((await client.get("/o/lanternfield/devices/new")).status).toBe(200);
      expect((await client.get("/o/lanternfield/devices/import")).status).toBe(200);
      const name = `probe-${role}-${Date.now().toString(36)}`;
      const save = await client.post("/o/lanternfield/settings/shared-objects", { intent: "save", original: "", kind: "address", name, items: "10.99.0.0/24", description: "" });
      expect(save.status, role).toBe(role === "engineer" ? 403 : 302);
      if (role !== "engineer") expect((await client.post("/o/lanternfield/settings/shared-objects", { intent: "delete", name })).status).toBe(302);
    }
  });

  test("Another organisation's device answers 404, to pages and to edits, even through one's own organisation", async () => {
    const stranger = await newOrganisationWithSite("ws-stranger");
    const foreign = await createDevice(stranger.client, stranger.slug, stranger.siteId, "private-gw");
    const owner = clients.get("owner")!;
    for (const path of [foreign.path, `${foreign.path}/model/rules`, `${foreign.path}/history`, `${foreign.path}/revisions/1/export`, `/o/lanternfield/devices/${foreign.id}`, `/o/lanternfield/devices/${foreign.id}/revisions/1/export`]) {
      expect((await owner.get(path)).status, path).toBe(404);
    }
    const post = (path: string) => owner.request(path, { method: "POST", body: formBody({ intent: "save-operator-networks", operatorNetworks: "", baseRevision: "1" }) });
    expect((await post(`${foreign.path}/model/operator-networks`)).status).toBe(404);
    expect((await post(`/o/lanternfield/devices/${foreign.id}/model/operator-networks`)).status).toBe(404);
    // And the other way round: the stranger cannot reach the demo device through their own organisation.
    expect((await stranger.client.get(`/o/${stranger.slug}/devices/${demoDevice}`)).status).toBe(404);
    expect((await stranger.client.request(`/o/${stranger.slug}/devices/${demoDevice}/model/rules`, { method: "POST", body: formBody({ intent: "delete-rule", ruleId: "r1", baseRevision: String(revision) }) })).status).toBe(404);
    // Importing as a new revision of another organisation's device is refused too.
    expect((await postMultipart(stranger.client, `/o/${stranger.slug}/devices/import`, { intent: "import", target: `device:${demoDevice}`, baseRevision: String(revision), file: new Blob([JSON.stringify(QUAY_EDGE)]) })).status).toBe(404);
    expect(await foreign.revision()).toBe(1);
  });
});

describe("Deleting devices and sites", () => {
  test("A device is deleted only with its name typed and from its current revision; a site with devices cannot be deleted", async () => {
    const { client, slug, siteId } = await newOrganisationWithSite("delete-device");
    const device = await createDevice(client, slug, siteId, "gone-soon-01");
    const base = await device.revision("settings");
    await device.save("operator-networks", { intent: "save-operator-networks", operatorNetworks: "any4" });

    const wrongName = await device.edit("settings", { intent: "delete-device", confirmName: "something-else" });
    expect(wrongName.status).toBe(400);
    expect(plain(wrongName.text)).toContain("Type the device name (gone-soon-01) to confirm.");

    const stale = await device.edit("settings", { intent: "delete-device", confirmName: "gone-soon-01" }, base);
    expect(stale.status).toBe(409);
    expect(plain(stale.text)).toContain("the device changed since you opened it");

    const site = await client.post(`/o/${slug}/sites`, { intent: "delete", siteId });
    expect(site.status).toBe(409);
    expect(plain(site.text)).toContain("still has devices: gone-soon-01");

    const deleted = await device.edit("settings", { intent: "delete-device", confirmName: "gone-soon-01" });
    expect(deleted.status).toBe(302);
    expect(deleted.location).toBe(`/o/${slug}/devices`);
    expect(await fleetDeviceIds(client, slug)).toEqual([]);
    expect((await client.get(device.path)).status).toBe(404);
    const audit = await client.get(`/o/${slug}/settings/audit`);
    expect(audit.text).toContain('<tr data-action="device.deleted"');
    expect((await client.post(`/o/${slug}/sites`, { intent: "delete", siteId })).status).toBe(302);
  });
});
