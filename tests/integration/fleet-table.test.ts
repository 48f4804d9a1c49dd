// The fleet table (issue 14): what it reads and how it pages. A large organisation's devices
// must cost the page short stored rows only — never a document, the findings or their keys —
// so a fleet of large devices does not stall the server for every other organisation. Counts
// and speed are the load benchmark's (tests/bench/load.bench.ts); this file checks the reads.
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { Organisation, Site } from "#models/index";
import { getDatabase } from "#server/db/database.server";
import { withQueryTally } from "#server/db/query-log.server";
import { deviceRevisions } from "#server/devices/index";
import { closeAnalysisPool } from "#server/jobs/analysis-pool.server";
import { revisionAnalysisQueue } from "#server/jobs/revision-analysis.server";
import { stopJobQueue } from "#server/jobs/job-queue.server";
import type { AuditActor } from "#server/services/audit.server";
import { fleetDeviceRows } from "#server/services/device-list.server";
import { createDevice } from "#server/services/devices.server";
import { dismissFinding } from "#server/services/findings.server";
import { signUpNewOrganisation, type TestClient } from "../support/client";
import { plain } from "../support/html";

const sequelize = getDatabase();
const actor: AuditActor = { userId: null, email: "fleet-table-test@test.example", clientAddress: "192.0.2.31" };
let organisationId = "";
let siteId = "";
let client: TestClient;
let slug = "";

/**
 * An invented berth gateway (RFC 5737 outside, RFC 1918 inside): cleartext http on the
 * management interface (a medium finding, dismissed at once) and a factory-default account name
 * (a high one, whose dismissal a second person confirms).
 */
