// Issue 14: the export of a large model (2.75 MB) could not be re-imported (413); the app's own
// database role owned the audit table and could switch its trigger off (docs/decisions/013).
import { afterAll, describe, expect, test } from "vitest";
import { Sequelize } from "sequelize";
import { getDatabase } from "#server/db/database.server";
import { benchSize, generateModel } from "#server/engine/testing/generate-model";
import { MAX_MODEL_DOCUMENT_BYTES } from "#server/validation/limits";
import { postMultipart, signUpNewOrganisation } from "../support/client";
import { UUID } from "../support/html";

const sequelize = getDatabase();
afterAll(() => sequelize.close());

describe("Every export re-imports", () => {
  test("A generated 4,000-rule model (an export over 2.75 MB) imports, exports and re-imports without a 413", { timeout: 120_000 }, async () => {
    const { client, slug } = await signUpNewOrganisation("large-model");
    const { model } = generateModel(14, benchSize(4000));
    const created = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: "site:new", siteName: "Large site", file: new Blob([JSON.stringify(model)], { type: "application/json" }) });
    expect(created.status, created.text.slice(0, 300)).toBe(302);
    const deviceId = new RegExp(`/devices/(${UUID})`).exec(created.location ?? "")?.[1];
    expect(deviceId).toBeDefined();

    const exported = await client.get(`/o/${slug}/devices/${deviceId}/revisions/1/export`);
    expect(exported.status).toBe(200);
    const bytes = Buffer.byteLength(exported.text);
    expect(bytes).toBeGreaterThan(2.75 * 1000 * 1000);
    expect(bytes).toBeLessThanOrEqual(MAX_MODEL_DOCUMENT_BYTES);

    // The export as a new revision of the same device: accepted, and it changes nothing.
    const again = await postMultipart(client, `/o/${slug}/devices/import`, { intent: "import", target: `device:${deviceId}`, baseRevision: "1", file: new Blob([exported.text], { type: "application/json" }) });
    expect(again.status, again.text.slice(0, 300)).toBe(302);
    expect(again.location).toBe(`/o/${slug}/devices/${deviceId}/history`);
    expect((await client.get(`/o/${slug}/devices/${deviceId}/revisions/2/export`)).status).toBe(404);
  });
});

describe("The runtime database role may insert into and read the audit log, and nothing more", () => {
  const runtime = new Sequelize(process.env.DATABASE_URL!, { dialect: "postgres", logging: false });
  afterAll(() => runtime.close());

  test("It inserts and reads entries", async () => {
    const [rows] = await runtime.query("INSERT INTO audit_events (action, target_type) VALUES ('test.role-probe', 'user') RETURNING id");
    expect(rows).toHaveLength(1);
    const [read] = await runtime.query("SELECT count(*) AS n FROM audit_events WHERE action = 'test.role-probe'");
    expect(Number((read as Array<{ n: string }>)[0].n)).toBeGreaterThan(0);
  });

  test("It can neither change, delete nor truncate entries, nor switch the trigger off, nor alter or drop the table", async () => {
    for (const statement of [
      "UPDATE audit_events SET action = 'tampered'",
      "DELETE FROM audit_events",
      "TRUNCATE audit_events",
      "ALTER TABLE audit_events DISABLE TRIGGER ALL",
      "ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_update",
      "DROP TRIGGER audit_events_no_update ON audit_events",
      "ALTER TABLE audit_events ADD COLUMN note text",
      "DROP TABLE audit_events",
      "CREATE TABLE audit_shadow (id int)",
    ]) {
      await expect(runtime.query(statement), statement).rejects.toThrow(/permission denied|must be owner/);
    }
  });

  test("It still reads and writes the application's data", async () => {
    const [tables] = await runtime.query("SELECT tablename FROM pg_tables WHERE schemaname = 'public' AND tableowner = current_user");
    expect(tables).toEqual([]);
    await expect(runtime.query("SELECT count(*) FROM users")).resolves.toBeDefined();
  });
});
