import { beforeAll, describe, expect, test } from "vitest";
import { signUpNewOrganisation, type FetchResult, type TestClient } from "../support/client";

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

  test.each(PAGES)("The whole $page page, with its layouts, stays within 5 queries on a warm cache", async ({ path }) => {
    await client.get(`${devicePath}${path}`);
    const warm = await client.get(`${devicePath}${path}`);
    expect(warm.status).toBe(200);
    // root, organisation layout (its organisation list), device layout and the page itself.
    expect(queriesOf(warm)).toBeLessThanOrEqual(5);
  });

  test("The count is real: the fleet findings page grows with the work it does", async () => {
    // A page that reads dismissals and every device's current revision costs more than none:
    // guards against a header that always says 0.
    const fleet = await client.get(`${devicePath.replace(/\/devices\/.*$/, "")}/findings`);
    expect(fleet.status).toBe(200);
    expect(queriesOf(fleet)).toBeGreaterThanOrEqual(3);
  });
});