function berth(name: string) {
  return {
    schemaVersion: 2,
    device: { name, timezone: "UTC" },
    interfaces: [
      { name: "outside", role: "wan", addresses: ["198.51.100.60/24"], listeners: [] },
      { name: "mgmt", role: "management", addresses: ["10.61.0.1/24"], listeners: ["https", "ssh", "http"] },
    ],
    addresses: [{ name: "berth-ops", entries: ["10.61.0.0/24"] }],
    inboundRules: [
      { id: "ops-in", interface: "mgmt", sources: ["berth-ops"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
      { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
    ],
    accounts: [{ name: "administrator", loginSources: ["berth-ops"] }],
    operatorNetworks: ["berth-ops"],
  };
}
const CLEARTEXT_KEY = "cleartext-listener interface:mgmt service:http";
const DEFAULT_NAME_KEY = "default-account-name account:administrator";

async function addBerths(from: number, to: number): Promise<void> {
  for (let number = from; number <= to; number++) await createDevice(organisationId, siteId, berth(`berth-${String(number).padStart(2, "0")}`), actor, "created");
  await revisionAnalysisQueue.idle();
}

/** Whether a statement reads a column that grows with the size of a device. */
function readsBodies(statement: string): boolean {
  return /\bdocument\b/.test(statement) || /\bfindings\b/.test(statement) || /finding_keys(?! IS NOT NULL)/.test(statement);
}

beforeAll(async () => {
  ({ client, slug } = await signUpNewOrganisation("fleet-table"));
  const organisation = await Organisation.findOne({ where: { slug } });
  organisationId = organisation!.id;
  siteId = (await Site.create({ organisationId, name: "Berth office", customer: "", location: "" })).id;
});

afterAll(async () => {
  await stopJobQueue();
  await closeAnalysisPool();
  await sequelize.close();
});

describe("What the fleet table reads", () => {
  test("Short stored rows only: no document, findings or finding keys are read, nothing is compiled, and the query count does not grow with the fleet", async () => {
    await addBerths(1, 2);
    const compiledBefore = deviceRevisions.cachedRevisions;
    const two = await withQueryTally(() => fleetDeviceRows(organisationId, { wait: false }));
    expect(two.result.map((row) => row.name)).toEqual(["berth-01", "berth-02"]);
    expect(two.result.every((row) => !row.analysing && row.findingsBySeverity.medium === 1 && row.findingsBySeverity.high >= 1)).toBe(true);
    await addBerths(3, 6);
    const six = await withQueryTally(() => fleetDeviceRows(organisationId, { wait: false }));
    expect(six.result).toHaveLength(6);
    expect(six.tally.count).toBe(two.tally.count);
    for (const statement of [...two.tally.statements, ...six.tally.statements]) expect(readsBodies(statement), statement).toBe(false);
    expect(deviceRevisions.cachedRevisions).toBe(compiledBefore);
    // The check itself: the fleet findings page does read the findings.
    expect(readsBodies('SELECT "revision_id", "findings" FROM "revision_analyses"')).toBe(true);
  });

  test("A dismissal in effect takes its finding out of the device's counts (one more query, matching the dismissed keys in the database); one awaiting confirmation does not", async () => {
    const before = new Map((await fleetDeviceRows(organisationId)).map((row) => [row.name, row]));
    const found = await deviceRevisions.find(organisationId, before.get("berth-01")!.id);
    expect((await dismissFinding(found!, CLEARTEXT_KEY, "Plain http is blocked upstream on this berth; tracked in change 812.", actor)).state).toBe("in-effect");
    const awaiting = await deviceRevisions.find(organisationId, before.get("berth-02")!.id);
    expect((await dismissFinding(awaiting!, DEFAULT_NAME_KEY, "The account is renamed on the device next week in change 813.", actor)).state).toBe("awaiting-confirmation");

    const { result, tally } = await withQueryTally(() => fleetDeviceRows(organisationId));
    const after = new Map(result.map((row) => [row.name, row]));
    expect(after.get("berth-01")!.findingsBySeverity).toEqual({ ...before.get("berth-01")!.findingsBySeverity, medium: 0 });
    expect(after.get("berth-02")!.findingsBySeverity).toEqual(before.get("berth-02")!.findingsBySeverity);
    expect(after.get("berth-03")!.findingsBySeverity).toEqual(before.get("berth-03")!.findingsBySeverity);
    for (const statement of tally.statements) expect(statement).not.toMatch(/\bdocument\b|\bfindings\b/);
    expect(tally.statements.filter((statement) => statement.includes("jsonb_array_elements"))).toHaveLength(1);
  });
});

describe("Paging the fleet table", () => {
  test("Past 50 devices the table shows one page at a time; sort and search apply across every page, and a new sort starts at page 1", async () => {
    await addBerths(7, 55);
    const first = plain((await client.get(`/o/${slug}/devices`)).text);
    expect(first).toContain("55 of 55 devices; 1–50 shown");
    expect(first).toContain("Page 1 of 2");
    expect(first).toContain(">berth-50<");
    expect(first).not.toContain(">berth-51<");

    const second = plain((await client.get(`/o/${slug}/devices?page=2`)).text);
    expect(second).toContain("Page 2 of 2");
    expect(second).toContain(">berth-55<");
    expect(second).not.toContain(">berth-50<");
    expect(second).toContain('rel="prev"');

    // Descending by name: the last names lead page 1, the first end page 2.
    const descending = plain((await client.get(`/o/${slug}/devices?sort=name&dir=desc`)).text);
    expect(descending.indexOf(">berth-55<")).toBeGreaterThan(-1);
    expect(descending).not.toContain(">berth-01<");
    expect(plain((await client.get(`/o/${slug}/devices?sort=name&dir=desc&page=2`)).text)).toContain(">berth-01<");

    // A search narrows the whole fleet, not the page in hand; a page past the end shows the last.
    const searched = plain((await client.get(`/o/${slug}/devices?q=berth-5&page=9`)).text);
    expect(searched).toContain("6 of 55 devices");
    expect(searched).toContain(">berth-55<");
    expect(searched).not.toContain("Page 1 of");

    // The sort links of page 2 lead to page 1 of the new order.
    const links = [...second.matchAll(/href="[^"?]*\?([^"]*sort=[^"]*)"/g)].map((match) => match[1]);
    expect(links.length).toBeGreaterThan(0);
    for (const link of links) expect(new URLSearchParams(link.replace(/&amp;/g, "&")).has("page")).toBe(false);
  });
});
