// Every endpoint of the REST API answers what its OpenAPI document says — successes and
// errors alike. Real calls against the built app; each answer is checked against the document
// the server serves (tests/support/api.ts: the document against the OpenAPI 3.1 schema, each
// body against the operation's JSON Schema). Errors must be problem details, RFC 9457 §3.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { ApiToken, Site } from "#models/index";
import { encodeCursor } from "#server/api/pagination";
import { getDatabase } from "#server/db/database.server";
import { ApiClient, Conformance, makeToken } from "../support/api";
import { makeTeam, MOLE, type Team } from "../support/proposal-team";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

let conformance: Conformance;
let team: Team;
let siteId: string;
const clients = {} as Record<"author" | "engineer" | "reader" | "trainee" | "service" | "limited" | "stranger", ApiClient>;
const none = new ApiClient(null);

/** A window that has not started: a proposal's window must not be over when it is made. */
function window() {
  const start = new Date(Date.now() + 24 * 3_600_000);
  return { windowStart: start.toISOString(), windowEnd: new Date(start.getTime() + 2 * 3_600_000).toISOString() };
}

/** MOLE with one more allow rule: a real change for a proposal. */
function changedMole() {
  return { ...MOLE, inboundRules: [MOLE.inboundRules[0], { id: "r1b", interface: "inside", sources: ["partner-hq"], destinations: ["any"], services: ["https"], action: "allow" }, ...MOLE.inboundRules.slice(1)] };
}

beforeAll(async () => {
  conformance = await Conformance.load();
  team = await makeTeam("api");
  siteId = (await Site.findOne({ where: { organisationId: team.organisationId }, rejectOnEmpty: true })).id;
  const member = (who: keyof Team["members"]) => ({ userId: team.members[who].userId, email: team.members[who].email, role: team.members[who].actor.role });
  clients.author = new ApiClient((await makeToken(team.organisationId, member("author"), { name: "author pipeline" })).secret);
  clients.engineer = new ApiClient((await makeToken(team.organisationId, member("engineer"), { name: "other engineer" })).secret);
  clients.reader = new ApiClient((await makeToken(team.organisationId, member("reviewer"), { name: "reader", scope: "read" })).secret);
  clients.trainee = new ApiClient((await makeToken(team.organisationId, member("trainee"), { name: "trainee write" })).secret);
  clients.service = new ApiClient((await makeToken(team.organisationId, member("admin"), { name: "deploy bot", kind: "service", role: "engineer" })).secret);
  const limited = await makeToken(team.organisationId, member("author"), { name: "limited", scope: "read" });
  await ApiToken.update({ ratePerMinute: 1 }, { where: { id: limited.id } });
  clients.limited = new ApiClient(limited.secret);
  const stranger = await makeTeam("api-stranger");
  clients.stranger = new ApiClient((await makeToken(stranger.organisationId, { userId: stranger.members.owner.userId, email: stranger.members.owner.email, role: "owner" }, { name: "stranger" })).secret);
});

