// A device's expectations over HTTP, as a browser and a pipeline use them: the Expectations tab
// (engineers edit, reviewers and trainees read), each checked on the current revision with a
// "try it" link, the JSON export and import, and the audit log. One organisation of the test's
// own with a member per role, and an invented gateway (RFC 5737 documentation addresses stand
// in for the internet, RFC 1918 space inside).

import { afterAll, beforeAll, describe, expect, inject, test } from "vitest";
import { ROLES, roleRank, type Role } from "#server/auth/roles";
import { getDatabase } from "#server/db/database.server";
import { compileModel, parseModel, trace } from "#server/engine/index";
import { GOOD_PASSWORD, postMultipart, signUpNewOrganisation, TestClient, uniqueEmail, type FetchResult } from "../support/client";
import { plain, UUID } from "../support/html";
import { waitForLink } from "../support/outbox";

const outboxDir = inject("outboxDir");
const INVITATION = /https?:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/;
const sequelize = getDatabase();
afterAll(() => sequelize.close());

const SALTMARSH = {
  schemaVersion: 2,
  device: { name: "saltmarsh-gw", timezone: "UTC" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["192.0.2.10/24"], listeners: ["https"] },
    { name: "mgmt", role: "management", addresses: ["10.77.0.1/24"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "ops-lan", entries: ["10.77.0.0/24"] },
    { name: "partner", entries: ["198.51.100.0/24"] },
  ],
  inboundRules: [
    { id: "partner-https", interface: "outside", sources: ["partner"], destinations: ["any"], services: ["https"], action: "allow" },
    { id: "ops-in", interface: "mgmt", sources: ["ops-lan"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
    { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
  ],
  accounts: [{ name: "ops-mara", loginSources: ["ops-lan", "partner"], secondFactor: "totp" }],
  operatorNetworks: ["ops-lan"],
};

// The partner (198.51.100.0/24) logs in with a second factor; a bound that no non-private source
// gets more than No answer on outside https fails for the same partner (documentation space counts as the internet, PRODUCT.md §5).
const PARTNER_PROBE = { kind: "probe", id: "partner-https-mfa", note: "The partner logs in with TOTP", from: "198.51.100.7", interface: "outside", to: "", service: "https", when: "all-week", expect: "login-mfa" };
const QUIET_BOUND = { kind: "bound", id: "no-internet-https", note: "", sources: "non-private", interface: "outside", service: "https", atMost: "silent" };

let clients: Map<Role, TestClient>;
let slug: string;
let devicePath: string;
let otherDevicePath: string;

async function importDevice(client: TestClient, siteId: string, document: unknown): Promise<string> {
  const imported = await client.post(`/o/${slug}/devices/import`, { intent: "import", target: `site:${siteId}`, fileName: "saltmarsh.json", documentText: JSON.stringify(document) });
  expect(imported.status).toBe(302);
  const path = imported.location ?? "";
  expect(path).toMatch(new RegExp(`^/o/${slug}/devices/${UUID}$`));
  return path;
}

beforeAll(async () => {
  const signedUp = await signUpNewOrganisation("expectations");
  slug = signedUp.slug;
  const owner = signedUp.client;
  clients = new Map([["owner", owner]]);
  expect((await owner.post(`/o/${slug}/sites`, { intent: "create", name: "Saltmarsh yard", customer: "", location: "" })).status).toBe(302);
  const siteId = (await owner.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1] ?? "";
  devicePath = await importDevice(owner, siteId, SALTMARSH);
  otherDevicePath = await importDevice(owner, siteId, { ...SALTMARSH, device: { ...SALTMARSH.device, name: "saltmarsh-gw-2" } });
  for (const role of ROLES.filter((r) => r !== "owner")) {
    const email = uniqueEmail(`expect-${role}`);
    expect((await owner.post(`/o/${slug}/settings/members`, { intent: "invite", email, role })).status).toBe(302);
    const path = new URL(await waitForLink(outboxDir, email, INVITATION)).pathname;
    const member = new TestClient();
    expect((await member.post(path, { name: `Test ${role}`, password: GOOD_PASSWORD })).status).toBe(302);
    clients.set(role, member);
  }
}, 60_000);

const client = (role: Role): TestClient => {
  const found = clients.get(role);
  if (!found) throw new Error(`no ${role}`);
  return found;
};

const post = (role: Role, path: string, fields: Record<string, string>): Promise<FetchResult> => client(role).post(path, fields);

/** The expectation ids on the tab, top to bottom, with their status words. */
async function listed(path = devicePath, role: Role = "trainee"): Promise<Array<{ id: string; status: string }>> {
  const page = await client(role).get(`${path}/expectations`);
  expect(page.status).toBe(200);
  const text = plain(page.text);
  return [...text.matchAll(/<li id="expectation-([A-Za-z0-9._-]+)"[\s\S]*?<span class="[^"]*rounded-full[^"]*">([^<]+)<\/span>/g)].map((match) => ({ id: match[1], status: match[2] }));
}

async function exported(path = devicePath, role: Role = "trainee"): Promise<{ format: string; version: number; device?: string; expectations: Array<Record<string, unknown>> }> {
  const response = await client(role).get(`${path}/expectations.json`);
  expect(response.status).toBe(200);
  expect(response.headers.get("content-type")).toContain("application/json");
  expect(response.headers.get("content-disposition")).toMatch(/attachment; filename=".*expectations\.json"/);
  return JSON.parse(response.text);
}

describe("Expectations: who may do what", () => {
  test("every role reads the tab and the export; engineers and above add, reviewers and trainees are refused (403)", async () => {
    for (const role of ROLES) {
      expect((await client(role).get(`${devicePath}/expectations`)).status, role).toBe(200);
      expect((await client(role).get(`${devicePath}/expectations.json`)).status, role).toBe(200);
      const allowed = roleRank(role) >= roleRank("engineer");
      const added = await post(role, `${devicePath}/expectations`, { intent: "add", ...QUIET_BOUND, id: `bound-by-${role}` });
      expect(added.status, `${role} adds`).toBe(allowed ? 302 : 403);
      const imported = await post(role, `${devicePath}/expectations`, { intent: "import", mode: "append", documentText: JSON.stringify({ format: "sallyport-expectations", version: 1, expectations: [] }) });
      expect(imported.status, `${role} imports`).toBe(allowed ? 302 : 403);
      if (!allowed) {
        for (const intent of ["edit", "delete", "move"]) {
          const refused = await post(role, `${devicePath}/expectations`, { intent, target: "bound-by-engineer", position: "1", ...QUIET_BOUND });
          expect(refused.status, `${role} ${intent}`).toBe(403);
        }
      }
    }
    // What the engineers and above added is there; the refused never were.
    const ids = (await listed()).map((item) => item.id);
    for (const role of ROLES) expect(ids.includes(`bound-by-${role}`), role).toBe(roleRank(role) >= roleRank("engineer"));
    // Clean up for the tests below: a replace import with no expectations empties the list.
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "import", mode: "replace", documentText: JSON.stringify({ format: "sallyport-expectations", version: 1, expectations: [] }) })).status).toBe(302);
    expect(await listed()).toEqual([]);
  });

  test("another organisation's device answers 404, for reading, exporting and every change", async () => {
    const stranger = await signUpNewOrganisation("expect-stranger");
    // A member of another organisation asking for this one's device.
    expect((await stranger.client.get(`${devicePath}/expectations`)).status).toBe(404);
    expect((await stranger.client.get(`${devicePath}/expectations.json`)).status).toBe(404);
    expect((await stranger.client.post(`${devicePath}/expectations`, { intent: "add", ...QUIET_BOUND })).status).toBe(404);
    // This organisation's owner naming this device under the stranger's organisation, and a device id that is no device.
    const deviceId = devicePath.split("/").pop() ?? "";
    expect((await client("owner").get(`/o/${stranger.slug}/devices/${deviceId}/expectations`)).status).toBe(404);
    expect((await client("owner").post(`/o/${slug}/devices/00000000-0000-4000-8000-000000000000/expectations`, { intent: "add", ...QUIET_BOUND })).status).toBe(404);
    expect((await client("owner").get(`/o/${slug}/devices/00000000-0000-4000-8000-000000000000/expectations.json`)).status).toBe(404);
  });
});

