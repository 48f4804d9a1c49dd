// Issue 14: 89 × HTTP 500 from malformed requests. Every route family, table-driven: ids that
// are not UUIDs (a 36-character string of hex digits and dashes among them) answer 400 or 404
// and never reach PostgreSQL; a well-formed unknown id answers 404; U+0000, other control
// characters and lone surrogates in any text field answer 400 naming the field before anything
// is written; a non-finite baseRevision on import is a 400.
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { createDatabase } from "#server/db/database.server";
import { AuditEvent, Device, Organisation, Site, User } from "#models/index";
import { DEMO_PASSWORDS, GOOD_PASSWORD, postMultipart, signUpNewOrganisation, TestClient, uniqueEmail } from "../support/client";
import { plain } from "../support/html";

const sequelize = createDatabase(process.env.DATABASE_URL!);
afterAll(() => sequelize.close());

/** Strings that are not UUIDs; the first two are 36 characters of hex digits and dashes (issue 14). */
const MALFORMED_IDS = ["------------------------------------", "0123456789abcdef-0123456789abcdef-01", "00000000-0000-0000-0000-00000000000", "not-an-id", "1%20OR%201%3D1"];
/** A UUID (RFC 9562 §4, version 4) that names nothing. */
const UNKNOWN_ID = "7d3c1f0e-8a4b-4c2d-9e6f-0a1b2c3d4e5f";

let owner: TestClient;
let deviceId: string;
let org: { client: TestClient; slug: string };

beforeAll(async () => {
  owner = new TestClient();
  expect((await owner.signIn(...DEMO_PASSWORDS.owner)).status).toBe(302);
  const lanternfield = await Organisation.findOne({ where: { slug: "lanternfield" } });
  const device = await Device.findOne({ where: { organisationId: lanternfield!.id } });
  deviceId = device!.id;
  org = await signUpNewOrganisation("malformed");
});

const device = (id: string, rest = "") => `/o/lanternfield/devices/${id}${rest}`;

/** Route families whose URL holds an id: GET pages and resources, and POST actions. */
const PATH_ROUTES: Array<{ name: string; method: "GET" | "POST"; path: (id: string) => string }> = [
  { name: "device overview", method: "GET", path: (id) => device(id) },
  { name: "device trace page", method: "GET", path: (id) => device(id, "/analysis") },
  { name: "device reach", method: "GET", path: (id) => device(id, "/reach") },
  { name: "device exposure", method: "GET", path: (id) => device(id, "/exposure") },
  { name: "device section", method: "GET", path: (id) => device(id, "/model/interfaces") },
  { name: "device history", method: "GET", path: (id) => device(id, "/history") },
  { name: "device expectations", method: "GET", path: (id) => device(id, "/expectations") },
  { name: "device proposals", method: "GET", path: (id) => device(id, "/proposals") },
  { name: "device export", method: "GET", path: (id) => device(id, "/revisions/1/export") },
  { name: "trace API", method: "GET", path: (id) => device(id, "/api/trace?from=192.0.2.1&interface=wan&service=https") },
  { name: "reach CSV", method: "GET", path: (id) => device(id, "/reach.csv?from=192.0.2.1") },
  { name: "exposure CSV", method: "GET", path: (id) => device(id, "/exposure.csv") },
  { name: "expectations JSON", method: "GET", path: (id) => device(id, "/expectations.json") },
  { name: "device section save", method: "POST", path: (id) => device(id, "/model/interfaces") },
  { name: "dismissals", method: "POST", path: (id) => device(id, "/dismissals") },
  { name: "proposals API", method: "POST", path: (id) => device(id, "/api/proposals") },
  { name: "proposal page", method: "GET", path: (id) => `/o/lanternfield/devices/${deviceId}/proposals/${id}` },
  { name: "proposal record", method: "GET", path: (id) => `/o/lanternfield/devices/${deviceId}/proposals/${id}/record` },
  { name: "proposal record JSON", method: "GET", path: (id) => `/o/lanternfield/devices/${deviceId}/proposals/${id}/record.json` },
  { name: "proposal effect", method: "GET", path: (id) => `/o/lanternfield/devices/${deviceId}/proposals/${id}/effect` },
  { name: "proposal draft", method: "GET", path: (id) => `/o/lanternfield/devices/${deviceId}/proposals/${id}/draft/interfaces` },
  { name: "proposal step", method: "POST", path: (id) => `/o/lanternfield/devices/${deviceId}/proposals/${id}/withdraw` },
  { name: "reset link", method: "GET", path: (id) => `/reset-password/${id}` },
  { name: "invitation link", method: "GET", path: (id) => `/invitations/${id}` },
  { name: "e-mail confirmation link", method: "GET", path: (id) => `/confirm-email/${id}` },
];

function send(client: TestClient, method: "GET" | "POST", path: string) {
  return method === "GET" ? client.get(path) : client.post(path, { intent: "withdraw" });
}