describe("The OpenAPI document and every endpoint's real answers", () => {
  test("Every operation answers a call without a token with a 401 problem that the document describes", async () => {
    for (const operation of conformance.operations()) {
      if (operation === "GET /openapi.json") continue;
      const [method, template] = operation.split(" ");
      const path = template.replace("{device}", team.deviceId).replace("{revision}", "1").replace("{proposal}", randomUUID());
      const result = conformance.check(operation, await none.call(method, path, method === "POST" ? { body: {} } : {}));
      expect(result.status, operation).toBe(401);
      // RFC 6750 §3: a bearer challenge; no error code when no token was sent.
      expect(result.headers.get("WWW-Authenticate")).toBe('Bearer realm="Sallyport API"');
      expect(result.headers.get("Content-Type")).toBe("application/problem+json");
    }
  });

  test("The token, devices and revisions answer as documented, with paging, ETags and their errors", async () => {
    const { author, reader, trainee, stranger } = clients;
    conformance.check("GET /token", await author.get("/token"));

    // Devices: a page of one, then the next by its cursor; bad paging is a 400.
    const first = conformance.check("GET /devices", await author.get("/devices?limit=1"));
    expect(first.status).toBe(200);
    const created = conformance.check("POST /devices", await author.post("/devices", { siteId, message: "From the API test", document: { ...MOLE, device: { ...MOLE.device, name: "mole-second" } } }));
    expect(created.status).toBe(201);
    const secondId = (created.json as { id: string }).id;
    expect(created.headers.get("Location")).toBe(`/api/v1/devices/${secondId}`);
    const pageOne = conformance.check("GET /devices", await author.get("/devices?limit=1"));
    const cursor = (pageOne.json as { nextCursor: string }).nextCursor;
    expect(cursor).toBeTypeOf("string");
    // RFC 8288: the next page as a relative link.
    expect(pageOne.headers.get("Link")).toMatch(/^<\/api\/v1\/devices\?limit=1&cursor=[A-Za-z0-9_-]+>; rel="next"$/);
    const pageTwo = conformance.check("GET /devices", await author.get(`/devices?limit=1&cursor=${cursor}`));
    const names = [...(pageOne.json as { items: { name: string }[] }).items, ...(pageTwo.json as { items: { name: string }[] }).items].map((device) => device.name);
    expect(names).toEqual(["mole-edge", "mole-second"]);
    expect((pageTwo.json as { nextCursor: string | null }).nextCursor).toBeNull();
    expect(conformance.check("GET /devices", await author.get("/devices?limit=0")).status).toBe(400);
    expect(conformance.check("GET /devices", await author.get("/devices?cursor=not-ours")).status).toBe(400);

    // Creating: bad body, wrong media type, too large, name taken, unknown site, scope, role.
    const bad = conformance.check("POST /devices", await author.post("/devices", { siteId: "nope", document: [] }));
    expect(bad.status).toBe(400);
    expect((bad.json as { issues: { path: string }[] }).issues.map((issue) => issue.path)).toEqual(["body.siteId", "body.document"]);
    const invalidModel = conformance.check("POST /devices", await author.post("/devices", { siteId, document: { schemaVersion: 2, device: { name: "x" }, interfaces: [{ name: "a b" }] } }));
    expect(invalidModel.status).toBe(400);
    expect((invalidModel.json as { issues: { path: string }[] }).issues[0].path).toMatch(/^interfaces/);
    expect(conformance.check("POST /devices", await author.call("POST", "/devices", { raw: "siteId=1", contentType: "application/x-www-form-urlencoded" })).status).toBe(415);
    expect(conformance.check("POST /devices", await author.call("POST", "/devices", { raw: "{not json" })).status).toBe(400);
    expect(conformance.check("POST /devices", await author.post("/devices", { siteId, document: MOLE })).status).toBe(409);
    expect(conformance.check("POST /devices", await author.post("/devices", { siteId: randomUUID(), document: MOLE })).status).toBe(404);
    const scoped = conformance.check("POST /devices", await reader.post("/devices", { siteId, document: MOLE }));
    expect(scoped.status).toBe(403);
    // RFC 6750 §3.1: insufficient_scope names the scope needed.
    expect(scoped.headers.get("WWW-Authenticate")).toBe('Bearer realm="Sallyport API", error="insufficient_scope", scope="write"');
    expect(conformance.check("POST /devices", await trainee.post("/devices", { siteId, document: MOLE })).status).toBe(403);

    // One device: another organisation's is a 404, a malformed id a 400.
    expect(conformance.check("GET /devices/{device}", await author.get(`/devices/${team.deviceId}`)).status).toBe(200);
    expect(conformance.check("GET /devices/{device}", await stranger.get(`/devices/${team.deviceId}`)).status).toBe(404);
    expect(conformance.check("GET /devices/{device}", await author.get("/devices/12345")).status).toBe(400);

    // Revisions: the list, one revision and its export with ETag / If-None-Match (RFC 9110 §13.1.2).
    expect(conformance.check("GET /devices/{device}/revisions", await author.get(`/devices/${team.deviceId}/revisions`)).status).toBe(200);
    expect(conformance.check("GET /devices/{device}/revisions", await stranger.get(`/devices/${team.deviceId}/revisions`)).status).toBe(404);
    for (const operation of ["GET /devices/{device}/revisions/{revision}", "GET /devices/{device}/revisions/{revision}/export"]) {
      const path = operation.slice(4).replace("{device}", team.deviceId);
      const fresh = conformance.check(operation, await author.get(path.replace("{revision}", "1")));
      expect(fresh.status).toBe(200);
      const etag = fresh.headers.get("ETag");
      expect(etag).toMatch(/^W\/"[A-Za-z0-9_-]+"$/);
      const again = conformance.check(operation, await author.get(path.replace("{revision}", "1"), { "If-None-Match": etag ?? "" }));
      expect(again.status).toBe(304);
      expect(again.headers.get("ETag")).toBe(etag);
      expect(conformance.check(operation, await author.get(path.replace("{revision}", "1"), { "If-None-Match": 'W/"other"' })).status).toBe(200);
      expect(conformance.check(operation, await author.get(path.replace("{revision}", "99"))).status).toBe(404);
      expect(conformance.check(operation, await author.get(path.replace("{revision}", "first"))).status).toBe(400);
    }
    const exported = await author.get(`/devices/${team.deviceId}/revisions/1/export`);
    expect((exported.json as { device: { name: string } }).device.name).toBe("mole-edge");
  });

  test("Trace, reach, the exposure map and findings answer as documented, with their errors", async () => {
    const { author, stranger } = clients;
    const device = `/devices/${team.deviceId}`;
    const traced = conformance.check("GET /devices/{device}/trace", await author.get(`${device}/trace?from=198.51.100.7&interface=outside&service=https&at=2026-12-02T10:00:00Z`));
    // PRODUCT.md §3: partner-hq (198.51.100.0/26) is allowed by r2; the account's login sources are the NOC only.
    expect(traced.json).toMatchObject({ outcome: "login-denied", ruleId: "r2" });
    expect(conformance.check("GET /devices/{device}/trace", await author.get(`${device}/trace?from=10.0.0&interface=outside&service=https`)).status).toBe(400);
    // A block is answered per group of its sources (the walk of 2026-12-02 found it refused as "not an IPv4 address").
    const grouped = conformance.check("GET /devices/{device}/trace", await author.get(`${device}/trace?from=198.51.100.0/24&interface=outside&service=https&at=2026-12-02T10:00:00Z`));
    const groups = (grouped.json as { count: string; groups: Array<{ sources: string[]; count: string; outcome: string; trace: { outcome: string } }> }).groups;
    expect((grouped.json as { count: string }).count).toBe("256"); // RFC 4632 §3.1
    expect(groups.reduce((sum, group) => sum + BigInt(group.count), 0n)).toBe(256n);
    expect(groups.find((group) => group.sources.includes("198.51.100.0/26"))).toMatchObject({ outcome: "login-denied", count: "64", trace: { outcome: "login-denied" } });
    expect(conformance.check("GET /devices/{device}/trace", await author.get(`${device}/trace?from=198.51.100.0/33&interface=outside&service=https`)).status).toBe(400);
    expect(conformance.check("GET /devices/{device}/trace", await author.get(`${device}/trace?interface=outside`)).status).toBe(400);
    expect(conformance.check("GET /devices/{device}/trace", await stranger.get(`${device}/trace?from=198.51.100.7&interface=outside&service=https`)).status).toBe(404);

    const reached = conformance.check("GET /devices/{device}/reach", await author.get(`${device}/reach?from=10.20.30.5`));
    expect((reached.json as { rows: unknown[] }).rows).toHaveLength(2 * 6);
    expect(conformance.check("GET /devices/{device}/reach", await author.get(`${device}/reach?from=10.20.30.5&at=yesterday`)).status).toBe(400);
    // Found in the user walk of 2026-12-02: the interface filter was dropped and a block's rows did
    // not say which of its sources each answered for. A block's groups per place add up to the block.
    const outside = conformance.check("GET /devices/{device}/reach", await author.get(`${device}/reach?from=198.51.100.0/24&interface=outside`));
    const outsideRows = (outside.json as { rows: Array<{ interface: string; service: string; outcome: string; sources: string[]; count: string }> }).rows;
    expect(new Set(outsideRows.map((row) => row.interface))).toEqual(new Set(["outside"]));
    const https = outsideRows.filter((row) => row.service === "https");
    expect(https.length).toBeGreaterThan(1);
    expect(https.reduce((sum, row) => sum + BigInt(row.count), 0n)).toBe(256n); // RFC 4632 §3.1: a /24 holds 2^8 addresses
    // partner-hq (198.51.100.0/26) is allowed by r2 and its login refused: PRODUCT.md §3.
    expect(https.find((row) => row.sources.includes("198.51.100.0/26"))).toMatchObject({ outcome: "login-denied", count: "64" });
    expect(conformance.check("GET /devices/{device}/reach", await author.get(`${device}/reach?from=10.20.30.5&interface=outside,nowhere`)).status).toBe(400);

    // Fleet reach: the organisation's devices only, filtered by role; bad input is a 400.
    const fleet = conformance.check("GET /reach", await author.get(`/reach?from=198.51.100.7&role=wan&service=https`));
    const fleetRows = (fleet.json as { devices: number; rows: Array<{ deviceId: string; role: string; service: string; outcome: string; ruleId: string | null }> }).rows;
    // The team's device (an earlier test made another from a document).
    expect((fleet.json as { devices: number }).devices).toBeGreaterThanOrEqual(1);
    expect(fleetRows.filter((row) => row.deviceId === team.deviceId)).toEqual([expect.objectContaining({ role: "wan", service: "https", outcome: "login-denied", ruleId: "r2" })]);
    expect(new Set(fleetRows.map((row) => `${row.role} ${row.service}`))).toEqual(new Set(["wan https"]));
    // Another organisation's fleet reach holds its own devices, never this one.
    const theirs = (conformance.check("GET /reach", await stranger.get(`/reach?from=198.51.100.7`)).json as { rows: Array<{ deviceId: string }> }).rows;
    expect(theirs.length).toBeGreaterThan(0);
    expect(theirs.filter((row) => row.deviceId === team.deviceId)).toEqual([]);
    expect(conformance.check("GET /reach", await author.get(`/reach?from=198.51.100.0/33`)).status).toBe(400); // RFC 4632 §3.1: /0 to /32
    expect(conformance.check("GET /reach", await author.get(`/reach?from=198.51.100.7&role=outside`)).status).toBe(400);
    expect(conformance.check("GET /reach", await author.get(`/reach?from=198.51.100.7&site=not-a-uuid`)).status).toBe(400);
    // Paged as the other lists are (limit and cursor): the pages together are the whole answer, in its order.
    type FleetPage = { rows: Array<{ deviceId: string; interface: string; service: string; sources: string[]; at: string }>; totalRows: number; nextCursor: string | null };
    const question = "from=198.51.100.0/24&at=2026-12-02T10:00:00Z";
    const whole = conformance.check("GET /reach", await author.get(`/reach?${question}&limit=200`)).json as FleetPage;
    expect(whole.totalRows).toBeGreaterThan(7);
    expect(whole.totalRows).toBeLessThanOrEqual(200);
    expect(whole.rows).toHaveLength(whole.totalRows);
    expect(whole.nextCursor).toBeNull();
    const walked: FleetPage["rows"] = [];
    let cursor: string | null = null;
    for (let page = 0; page < whole.totalRows; page += 1) {
      const answer = conformance.check("GET /reach", await author.get(`/reach?${question}&limit=7${cursor ? `&cursor=${cursor}` : ""}`)).json as FleetPage;
      expect(answer.rows.length).toBe(Math.min(7, whole.totalRows - walked.length));
      expect(answer.totalRows).toBe(whole.totalRows);
      walked.push(...answer.rows);
      cursor = answer.nextCursor;
      if (!cursor) break;
    }
    expect(walked).toEqual(whole.rows);
    // Without `at`, the next page keeps the first page's instant.
    const nowFirst = conformance.check("GET /reach", await author.get(`/reach?from=198.51.100.0/24&limit=2`)).json as FleetPage;
    await new Promise((resolve) => setTimeout(resolve, 20));
    const nowSecond = conformance.check("GET /reach", await author.get(`/reach?from=198.51.100.0/24&limit=2&cursor=${nowFirst.nextCursor}`)).json as FleetPage;
    expect(nowSecond.rows[0].at).toBe(nowFirst.rows[0].at);
    expect(conformance.check("GET /reach", await author.get(`/reach?${question}&limit=0`)).status).toBe(400);
    expect(conformance.check("GET /reach", await author.get(`/reach?${question}&limit=201`)).status).toBe(400);
    expect(conformance.check("GET /reach", await author.get(`/reach?${question}&cursor=not*a*cursor`)).status).toBe(400);
    // A cursor from other revisions of the fleet: its positions would mean other rows.
    expect(conformance.check("GET /reach", await author.get(`/reach?${question}&cursor=${encodeCursor(0, "other-revisions|1796205600000")}`)).status).toBe(409);

    const exposurePage = conformance.check("GET /devices/{device}/exposure", await author.get(`${device}/exposure?limit=3&at=2026-12-02T10:00:00Z`));
    const next = (exposurePage.json as { nextCursor: string }).nextCursor;
    expect(next).toBeTypeOf("string");
    // The next page keeps the first page's instant without repeating it.
    const secondPage = conformance.check("GET /devices/{device}/exposure", await author.get(`${device}/exposure?limit=3&cursor=${next}`));
    expect((secondPage.json as { at: string }).at).toBe("2026-12-02T10:00:00.000Z");
    expect(conformance.check("GET /devices/{device}/exposure", await author.get(`${device}/exposure?at=not-a-time`)).status).toBe(400);
    expect(conformance.check("GET /devices/{device}/exposure", await author.get(`${device}/exposure?cursor=${encodeCursor(0, "another-revision|2026-12-02T10:00:00.000Z")}`)).status).toBe(409);
    expect(conformance.check("GET /devices/{device}/exposure", await author.get(`${device}/exposure?family=5`)).status).toBe(400);

    const findings = conformance.check("GET /devices/{device}/findings", await author.get(`${device}/findings`));
    expect((findings.json as { revision: number }).revision).toBe(1);
    expect(conformance.check("GET /devices/{device}/findings", await stranger.get(`${device}/findings`)).status).toBe(404);
  });

  test("Proposals are made, read and submitted as documented, with their errors", async () => {
    const { author, engineer, reader, service } = clients;
    const device = `/devices/${team.deviceId}`;
    const made = conformance.check("POST /devices/{device}/proposals", await author.post(`${device}/proposals`, { title: "Partner console on the inside", ...window(), document: changedMole() }));
    expect(made.status).toBe(201);
    const id = (made.json as { id: string }).id;
    expect(conformance.check("POST /devices/{device}/proposals", await author.post(`${device}/proposals`, { title: "x", ...window(), document: changedMole() })).status).toBe(400);
    expect(conformance.check("POST /devices/{device}/proposals", await reader.post(`${device}/proposals`, { title: "Read only", ...window(), document: changedMole() })).status).toBe(403);

    const effect = conformance.check("GET /devices/{device}/proposals/{proposal}/effect", await reader.get(`${device}/proposals/${id}/effect`));
    expect((effect.json as { ok: boolean; effect: { changed: boolean } }).effect.changed).toBe(true);
    expect(conformance.check("GET /devices/{device}/proposals/{proposal}/effect", await reader.get(`${device}/proposals/${randomUUID()}/effect`)).status).toBe(404);
    expect(conformance.check("GET /devices/{device}/proposals/{proposal}/effect", await reader.get(`${device}/proposals/not-an-id/effect`)).status).toBe(400);

    // Only the author submits (403 for another engineer); submitted twice is a 409.
    expect(conformance.check("POST /devices/{device}/proposals/{proposal}/submit", await engineer.post(`${device}/proposals/${id}/submit`, {})).status).toBe(403);
    const submitted = conformance.check("POST /devices/{device}/proposals/{proposal}/submit", await author.post(`${device}/proposals/${id}/submit`, {}));
    expect(submitted.json).toMatchObject({ id, state: "in_review", reasons: [] });
    expect(conformance.check("POST /devices/{device}/proposals/{proposal}/submit", await author.post(`${device}/proposals/${id}/submit`, {})).status).toBe(409);
    expect(conformance.check("POST /devices/{device}/proposals/{proposal}/submit", await author.post(`${device}/proposals/${id}/submit`, { acknowledgement: 5 })).status).toBe(400);
    // A body over the endpoint's limit (64 KiB without a model document) is a 413, read and refused.
    expect(conformance.check("POST /devices/{device}/proposals/{proposal}/submit", await author.call("POST", `${device}/proposals/${id}/submit`, { raw: JSON.stringify({ acknowledgement: "x".repeat(70 * 1024) }) })).status).toBe(413);
    // Text that cannot be stored is a 400 naming where it is (server/validation/text.ts).
    const nul = conformance.check("POST /devices/{device}/proposals", await author.call("POST", `${device}/proposals`, { raw: JSON.stringify({ title: "Nul\u0000title", ...window(), document: changedMole() }) }));
    expect(nul.status).toBe(400);
    expect((nul.json as { issues: { path: string }[] }).issues[0].path).toBe("body.title");

    // A service token is the author of what it proposes, and may submit it.
    const byService = conformance.check("POST /devices/{device}/proposals", await service.post(`${device}/proposals`, { title: "Pipeline change", ...window(), document: changedMole() }));
    expect(byService.status).toBe(201);
    const serviceId = (byService.json as { id: string }).id;
    expect(conformance.check("POST /devices/{device}/proposals/{proposal}/submit", await service.post(`${device}/proposals/${serviceId}/submit`, {})).status).toBe(200);
  });

  test("Field checks are recorded, listed and read as documented: agreements, a difference and two bad rows, each on its own", async () => {
    // Found in the user walk of 2026-12-02: issue 13 asks for observations posted to the API; there was no endpoint.
    const { author, reader, trainee, stranger } = clients;
    const device = `/devices/${team.deviceId}`;
    const when = new Date().toISOString();
    const observations = [
      // partner-hq (198.51.100.0/26) is allowed by r2 on outside https and its login refused (PRODUCT.md §3): a login page agrees.
      { when, from: "198.51.100.7", to: "203.0.113.2", service: "https", observed: "login", note: "partner laptop" },
      { when, from: "198.51.100.9", to: "203.0.113.2", service: "https", observed: "login-denied" },
      { when, from: "198.51.100.8", to: "203.0.113.2", service: "https", observed: "silent" },
      { when, from: "198.51.100.300", to: "203.0.113.2", service: "https", observed: "silent" },
      { when: "2026-12-01T10:00", from: "198.51.100.7", to: "203.0.113.2", service: "https", observed: "login" },
    ];
    const recorded = conformance.check("POST /devices/{device}/field-checks", await author.post(`${device}/field-checks`, { fileName: "walk.csv", observations }));
    expect(recorded.status).toBe(201);
    const check = recorded.json as { id: string; counts: { rows: number; agreements: number; differences: number; invalid: number }; rows: Array<{ line: number; status: string; problem: string | null }> };
    expect(check.counts).toMatchObject({ rows: 5, agreements: 2, differences: 1, invalid: 2 });
    expect(check.rows.map((row) => row.status)).toEqual(["agrees", "agrees", "differs", "invalid", "invalid"]);
    expect(check.rows[3].problem).toContain("198.51.100.300");
    expect(check.rows[4].problem).toContain("offset");
    expect(recorded.headers.get("Location")).toBe(`/api/v1${device}/field-checks/${check.id}`);

    const listed = conformance.check("GET /devices/{device}/field-checks", await reader.get(`${device}/field-checks`));
    expect((listed.json as { items: Array<{ id: string; source: string }> }).items[0]).toMatchObject({ id: check.id, source: "api" });
    expect(conformance.check("GET /devices/{device}/field-checks/{check}", await reader.get(`${device}/field-checks/${check.id}`)).json).toMatchObject({ id: check.id, counts: check.counts });

    expect(conformance.check("GET /devices/{device}/field-checks/{check}", await reader.get(`${device}/field-checks/${randomUUID()}`)).status).toBe(404);
    expect(conformance.check("GET /devices/{device}/field-checks", await stranger.get(`${device}/field-checks`)).status).toBe(404);
    expect(conformance.check("GET /devices/{device}/field-checks", await reader.get(`${device}/field-checks?limit=0`)).status).toBe(400);
    // A read token may not record; a trainee's write token may not either (the tab's role is engineer).
    expect(conformance.check("POST /devices/{device}/field-checks", await reader.post(`${device}/field-checks`, { observations })).status).toBe(403);
    expect(conformance.check("POST /devices/{device}/field-checks", await trainee.post(`${device}/field-checks`, { observations })).status).toBe(403);
    expect(conformance.check("POST /devices/{device}/field-checks", await author.post(`${device}/field-checks`, { observations: [] })).status).toBe(400);
  });

  test("A token over its rate limit gets a 429 problem with Retry-After (RFC 6585 §4)", async () => {
    const { limited } = clients;
    // The limit counts per minute: start well inside one.
    const second = new Date().getUTCSeconds();
    if (second > 50) await new Promise((resolve) => setTimeout(resolve, (61 - second) * 1000));
    expect(conformance.check("GET /token", await limited.get("/token")).status).toBe(200);
    const refused = conformance.check("GET /devices/{device}/trace", await limited.get(`/devices/${team.deviceId}/trace?from=192.0.2.1&interface=outside&service=https`));
    expect(refused.status).toBe(429);
    const retryAfter = Number(refused.headers.get("Retry-After"));
    expect(retryAfter).toBeGreaterThanOrEqual(1);
    expect(retryAfter).toBeLessThanOrEqual(60);
    expect(refused.json).toMatchObject({ status: 429, retryAfter });
    for (const operation of conformance.operations().filter((name) => name.startsWith("GET /devices/{device}") && !name.includes("{proposal}"))) {
      const path = operation.slice(4).replace("{device}", team.deviceId).replace("{revision}", "1");
      expect(conformance.check(operation, await limited.get(path)).status).toBe(429);
    }
  });

  test("Every operation's success and at least one of its errors were seen, and every documented error status somewhere", () => {
    const seen = conformance.seen;
    for (const operation of conformance.operations()) {
      if (operation === "GET /openapi.json") continue;
      const statuses = [...seen].filter((entry) => entry.startsWith(`${operation} `)).map((entry) => entry.slice(operation.length + 1));
      expect(statuses.some((status) => status.startsWith("2")), `${operation} success seen`).toBe(true);
      expect(statuses.some((status) => status.startsWith("4")), `${operation} error seen`).toBe(true);
    }
    const allStatuses = new Set(conformance.operations().flatMap((operation) => conformance.statuses(operation)));
    const seenStatuses = new Set([...seen].map((entry) => entry.split(" ").at(-1)));
    expect([...allStatuses].filter((status) => !seenStatuses.has(status))).toEqual([]);
  });
});
