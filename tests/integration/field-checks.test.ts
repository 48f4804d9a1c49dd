// Field checks over HTTP: a file of observations uploaded on a device's page, each row predicted
// with the revision live at its time, stored, audited, and shown on the device and in the fleet
// table. Semantics: PRODUCT.md §3 (outcomes), docs/field-checks.md (the file and the reasons).

import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { createDatabase } from "#server/db/database.server";
import { AuditEvent, FieldCheckRecord } from "#models/index";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient, type FetchResult } from "../support/client";
import { plain, UUID, visibleText } from "../support/html";
import { SALTMARSH, SALTMARSH_R2 } from "../support/saltmarsh";

const sequelize = createDatabase(process.env.DATABASE_URL!);
afterAll(() => sequelize.close());

let client: TestClient;
let slug = "";
let devicePath = "";
let deviceId = "";
/** An instant while r1 was live, and one after r2 was saved. */
let whileR1 = "";
let afterR2 = "";

const pause = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

function upload(path: string, text: string, fileName = "observations.csv"): Promise<FetchResult> {
  const form = new FormData();
  form.append("file", new Blob([text], { type: "text/csv" }), fileName);
  return client.request(path, { method: "POST", body: form });
}

beforeAll(async () => {
  ({ client, slug } = await signUpNewOrganisation("field-check"));
  expect((await client.post(`/o/${slug}/sites`, { intent: "create", name: "Saltmarsh office", customer: "", location: "" })).status).toBe(302);
  const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
  const imported = await client.post(`/o/${slug}/devices/import`, { intent: "import", target: `site:${siteId}`, fileName: "saltmarsh-gw.json", documentText: JSON.stringify(SALTMARSH) });
  expect(imported.status).toBe(302);
  devicePath = imported.location ?? "";
  deviceId = devicePath.split("/").pop() ?? "";
  await pause(400);
  whileR1 = new Date().toISOString();
  await pause(400);
  const revised = await client.post(`/o/${slug}/devices/import`, { intent: "import", target: `device:${deviceId}`, baseRevision: "1", effectRead: "yes", fileName: "saltmarsh-gw-r2.json", documentText: JSON.stringify(SALTMARSH_R2) });
  expect(revised.status, revised.text.slice(0, 300)).toBe(302);
  await pause(400);
  afterR2 = new Date().toISOString();
});