describe("Expectations: checked on the current revision", () => {
  test("an engineer adds a probe that holds and a bound that fails; the failing one links to a trace of its witness", async () => {
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "add", ...PARTNER_PROBE })).status).toBe(302);
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "add", ...QUIET_BOUND })).status).toBe(302);
    expect(await listed()).toEqual([
      { id: "partner-https-mfa", status: "Holds" },
      { id: "no-internet-https", status: "Fails" },
    ]);
    const page = plain((await client("reviewer").get(`${devicePath}/expectations`)).text);
    expect(page).toContain("198.51.100.7 → outside https: Login with second factor, all week");
    expect(page).toContain("No non-private source gets more than No answer on outside https");
    // The witness prefers a documentation address (RFC 5737) inside the partner's range; tracing it gives more than No answer.
    const link = page.match(/href="([^"]*\/analysis\?[^"]+)"[^>]*>Try it: trace https from 198\.51\.100\.50 on outside/)?.[1];
    expect(link, "a try-it link for the failing bound").toBeDefined();
    const query = new URLSearchParams((link ?? "").split("?")[1]);
    const parsed = parseModel(SALTMARSH);
    if (!parsed.ok) throw new Error("fixture invalid");
    const traced = trace(compileModel(parsed.model), { from: query.get("from") ?? "", interface: query.get("interface") ?? "", service: query.get("service") ?? "", to: query.get("to") ?? undefined, at: query.get("at") ?? undefined });
    expect(traced.outcome).toBe("login-mfa");
    // The trace page opens with it.
    expect((await client("trainee").get(link ?? "")).status).toBe(200);
    // Readers get no editing controls.
    expect(page.includes('name="intent" value="delete"')).toBe(false);
  });

  test("a malformed expectation is refused (400) with the message beside its field; a taken id is a conflict (409)", async () => {
    const bad = await post("engineer", `${devicePath}/expectations`, { intent: "add", ...PARTNER_PROBE, id: "bad-one", from: "198.51.100.0/24", when: "someday" });
    expect(bad.status).toBe(400);
    const text = plain(bad.text);
    expect(text).toContain("must be one IPv4 or IPv6 address");
    expect(text).toContain('must be "all-week" or a week time such as "tue 10:00"');
    const taken = await post("engineer", `${devicePath}/expectations`, { intent: "add", ...PARTNER_PROBE });
    expect(taken.status).toBe(409);
    expect(plain(taken.text)).toContain('This device already has an expectation "partner-https-mfa"');
    expect((await listed()).map((item) => item.id)).toEqual(["partner-https-mfa", "no-internet-https"]);
  });

  test("edit, move and delete keep the order, and each change is in the audit log", async () => {
    const edited = await post("engineer", `${devicePath}/expectations`, { intent: "edit", target: "no-internet-https", ...QUIET_BOUND, id: "internet-at-most-login", atMost: "login-mfa" });
    expect(edited.status).toBe(302);
    expect(await listed()).toEqual([
      { id: "partner-https-mfa", status: "Holds" },
      { id: "internet-at-most-login", status: "Holds" },
    ]);
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "move", target: "internet-at-most-login", position: "1" })).status).toBe(302);
    expect((await listed()).map((item) => item.id)).toEqual(["internet-at-most-login", "partner-https-mfa"]);
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "delete", target: "partner-https-mfa" })).status).toBe(302);
    expect((await listed()).map((item) => item.id)).toEqual(["internet-at-most-login"]);
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "delete", target: "partner-https-mfa" })).status).toBe(404);
    const audit = (await client("owner").get(`/o/${slug}/settings/audit`)).text;
    for (const action of ["expectation.added", "expectation.changed", "expectation.reordered", "expectation.deleted", "expectation.imported"]) expect(audit, action).toContain(`<tr data-action="${action}"`);
  });
});

