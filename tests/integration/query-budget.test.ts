import { beforeAll, describe, expect, test } from "vitest";
import { signUpNewOrganisation, TestClient, type FetchResult } from "../support/client";

// The device pages resolve the member and the device once per request (React Router middleware)
// and the device revision through one repository with a cache, so a warm page costs a fixed,
// small number of queries however many loaders run. The server reports its count in the
// Server-Timing header (SERVER_TIMING=1 in tests/integration/global-setup.ts).

const UUID = "[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}";

/** An invented device: documentation addresses (RFC 5737) outside, RFC 1918 inside. */
const TIDEWATER_EDGE = {
  schemaVersion: 2,
  device: { name: "tidewater-edge", timezone: "Europe/Lisbon" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["198.51.100.10/24"], listeners: ["https", "ping"] },
    { name: "inside", role: "lan", addresses: ["10.44.0.1/24"], listeners: ["https", "ssh"] },
  ],
  addresses: [{ name: "ops-desk", entries: ["10.44.8.0/24"] }],
  schedules: [{ name: "weekdays", windows: [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "08:00", end: "18:00" }] }],
  inboundRules: [
    { id: "r1", interface: "inside", sources: ["ops-desk"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
    { id: "r2", interface: "outside", sources: ["any"], destinations: ["any"], services: ["https"], schedule: "weekdays", action: "allow" },
    { id: "r3", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
  ],
  accounts: [{ name: "ops-ines", loginSources: ["ops-desk"], secondFactor: "totp" }],
  operatorNetworks: ["ops-desk"],
};

let client: TestClient;
let devicePath = "";

/** The query count the server reported for this response. */
function queriesOf(response: FetchResult): number {
  const timing = response.headers.get("Server-Timing") ?? "";
  const match = /db;desc="(\d+) queries"/.exec(timing);
  if (!match) throw new Error(`no query count in Server-Timing: "${timing}" (status ${response.status})`);
  return Number(match[1]);
}

beforeAll(async () => {
  const signedUp = await signUpNewOrganisation("query-budget");
  client = signedUp.client;
  const slug = signedUp.slug;
  expect((await client.post(`/o/${slug}/sites`, { intent: "create", name: "Estuary office", customer: "", location: "" })).status).toBe(302);
  const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
  if (!siteId) throw new Error("no site id on the sites page");
  const imported = await client.post(`/o/${slug}/devices/import`, { intent: "import", target: `site:${siteId}`, fileName: "tidewater-edge.json", documentText: JSON.stringify(TIDEWATER_EDGE) });
  expect(imported.status).toBe(302);
  devicePath = imported.location ?? "";
  expect(devicePath).toMatch(new RegExp(`^/o/${slug}/devices/${UUID}$`));
});

// Each page's own loader, as the browser asks for it when moving between the device's tabs:
// the middleware (session, membership, device) plus the loader.
const PAGES = [
  { page: "device overview", path: "", route: "routes/organisation/devices/device/overview" },
  { page: "trace", path: "/analysis?from=203.0.113.50&interface=outside&service=https", route: "routes/organisation/devices/device/analysis" },
  { page: "exposure map", path: "/exposure", route: "routes/organisation/devices/device/exposure" },
];

describe("Query budget of the device pages", () => {
  test.each(PAGES)("The $page loader runs at most 4 queries on a warm cache", async ({ path, route }) => {
    const [pathname, search = ""] = `${devicePath}${path}`.split("?");
    const dataUrl = `${pathname}.data?${new URLSearchParams([...new URLSearchParams(search), ["_routes", route]])}`;
    const cold = await client.get(dataUrl);
    expect(cold.status, cold.text.slice(0, 200)).toBe(200);
    const warm = await client.get(dataUrl);
    expect(warm.status).toBe(200);
    expect(queriesOf(warm)).toBeLessThanOrEqual(4);
  });

  test.each(PAGES)("The whole $page page, with its layouts, stays within 4 queries on a warm cache", async ({ path }) => {
    await client.get(`${devicePath}${path}`);
    const warm = await client.get(`${devicePath}${path}`);
    expect(warm.status).toBe(200);
    // The session with the user's memberships (which the organisation layout lists), the device,
    // and what the page itself reads.
    expect(queriesOf(warm)).toBeLessThanOrEqual(4);
  });

  test("The count is real: the fleet findings page grows with the work it does", async () => {
    // A page that reads dismissals and every device's current revision costs more than none:
    // guards against a header that always says 0.
    const fleet = await client.get(`${devicePath.replace(/\/devices\/.*$/, "")}/findings`);
    expect(fleet.status).toBe(200);
    expect(queriesOf(fleet)).toBeGreaterThanOrEqual(3);
  });
});

// Issue 14: every request reads the session, the user and their memberships in one query, and a
// device page the device in one more; nothing else runs per request before the page's own work.
describe("What a request costs before its page's own work", () => {
  const trace = () => `${devicePath}/api/trace?from=203.0.113.50&interface=outside&service=https`;

  test("The trace JSON route costs two queries: the session with its memberships, and the device", async () => {
    await client.get(trace());
    const warm = await client.get(trace());
    expect(warm.status).toBe(200);
    expect(queriesOf(warm)).toBe(2);
  });

  test("The trace page, its layouts included, costs the same two", async () => {
    const page = `${devicePath}/analysis?from=203.0.113.50&interface=outside&service=https`;
    await client.get(page);
    const warm = await client.get(page);
    expect(warm.status).toBe(200);
    expect(queriesOf(warm)).toBe(2);
  });

  test("The fleet page costs six: the session, the fleet's rows, open proposals, sites, field checks and dismissals", async () => {
    const fleet = await client.get(devicePath.replace(/\/devices\/.*$/, "/devices"));
    expect(fleet.status).toBe(200);
    expect(fleet.text).toContain("tidewater-edge");
    expect(queriesOf(fleet)).toBeLessThanOrEqual(6);
  });

  test("The shell still lists the organisations read with the session, and another organisation's pages stay closed", async () => {
    const other = await signUpNewOrganisation("query-budget-other");
    const slug = devicePath.split("/")[2];
    const page = await client.get(devicePath);
    expect(page.text).toContain(`/o/${slug}/devices`);
    expect(page.text).not.toContain(`/o/${other.slug}/`);
    expect((await client.get(`/o/${other.slug}/devices`)).status).toBe(404);
    expect((await other.client.get(devicePath)).status).toBe(404);
  });

  test("A small answer goes out whole with its length and uncompressed; a page goes out compressed in one piece", async () => {
    const small = await client.request(trace(), { headers: { "Accept-Encoding": "br, gzip" } });
    expect(small.status).toBe(200);
    expect(small.headers.get("Content-Encoding")).toBeNull();
    expect(Number(small.headers.get("Content-Length"))).toBe(Buffer.byteLength(small.text));
    expect(JSON.parse(small.text)).toBeTypeOf("object");
    const page = await client.request(`${devicePath}/analysis?from=203.0.113.50&interface=outside&service=https`, { headers: { "Accept-Encoding": "gzip" } });
    expect(page.status).toBe(200);
    expect(page.headers.get("Content-Encoding")).toBe("gzip");
    expect(page.text).toMatch(/<\/html>$/);
  });

  test("Public files are served by name, with their cache lifetime; other paths reach the app", async () => {
    const icon = await new TestClient().get("/favicon.svg");
    expect(icon.status).toBe(200);
    expect(icon.headers.get("Content-Type")).toContain("image/svg+xml");
    expect(icon.headers.get("Cache-Control")).toBe("public, max-age=3600");
    const missing = await new TestClient().get("/favicon.svg.missing");
    expect(missing.status).toBe(404);
  });
});
