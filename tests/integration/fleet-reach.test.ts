// Fleet reach over HTTP: the organisation page and its CSV against each device's own reach, the
// app shell's search box, CIDR sources on the device pages, and bad input as clear 400s.
// Semantics: PRODUCT.md §3; groups of sources: docs/engine.md "Sources as blocks".

import { readFileSync } from "node:fs";
import { beforeAll, describe, expect, test } from "vitest";
import { parseCsv } from "#server/formats/csv";
import { compileModel, parseModel, reachGroups, traceGroups } from "#server/engine/index";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient } from "../support/client";
import { plain, UUID, visibleText } from "../support/html";

const AT = "2026-12-02T16:00:00Z"; // a Wednesday, inside clf-fw-01's vendor window (10:00 in Chicago)
const ORG = "/o/lanternfield";

let engineer: TestClient;
const deviceIds = new Map<string, string>();

beforeAll(async () => {
  engineer = new TestClient();
  expect((await engineer.signIn(...DEMO_PASSWORDS.engineer)).status).toBe(302);
  const fleet = await engineer.get(`${ORG}/devices`);
  for (const match of fleet.text.matchAll(new RegExp(`href="${ORG}/devices/(${UUID})"[^>]*>([^<]+)<`, "g"))) deviceIds.set(match[2], match[1]);
  expect(deviceIds.size).toBeGreaterThanOrEqual(6);
});

function demoDevice(name: string) {
  const parsed = parseModel(JSON.parse(readFileSync(new URL(`../../seeders/devices/${name}.json`, import.meta.url), "utf8")));
  if (!parsed.ok) throw new Error(`demo model ${name} invalid`);
  return compileModel(parsed.model);
}

/** The CSV's rows as records keyed by its header. */
function records(text: string): Record<string, string>[] {
  const [header, ...rows] = parseCsv(text);
  return rows.map((row) => Object.fromEntries(header.map((name, index) => [name, row[index]])));
}

/** What a row answers, in the columns fleet reach and device reach share. */
const answerOf = (row: Record<string, string>) => JSON.stringify([row.interface, row.to, row.service, row.sources, row.source_count, row.outcome, row.deciding_layer, row.rule_id, row.eligible_accounts, row.detail]);

// Addresses and blocks from the demo's story (seeders/devices/README.md): a scanner, the NOC,
// the vendor's support network, an inside LAN, and an IPv6 block.
const SOURCES = ["203.0.113.7", "198.51.100.70", "203.0.113.0/24", "198.51.100.64/27", "172.16.28.0/24", "2001:db8:4c46::/48"];

describe("Fleet reach", () => {
  test.each(SOURCES)("equals each demo device's own reach, row for row, from %s", async (from) => {
    const fleet = await engineer.get(`${ORG}/reach.csv?${new URLSearchParams({ from, at: AT })}`);
    expect(fleet.status).toBe(200);
    const rows = records(fleet.text);
    for (const [name, id] of deviceIds) {
      const own = await engineer.get(`${ORG}/devices/${id}/reach.csv?${new URLSearchParams({ from, at: AT })}`);
      expect(own.status).toBe(200);
      const expected = records(own.text).map(answerOf).sort();
      const shown = rows.filter((row) => row.device_id === id);
      expect(shown.map(answerOf).sort(), name).toEqual(expected);
      expect(new Set(shown.map((row) => row.device))).toEqual(new Set([name]));
    }
    // Every row is one of the devices', and the whole list is most exposed first.
    expect(rows.every((row) => [...deviceIds.values()].includes(row.device_id))).toBe(true);
    const ranks = rows.map((row) => ["silent", "refused", "answered", "login-denied", "login-mfa", "login-password"].indexOf(row.outcome));
    expect(ranks).toEqual([...ranks].sort((a, b) => b - a));
  });

  test("A block is answered per group of its sources, as the engine groups them on the same model", async () => {
    const fleet = await engineer.get(`${ORG}/reach.csv?${new URLSearchParams({ from: "203.0.113.0/24", at: AT, role: "wan", service: "https" })}`);
    const rows = records(fleet.text).filter((row) => row.device === "clf-fw-01");
    const engine = reachGroups(demoDevice("clf-fw-01"), "203.0.113.0/24", AT, { roles: ["wan"], services: ["https"] });
    expect(rows.map((row) => [row.sources, row.source_count, row.outcome]).sort()).toEqual(engine.results.flatMap((cell) => cell.groups.map((group) => [group.sources.join(" "), group.count, group.outcome])).sort());
    // seeders/devices/README.md: the vendor's 203.0.113.128/27 gets the web console's login in the window (RFC 4632 §3.1: a /27 holds 32 addresses).
    expect(rows.find((row) => row.outcome === "login-mfa")).toMatchObject({ sources: "203.0.113.128/27", source_count: "32", rule_id: "vendor-web-in-window" });
  });

  test("An engineer filters to wan interfaces and one service; the page, its headline and its CSV show only those", async () => {
    const query = new URLSearchParams({ from: "203.0.113.7", at: AT, role: "wan", service: "https" });
    const page = await engineer.get(`${ORG}/reach?${query}`);
    expect(page.status).toBe(200);
    const csv = records((await engineer.get(`${ORG}/reach.csv?${query}`)).text);
    expect(csv.length).toBeGreaterThan(0);
    expect(csv.every((row) => row.role === "wan" && row.service === "https")).toBe(true);
    // One wan https row per device with a wan interface; the headline counts devices by what they show.
    const answered = new Set(csv.filter((row) => row.outcome !== "silent").map((row) => row.device_id)).size;
    expect(visibleText(page.text).replace(/\s+/g, " ")).toMatch(new RegExp(`203\\.0\\.113\\.7 gets an answer from ${answered} of ${deviceIds.size} devices`));
    expect(plain(page.text)).toMatch(/<input[^>]*name="role" checked=""[^>]*value="wan"/);
  });

  test("A block wider than its family, a malformed time, an unknown role or site is a 400 in words, the typed source kept", async () => {
    const wide = await engineer.get(`${ORG}/reach?from=${encodeURIComponent("203.0.113.0/33")}`);
    expect(wide.status).toBe(400);
    expect(visibleText(wide.text)).toContain('"203.0.113.0/33" is wider than IPv4 allows: a prefix length is /0 to /32'); // RFC 4632 §3.1
    expect(plain(wide.text)).toContain('value="203.0.113.0/33"');
    const wideCsv = await engineer.get(`${ORG}/reach.csv?from=${encodeURIComponent("2001:db8::/129")}`);
    expect(wideCsv.status).toBe(400);
    expect(wideCsv.text).toContain("wider than IPv6 allows"); // RFC 4291 §2.3
    const hostBits = await engineer.get(`${ORG}/reach?from=${encodeURIComponent("203.0.113.7/24")}`);
    expect(hostBits.status).toBe(400);
    expect(visibleText(hostBits.text)).toContain("the block is 203.0.113.0/24");
    for (const bad of ["from=203.0.113.7&at=next-tuesday", "from=203.0.113.7&role=outside", "from=203.0.113.7&site=not-a-site", `from=${"1".repeat(200)}`, "from=", "from=203.0.113.7&service=%3Cscript%3E"]) {
      expect((await engineer.get(`${ORG}/reach?${bad}`)).status, bad).toBe(400);
    }
  });

  test("Another organisation's member asking gets their own fleet, never the demo's devices", async () => {
    const { client, slug } = await signUpNewOrganisation("fleet-reach");
    const csv = await client.get(`/o/${slug}/reach.csv?from=203.0.113.7`);
    expect(csv.status).toBe(200);
    expect(records(csv.text)).toEqual([]);
    expect((await client.get(`${ORG}/reach?from=203.0.113.7`)).status).toBe(404);
  });
});