describe("Expectations: the JSON file", () => {
  test("export, then import into another device (replace), gives the same list; append adds after, and refuses ids already there with their paths", async () => {
    expect((await post("engineer", `${devicePath}/expectations`, { intent: "add", ...PARTNER_PROBE })).status).toBe(302);
    const file = await exported();
    expect(file).toMatchObject({ format: "sallyport-expectations", version: 1, device: "saltmarsh-gw" });
    expect(file.expectations.map((e) => e.id)).toEqual(["internet-at-most-login", "partner-https-mfa"]);
    // An upload, as the form's file field sends it.
    const uploaded = await postMultipart(client("engineer"), `${otherDevicePath}/expectations`, { intent: "import", mode: "replace", file: new Blob([JSON.stringify(file)], { type: "application/json" }) });
    expect(uploaded.status).toBe(302);
    const again = await exported(otherDevicePath);
    expect(again.expectations).toEqual(file.expectations);
    expect(again.device).toBe("saltmarsh-gw-2");
    // Append: the same file again clashes on both ids.
    const clash = await post("engineer", `${otherDevicePath}/expectations`, { intent: "import", mode: "append", documentText: JSON.stringify(file) });
    expect(clash.status).toBe(400);
    expect(plain(clash.text)).toMatch(/expectations\[0\]\.id<\/span>: "internet-at-most-login" is already an expectation of this device/);
    expect(plain(clash.text)).toMatch(/expectations\[1\]\.id<\/span>/);
    const extra = { ...QUIET_BOUND, id: "extra-bound", atMost: "login-password" };
    expect((await post("engineer", `${otherDevicePath}/expectations`, { intent: "import", mode: "append", documentText: JSON.stringify({ ...file, expectations: [{ ...extra, note: "" }] }) })).status).toBe(302);
    expect((await exported(otherDevicePath)).expectations.map((e) => e.id)).toEqual(["internet-at-most-login", "partner-https-mfa", "extra-bound"]);
  });

  test("a malformed file is refused (400) with the path of every problem, and nothing changes", async () => {
    const before = await exported(otherDevicePath);
    const malformed = {
      format: "sallyport-expectations",
      version: 1,
      expectations: [
        { id: "a", kind: "probe", from: "not-an-address", interface: "outside", service: "https", expect: "login-mfa" },
        { id: "b", kind: "bound", sources: [], interface: "outside", service: "https", atMost: "loud" },
      ],
    };
    const refused = await post("engineer", `${otherDevicePath}/expectations`, { intent: "import", mode: "replace", documentText: JSON.stringify(malformed) });
    expect(refused.status).toBe(400);
    const text = plain(refused.text);
    for (const path of ["expectations[0].from", "expectations[1].sources", "expectations[1].atMost"]) expect(text, path).toContain(`${path}</span>`);
    const notJson = await post("engineer", `${otherDevicePath}/expectations`, { intent: "import", mode: "replace", documentText: "{ not json" });
    expect(notJson.status).toBe(400);
    expect(plain(notJson.text)).toContain("This is not JSON");
    const wrongFormat = await post("engineer", `${otherDevicePath}/expectations`, { intent: "import", mode: "replace", documentText: JSON.stringify({ ...malformed, format: "something-else", expectations: [] }) });
    expect(wrongFormat.status).toBe(400);
    expect(await exported(otherDevicePath)).toEqual(before);
  });
});
