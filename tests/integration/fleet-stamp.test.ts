// The fleet table kept under the organisation's fleet stamp (docs/decisions/026): each web
// process keeps an organisation's fleet rows until a database trigger raises the stamp. These
// tests write from this process — another process than the server's, as a job or a second web
// process would — and check that the server's next page shows every change, that a warm page
// reads nothing but the session, and that the cache changes nothing about who may see what.
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { Membership, Organisation, Site, User } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { deviceRevisions } from "#server/devices/index";
import { closeAnalysisPool } from "#server/jobs/analysis-pool.server";
import { revisionAnalysisQueue } from "#server/jobs/revision-analysis.server";
import { stopJobQueue } from "#server/jobs/job-queue.server";
import type { AuditActor } from "#server/services/audit.server";
import { createDevice, deleteDevice, saveEdit } from "#server/services/devices.server";
import { dismissFinding } from "#server/services/findings.server";
import { updateSite } from "#server/services/sites.server";
import { signUpNewOrganisation, type FetchResult, type TestClient } from "../support/client";
import { plain } from "../support/html";

const sequelize = getDatabase();
const actor: AuditActor = { userId: null, email: "fleet-stamp-test@test.example", clientAddress: "192.0.2.41" };
let owner: TestClient;
let slug = "";
let organisationId = "";
let siteId = "";

/** An invented quay gateway (RFC 5737 outside, RFC 1918 inside) with cleartext http on its management interface (a medium finding). */
function quay(name: string) {
  return {
    schemaVersion: 2,
    device: { name, timezone: "UTC" },
    interfaces: [
      { name: "outside", role: "wan", addresses: ["198.51.100.70/24"], listeners: [] },
      { name: "mgmt", role: "management", addresses: ["10.71.0.1/24"], listeners: ["https", "http"] },
    ],
    addresses: [{ name: "quay-ops", entries: ["10.71.0.0/24"] }],
    inboundRules: [
      { id: "ops-in", interface: "mgmt", sources: ["quay-ops"], destinations: ["any"], services: ["https"], action: "allow" },
      { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
    ],
    accounts: [{ name: "quay-admin", loginSources: ["quay-ops"], secondFactor: "totp" }],
    operatorNetworks: ["quay-ops"],
  };
}
const CLEARTEXT_KEY = "cleartext-listener interface:mgmt service:http";

/** The query count the server reported for this response (Server-Timing). */
function queriesOf(response: FetchResult): number {
  const match = /db;desc="(\d+) queries"/.exec(response.headers.get("Server-Timing") ?? "");
  if (!match) throw new Error(`no query count in Server-Timing (status ${response.status})`);
  return Number(match[1]);
}

async function fleetPage(client: TestClient = owner): Promise<string> {
  const response = await client.get(`/o/${slug}/devices`);
  expect(response.status).toBe(200);
  return plain(response.text);
}

async function stamp(): Promise<string> {
  return (await Organisation.findByPk(organisationId, { attributes: ["fleetStamp"], rejectOnEmpty: true })).fleetStamp;
}

beforeAll(async () => {
  ({ client: owner, slug } = await signUpNewOrganisation("fleet-stamp"));
  organisationId = (await Organisation.findOne({ where: { slug }, rejectOnEmpty: true })).id;
  siteId = (await Site.create({ organisationId, name: "Quay office", customer: "", location: "" })).id;
  await createDevice(organisationId, siteId, quay("quay-01"), actor, "created");
  await revisionAnalysisQueue.idle();
});

afterAll(async () => {
  await stopJobQueue();
  await closeAnalysisPool();
  await sequelize.close();
});

describe("The fleet table under its stamp", () => {
  test("Every table the fleet shows carries the trigger that raises the stamp", async () => {
    const [rows] = await sequelize.query("SELECT tgrelid::regclass::text AS name FROM pg_trigger WHERE tgname LIKE '%\\_fleet\\_stamp' ORDER BY 1");
    expect((rows as Array<{ name: string }>).map((row) => row.name)).toEqual(["change_proposals", "device_revisions", "devices", "field_checks", "finding_dismissals", "revision_analyses", "sites"]);
  });

  test("A warm fleet page reads only the session; a device added elsewhere shows on the next request, with a new stamp", async () => {
    expect(await fleetPage()).toContain("quay-01");
    const warm = await owner.get(`/o/${slug}/devices`);
    expect(queriesOf(warm)).toBe(1);
    const before = await stamp();
    await createDevice(organisationId, siteId, quay("quay-02"), actor, "created");
    await revisionAnalysisQueue.idle();
    expect(BigInt(await stamp())).toBeGreaterThan(BigInt(before));
    const page = await fleetPage();
    expect(page).toContain("quay-02");
    expect(page).toContain("2 of 2 devices");
  });

  test("An edit saved elsewhere (a new revision that renames the device) shows on the next request", async () => {
    await fleetPage();
    const devices = await deviceRevisions.current(organisationId);
    const first = devices.find(({ device }) => device.name === "quay-01")!;
    await saveEdit(organisationId, first.device.id, first.revision.number, (document) => ({ ...document, device: { ...document.device, name: "quay-01-renamed" } }), actor, "renamed");
    await revisionAnalysisQueue.idle();
    const page = await fleetPage();
    expect(page).toContain("quay-01-renamed");
  });

  test("A site renamed, a finding dismissed and a device deleted elsewhere each show on the next request", async () => {
    await fleetPage();
    await updateSite(organisationId, siteId, { name: "Quay control room", customer: "", location: "" }, actor);
    expect(await fleetPage()).toContain("Quay control room");

    const before = await owner.get(`/o/${slug}/devices.data?_routes=routes/organisation/devices/fleet`);
    const found = (await deviceRevisions.current(organisationId)).find(({ device }) => device.name === "quay-02")!;
    expect((await dismissFinding(found, CLEARTEXT_KEY, "Plain http is blocked upstream on this quay; tracked in change 914.", actor)).state).toBe("in-effect");
    const after = await owner.get(`/o/${slug}/devices.data?_routes=routes/organisation/devices/fleet`);
    // The dismissed finding leaves quay-02's counts: the table's data changed with it.
    expect(after.text).not.toBe(before.text);
    expect(queriesOf(after)).toBeGreaterThan(1);

    expect(await deleteDevice(organisationId, found.device.id, actor)).toBe(true);
    const page = await fleetPage();
    expect(page).not.toContain("quay-02");
    expect(page).toContain("1 of 1 device");
  });

  test("Another organisation never sees the kept rows, and a member removed loses the page at once", async () => {
    expect(await fleetPage()).toContain("quay-01-renamed");
    const other = await signUpNewOrganisation("fleet-stamp-other");
    expect((await other.client.get(`/o/${slug}/devices`)).status).toBe(404);
    const otherPage = plain((await other.client.get(`/o/${other.slug}/devices`)).text);
    expect(otherPage).not.toContain("quay-01");

    // The other organisation's owner joins this one as an engineer: the kept table is theirs to see…
    const user = await User.findOne({ where: { email: other.email }, rejectOnEmpty: true });
    const membership = await Membership.create({ userId: user.id, organisationId, role: "engineer" });
    expect(await fleetPage(other.client)).toContain("quay-01-renamed");
    // …until they are removed: the next request is refused, though the rows are still kept.
    await membership.destroy();
    expect((await other.client.get(`/o/${slug}/devices`)).status).toBe(404);
    expect(queriesOf(await owner.get(`/o/${slug}/devices`))).toBe(1);
  });
});