describe("An id that is not a UUID is a 400 or 404 on every route family, never a 500; an unknown one a 404", () => {
  for (const route of PATH_ROUTES) {
    test(`${route.method} ${route.name}`, async () => {
      for (const id of MALFORMED_IDS) {
        const response = await send(owner, route.method, route.path(id));
        expect([400, 404], `${route.path(id)} → ${response.status} ${response.text.slice(0, 200)}`).toContain(response.status);
      }
      const unknown = await send(owner, route.method, route.path(UNKNOWN_ID));
      expect(unknown.status, route.path(UNKNOWN_ID)).toBe(404);
    });
  }

  test("Ids in forms: a site, a member, an invitation, a new device's site and the shared-object confirmation", async () => {
    const forms: Array<{ path: string; fields: (id: string) => Record<string, string> }> = [
      { path: "/o/lanternfield/sites", fields: (id) => ({ intent: "delete", siteId: id }) },
      { path: "/o/lanternfield/sites", fields: (id) => ({ intent: "update", siteId: id, name: "Renamed", customer: "", location: "" }) },
      { path: "/o/lanternfield/settings/members", fields: (id) => ({ intent: "change-role", membershipId: id, role: "engineer" }) },
      { path: "/o/lanternfield/settings/members", fields: (id) => ({ intent: "remove", membershipId: id }) },
      { path: "/o/lanternfield/settings/members", fields: (id) => ({ intent: "revoke", invitationId: id }) },
      { path: "/o/lanternfield/devices/new", fields: (id) => ({ name: "fresh-device", siteId: id, timezone: "UTC" }) },
      { path: "/o/lanternfield/settings/shared-objects", fields: (id) => ({ intent: "save", kind: "address", name: "probe-net", items: "192.0.2.0/28", description: "", confirm: "1", library: "0".repeat(64), bases: `${id}:1` }) },
    ];
    for (const form of forms) {
      for (const id of [...MALFORMED_IDS, UNKNOWN_ID]) {
        const response = await owner.post(form.path, form.fields(decodeURIComponent(id)));
        expect([400, 404, 409], `${form.path} ${JSON.stringify(form.fields(id))} → ${response.status}`).toContain(response.status);
      }
    }
  });

  test("The import target: a device or site that is not a UUID is refused (404), the model untouched", async () => {
    const document = JSON.stringify({ schemaVersion: 2, device: { name: "import-target-probe", timezone: "UTC" } });
    for (const id of MALFORMED_IDS) {
      for (const kind of ["device", "site"]) {
        const response = await postMultipart(owner, "/o/lanternfield/devices/import", { intent: "import", target: `${kind}:${decodeURIComponent(id)}`, file: new Blob([document], { type: "application/json" }) });
        expect([400, 404], `${kind}:${id} → ${response.status}`).toContain(response.status);
      }
    }
    const unknown = await postMultipart(owner, "/o/lanternfield/devices/import", { intent: "import", target: `device:${UNKNOWN_ID}`, file: new Blob([document], { type: "application/json" }) });
    expect(unknown.status).toBe(404);
  });

  test("Ids in query strings (findings, changes and audit filters) are ignored when malformed, never a 500", async () => {
    for (const id of MALFORMED_IDS) {
      for (const path of [`/o/lanternfield/findings?site=${id}&device=${id}`, `/o/lanternfield/changes?device=${id}&author=${id}`, `/o/lanternfield/settings/audit?actor=${id}&device=${id}`, `/o/lanternfield/settings/audit.csv?device=${id}`]) {
        const response = await owner.get(path);
        expect(response.status, path).toBe(200);
      }
    }
  });
});

describe("A baseRevision that is not a whole number is a 400 on import (issue 14: NaN and 1e309 reached SQL)", () => {
  test("NaN, Infinity, 1e309 and -1 are refused before anything is saved", async () => {
    const exported = await owner.get(device(deviceId, "/revisions/1/export"));
    expect(exported.status).toBe(200);
    for (const base of ["NaN", "Infinity", "1e309", "-1", "", "2.5"]) {
      const response = await postMultipart(owner, "/o/lanternfield/devices/import", { intent: "import", target: `device:${deviceId}`, baseRevision: base, effectRead: "yes", file: new Blob([exported.text], { type: "application/json" }) });
      expect(response.status, `baseRevision=${base}`).toBe(400);
    }
  });
});

/** Text that may not be stored, as each field would carry it. */
const BAD_TEXT = [
  { what: "U+0000", text: "Quay\u0000side" },
  { what: "a control character (U+0007)", text: "Quay\u0007side" },
];

