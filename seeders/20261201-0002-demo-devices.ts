import { randomUUID } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import type { MigrationContext } from "#server/db/migrator.ts";
import { EMPTY_LIBRARY, summariseDocument, validateDocument } from "#server/workspace/index.ts";
import { DEMO_ORGANISATION, DEMO_USERS, demoModelledAt } from "./demo-data.ts";

const folder = path.join(path.dirname(fileURLToPath(import.meta.url)), "devices");

type DemoDevice = { file: string; site: string; name: string; description: string };

// Six invented devices of varied posture for the demo provider's customer sites
// (seeders/devices/README.md says what each one shows).
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  const sequelize = queryInterface.sequelize;
  const [organisations] = (await sequelize.query(`SELECT id FROM organisations WHERE slug = '${DEMO_ORGANISATION.slug}'`)) as [Array<{ id: string }>, unknown];
  const organisationId = organisations[0]?.id;
  if (!organisationId) throw new Error("the demo organisation is missing; run the first demo seed");
  const [sites] = (await sequelize.query(`SELECT id, name FROM sites WHERE organisation_id = '${organisationId}'`)) as [Array<{ id: string; name: string }>, unknown];
  const engineer = DEMO_USERS.find((user) => user.role === "engineer")!;
  const [authors] = (await sequelize.query(`SELECT id FROM users WHERE email = '${engineer.email}'`)) as [Array<{ id: string }>, unknown];
  const devices = JSON.parse(readFileSync(path.join(folder, "index.json"), "utf8")) as DemoDevice[];
  const now = new Date();
  const modelledAt = demoModelledAt(now);
  for (const demo of devices) {
    const site = sites.find((candidate) => candidate.name === demo.site);
    if (!site) throw new Error(`demo device ${demo.file}: no site named "${demo.site}"`);
    const validated = validateDocument(JSON.parse(readFileSync(path.join(folder, demo.file), "utf8")), EMPTY_LIBRARY);
    if (!validated.ok) throw new Error(`demo device ${demo.file} does not validate: ${validated.errors.map((issue) => `${issue.path}: ${issue.message}`).join("; ")}`);
    const deviceId = randomUUID();
    await queryInterface.bulkInsert("devices", [{ id: deviceId, organisation_id: organisationId, site_id: site.id, name: validated.document.device.name, current_revision_number: 1, created_at: modelledAt, updated_at: modelledAt }]);
    await queryInterface.bulkInsert("device_revisions", [
      {
        id: randomUUID(),
        device_id: deviceId,
        number: 1,
        document: JSON.stringify(validated.document),
        shared_objects: JSON.stringify(validated.shared),
        summary: JSON.stringify(summariseDocument(validated.effective)),
        message: `Demo: ${demo.description}`.slice(0, 500),
        author_user_id: authors[0]?.id ?? null,
        author_email: engineer.email,
        created_at: modelledAt,
      },
    ]);
  }
  await queryInterface.bulkInsert("shared_address_objects", [
    {
      id: randomUUID(),
      organisation_id: organisationId,
      kind: "address",
      name: "lanternfield-noc",
      items: JSON.stringify(["198.51.100.0/27", "2001:db8:4c46::/48"]),
      description: "Lanternfield's network operations centre (invented, documentation ranges)",
      created_at: now,
      updated_at: now,
    },
  ]);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DELETE FROM devices WHERE organisation_id IN (SELECT id FROM organisations WHERE slug = '${DEMO_ORGANISATION.slug}')`);
  await queryInterface.sequelize.query(`DELETE FROM shared_address_objects WHERE name = 'lanternfield-noc'`);
}