describe("The app shell's search box", () => {
  test("An address or CIDR block opens fleet reach; a name searches the fleet table", async () => {
    for (const [q, location] of [
      ["203.0.113.7", `${ORG}/reach?from=203.0.113.7`],
      ["203.0.113.0/24", `${ORG}/reach?from=203.0.113.0%2F24`],
      ["2001:db8::1", `${ORG}/reach?from=2001%3Adb8%3A%3A1`],
      ["203.0.113.0/33", `${ORG}/reach?from=203.0.113.0%2F33`],
      ["clf-gw", `${ORG}/devices?q=clf-gw`],
      ["", `${ORG}/devices`],
    ]) {
      const response = await engineer.get(`${ORG}/search?${new URLSearchParams({ q })}`);
      expect(response.status, q).toBe(302);
      expect(response.location, q).toBe(location);
    }
    const page = await engineer.get(`${ORG}/devices`);
    expect(plain(page.text)).toMatch(/<form[^>]*action="\/o\/lanternfield\/search"[^>]*role="search"|<form[^>]*role="search"[^>]*action="\/o\/lanternfield\/search"/);
  });
});

describe("CIDR sources and the interface filter on a device's pages", () => {
  test("Reach filtered to one interface shows only its rows, and its headline counts only what it shows", async () => {
    const id = deviceIds.get("clf-gw-02");
    const [filtered, csv] = await Promise.all([
      engineer.get(`${ORG}/devices/${id}/reach?${new URLSearchParams({ from: "203.0.113.50", at: AT, interface: "outside" })}`),
      engineer.get(`${ORG}/devices/${id}/reach.csv?${new URLSearchParams({ from: "203.0.113.50", at: AT, interface: "outside" })}`),
    ]);
    expect(filtered.status).toBe(200);
    const rows = records(csv.text);
    expect(new Set(rows.map((row) => row.interface))).toEqual(new Set(["outside"]));
    const logins = rows.filter((row) => row.outcome.startsWith("login-")).length;
    const everywhere = reachGroups(demoDevice("clf-gw-02"), "203.0.113.50", AT).results.filter((cell) => cell.groups[0].outcome.startsWith("login-")).length;
    // seeders/devices/README.md: inside answers with the login too, so the filter changes the count.
    expect(everywhere).toBeGreaterThan(logins);
    expect(visibleText(filtered.text)).toContain(`reaches ${logins} services with a login`);
    const unknown = await engineer.get(`${ORG}/devices/${id}/reach?from=203.0.113.50&interface=nowhere`);
    expect(unknown.status).toBe(400);
    expect(visibleText(unknown.text)).toContain('This device has no interface "nowhere"');
  });

  test("The trace API answers a block per group, exactly as the engine groups it", async () => {
    const id = deviceIds.get("clf-gw-02");
    const probe = { from: "203.0.113.0/24", interface: "outside", service: "https", at: AT };
    const response = await engineer.get(`${ORG}/devices/${id}/api/trace?${new URLSearchParams(probe)}`);
    expect(response.status).toBe(200);
    expect(JSON.parse(response.text)).toEqual(JSON.parse(JSON.stringify(traceGroups(demoDevice("clf-gw-02"), probe))));
    const wide = await engineer.get(`${ORG}/devices/${id}/api/trace?${new URLSearchParams({ ...probe, from: "203.0.113.0/40" })}`);
    expect(wide.status).toBe(400);
    expect(JSON.parse(wide.text).error).toContain("wider than IPv4 allows");
  });
});