describe("U+0000, control characters and lone surrogates in any text field are a 400 naming the field, with nothing written", () => {
  const FORMS: Array<{ name: string; path: () => string; fields: (bad: string) => Record<string, string>; field: string; who?: () => TestClient }> = [
    { name: "a site", path: () => `/o/${org.slug}/sites`, fields: (bad) => ({ intent: "create", name: `Site ${bad}`, customer: "", location: "" }), field: "name" },
    { name: "a site's location", path: () => `/o/${org.slug}/sites`, fields: (bad) => ({ intent: "create", name: `Site ${uniqueEmail("s")}`, customer: "", location: bad }), field: "location" },
    { name: "an invitation", path: () => `/o/${org.slug}/settings/members`, fields: (bad) => ({ intent: "invite", email: `a${bad}@test.example`, role: "trainee" }), field: "email" },
    { name: "the organisation's name", path: () => `/o/${org.slug}/settings/organisation`, fields: (bad) => ({ name: `Org ${bad}` }), field: "name" },
    { name: "one's name", path: () => "/account", fields: (bad) => ({ intent: "name", name: `Name ${bad}` }), field: "name" },
    { name: "a new device", path: () => `/o/${org.slug}/devices/new`, fields: (bad) => ({ name: `dev${bad}`, siteId: "", timezone: "UTC" }), field: "name" },
    { name: "a shared object's description", path: () => `/o/${org.slug}/settings/shared-objects`, fields: (bad) => ({ intent: "save", kind: "address", name: "ops-desk", items: "192.0.2.0/28", description: bad }), field: "description" },
    { name: "a field's name", path: () => `/o/${org.slug}/sites`, fields: (bad) => ({ intent: "create", name: "Fine", [`x${bad}`]: "1" }), field: "x" },
  ];
  for (const form of FORMS) {
    for (const bad of BAD_TEXT) {
      test(`${form.name} with ${bad.what}`, async () => {
        const before = await AuditEvent.count();
        const response = await org.client.post(form.path(), form.fields(bad.text));
        expect(response.status, response.text.slice(0, 300)).toBe(400);
        expect(plain(response.text)).toContain(`“${form.field}`);
        expect(await AuditEvent.count()).toBe(before);
      });
    }
  }

  test("Sign-up with U+0000 in the name is a 400 naming the field, and no account is stored (issue 14: signup stored \\0)", async () => {
    const email = uniqueEmail("nul-signup");
    const response = await new TestClient().post("/signup", { name: "Null\u0000Person", email, organisationName: "Nul Org", password: GOOD_PASSWORD });
    expect(response.status).toBe(400);
    expect(plain(response.text)).toContain("“name”");
    expect(await User.count({ where: { email } })).toBe(0);
  });

  test("A right-to-left override in a name is refused (Unicode TR #36 §2.2, CVE-2021-42574), in a site's name and a person's", async () => {
    const site = await org.client.post(`/o/${org.slug}/sites`, { intent: "create", name: "Plant \u202eexe.txt", customer: "", location: "" });
    expect(site.status).toBe(400);
    expect(plain(site.text)).toContain("override");
    expect(await Site.count({ where: { name: "Plant \u202eexe.txt" } })).toBe(0);
    const person = await new TestClient().post("/signup", { name: "Eve \u202eadmin", email: uniqueEmail("rlo"), organisationName: "RLO Org", password: GOOD_PASSWORD });
    expect(person.status).toBe(400);
  });

  test("A query string with U+0000 or a broken percent-encoding is a 400 naming the parameter, on pages and APIs", async () => {
    for (const path of [`/o/${org.slug}/findings?q=a%00b`, `/o/lanternfield/settings/audit?from=%00`, device(deviceId, "/api/trace?from=192.0.2.1%00&interface=wan&service=https"), `/o/lanternfield/changes?q=%E0%A4%A`]) {
      const response = await owner.get(path);
      expect(response.status, path).toBe(400);
      expect(response.text).toMatch(/parameter “(q|from)”/);
    }
  });

  test("An imported document with U+0000 or a lone surrogate is a 400 naming the path; nothing is created", async () => {
    for (const [what, raw] of [
      ["U+0000", '"ok\\u0000bad"'],
      ["a lone surrogate", '"ok\\ud800bad"'],
    ]) {
      const name = `nul-import-${what.length}`;
      const text = `{"schemaVersion":2,"device":{"name":"${name}","timezone":"UTC"},"interfaces":[{"name":"wan","role":"wan","addresses":["192.0.2.1/24"],"listeners":[],"description":${raw}}]}`;
      const response = await postMultipart(org.client, `/o/${org.slug}/devices/import`, { intent: "import", target: "site:new", siteName: "Imports", file: new Blob([text], { type: "application/json" }) });
      expect(response.status, what).toBe(400);
      expect(plain(response.text)).toContain("interfaces[0].description");
      expect(await Device.count({ where: { name } })).toBe(0);
    }
  });

  test("A JSON body with U+0000 or a lone surrogate is a 400 naming the path (proposals API and proposal steps)", async () => {
    const body = `{"title":"Change\\u0000","windowStart":"2026-12-08T21:00:00Z","windowEnd":"2026-12-08T22:00:00Z","document":{"schemaVersion":2,"device":{"name":"x\\ud800"}}}`;
    const response = await owner.request(device(deviceId, "/api/proposals"), { method: "POST", body, headers: { "Content-Type": "application/json" } });
    expect(response.status).toBe(400);
    expect(JSON.parse(response.text).error).toContain("“title”");
    const step = await owner.request(`/o/lanternfield/devices/${deviceId}/proposals/${UNKNOWN_ID}/comment`, { method: "POST", body: '{"body":"hi\\ud800"}', headers: { "Content-Type": "application/json" } });
    expect([400, 404]).toContain(step.status);
  });
});
