import type { MigrationContext } from "#server/db/migrator.ts";

// The trainer capability is a flag on the membership, beside the role (docs/decisions/016):
// a trainer may be of any role, and the roles keep their one order.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`ALTER TABLE memberships ADD COLUMN trainer boolean NOT NULL DEFAULT false;`);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`ALTER TABLE memberships DROP COLUMN IF EXISTS trainer;`);
}