describe("A field check", () => {
  test("A CSV of agreements, one difference and two bad rows gives exactly those results, stored and audited", async () => {
    const file = [
      "when,from,to,service,observed,note",
      `${whileR1},203.0.113.9,198.51.100.20,https,login,the login page appeared`,
      `${afterR2},203.0.113.9,198.51.100.20,https,silent,`,
      `${afterR2},203.0.113.9,198.51.100.20,ping,answered,`,
      `${whileR1},203.0.113.9,198.51.100.20,https,silent,nothing answered`,
      `yesterday,203.0.113.9,198.51.100.20,https,silent,`,
      `${afterR2},203.0.113.9,198.51.100.20,https,maybe,`,
    ].join("\n");
    const response = await upload(`${devicePath}/field-checks`, file);
    expect(response.status, response.text.slice(0, 300)).toBe(302);
    const id = new RegExp(`^${devicePath}/field-checks/(${UUID})$`).exec(response.location ?? "")?.[1];
    expect(id).toBeDefined();

    const stored = await FieldCheckRecord.findByPk(id);
    expect(stored).toMatchObject({ rowsTotal: 6, agreements: 3, differences: 1, invalid: 2, currentRevision: 2, fileName: "observations.csv", source: "upload" });
    const rows = stored?.results as Array<{ line: number; status: string; revision: number | null; predicted: string | null; difference: { reason: string; revision: number | null } | null; problem: string | null }>;
    // r1 shows the login but lets nobody in from outside (no login source there); r2 drops it (PRODUCT.md §3, layers 2 and 5).
    expect(rows.map((row) => [row.line, row.status, row.revision, row.predicted])).toEqual([
      [2, "agrees", 1, "login-denied"],
      [3, "agrees", 2, "silent"],
      [4, "agrees", 2, "answered"],
      [5, "differs", 1, "login-denied"],
      [6, "invalid", null, null],
      [7, "invalid", null, null],
    ]);
    // The later revision predicts what was seen: the model was out of date then.
    expect(rows[3].difference).toMatchObject({ reason: "model-out-of-date", revision: 2 });
    expect(rows[4].problem).toMatch(/when: "yesterday" is not an ISO 8601 instant with an offset/);
    expect(rows[5].problem).toMatch(/observed: "maybe" is not one of/);

    const audit = await AuditEvent.findOne({ where: { action: "field-check.recorded", targetId: deviceId } });
    expect(audit?.changes).toMatchObject({ fieldCheck: id, rows: 6, agreements: 3, differences: 1, invalid: 2, fileName: "observations.csv" });

    const page = await client.get(`${devicePath}/field-checks/${id}`);
    expect(page.status).toBe(200);
    // Text as read: tags become spaces, so "( 1 )" reads "(1)".
    const text = visibleText(page.text).replace(/\s+/g, " ").replace(/\( /g, "(").replace(/ \)/g, ")");
    expect(text).toContain("Differences (1)");
    expect(text).toContain("Not checked (2)");
    expect(text).toContain("Agreements (3)");
    expect(text).toContain("Model out of date");
    expect(text).toContain("75% (3 of 4)");

    // The device's list, the fleet table's column and its sort.
    expect(visibleText((await client.get(`${devicePath}/field-checks`)).text)).toContain("75% (3 of 4)");
    const fleet = plain((await client.get(`/o/${slug}/devices?sort=field-check&dir=desc`)).text);
    expect(fleet).toContain(`href="${devicePath}/field-checks/${id}"`);
    expect(fleet).toContain("75% (3 of 4)");
  });

  test("A stored check never changes", async () => {
    await expect(sequelize.query("UPDATE field_checks SET agreements = agreements")).rejects.toThrow(/field checks are immutable/);
  });

  test("A file that is not a field-check file is refused as a whole, in words, and nothing is stored", async () => {
    const before = await FieldCheckRecord.count({ where: { deviceId } });
    const header = await upload(`${devicePath}/field-checks`, "time,source,target\n2026-11-30T10:00:00Z,203.0.113.9,198.51.100.20\n");
    expect(header.status).toBe(400);
    expect(visibleText(header.text)).toContain("not a column of a field-check file");
    const empty = await upload(`${devicePath}/field-checks`, "when,from,to,service,observed\n");
    expect(empty.status).toBe(400);
    const nothing = await client.request(`${devicePath}/field-checks`, { method: "POST", body: new FormData() });
    expect(nothing.status).toBe(400);
    const tooLarge = await upload(`${devicePath}/field-checks`, `when,from,to,service,observed,note\n${"x".repeat(600 * 1024)}\n`);
    expect(tooLarge.status).toBe(413);
    expect(await FieldCheckRecord.count({ where: { deviceId } })).toBe(before);
  });

  test("A trainee may read but not record; another organisation's device is a 404", async () => {
    const trainee = new TestClient();
    expect((await trainee.signIn(...DEMO_PASSWORDS.trainee)).status).toBe(302);
    const fleet = await trainee.get("/o/lanternfield/devices");
    const demoDevice = new RegExp(`/o/lanternfield/devices/(${UUID})`).exec(fleet.text)?.[1];
    expect((await trainee.get(`/o/lanternfield/devices/${demoDevice}/field-checks`)).status).toBe(200);
    const form = new FormData();
    form.append("observationsText", "when,from,to,service,observed\n2026-11-30T10:00:00Z,203.0.113.9,198.51.100.42,https,silent\n");
    expect((await trainee.request(`/o/lanternfield/devices/${demoDevice}/field-checks`, { method: "POST", body: form })).status).toBe(403);
    expect((await client.request(`/o/lanternfield/devices/${demoDevice}/field-checks`, { method: "POST", body: form })).status).toBe(404);
    expect((await client.get(`${devicePath}/field-checks/00000000-0000-4000-8000-000000000000`)).status).toBe(404);
    expect((await client.get(`${devicePath}/field-checks/not-a-uuid`)).status).toBe(404);
  });
});
