import { randomUUID } from "node:crypto";
import type { MigrationContext } from "#server/db/migrator.ts";
import { hashPassword } from "#server/auth/password.server.ts";
import { DEMO_ORGANISATION, DEMO_SITES, DEMO_USERS } from "./demo-data.ts";

// The invented managed-service provider of the demo: one user per role, three customer sites.
// Runs once per database (umzug records it); never run it against production data.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  const now = new Date();
  const organisationId = randomUUID();
  await queryInterface.bulkInsert("organisations", [{ id: organisationId, slug: DEMO_ORGANISATION.slug, name: DEMO_ORGANISATION.name, created_at: now, updated_at: now }]);
  for (const user of DEMO_USERS) {
    const userId = randomUUID();
    await queryInterface.bulkInsert("users", [{ id: userId, email: user.email, name: user.name, password_hash: await hashPassword(user.password), created_at: now, updated_at: now }]);
    await queryInterface.bulkInsert("memberships", [{ id: randomUUID(), organisation_id: organisationId, user_id: userId, role: user.role, created_at: now, updated_at: now }]);
  }
  await queryInterface.bulkInsert(
    "sites",
    DEMO_SITES.map((site) => ({ id: randomUUID(), organisation_id: organisationId, ...site, created_at: now, updated_at: now })),
  );
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DELETE FROM organisations WHERE slug = '${DEMO_ORGANISATION.slug}'`);
  await queryInterface.sequelize.query(`DELETE FROM users WHERE email LIKE '%@${DEMO_ORGANISATION.domain}'`);
}
