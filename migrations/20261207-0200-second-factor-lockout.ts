import type { MigrationContext } from "#server/db/migrator.ts";

// A lockout of the second step after repeated wrong codes (docs/decisions/019): the wrong codes
// in a row since the first of them, and until when the account's second step is locked. Kept on
// the user row so every web process sees the same count; one conditional UPDATE counts a failure.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE users
      ADD COLUMN second_factor_failures integer NOT NULL DEFAULT 0,
      ADD COLUMN second_factor_failed_since timestamptz,
      ADD COLUMN second_factor_locked_until timestamptz,
      ADD CONSTRAINT users_second_factor_failures_check CHECK (second_factor_failures >= 0);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE users
      DROP CONSTRAINT users_second_factor_failures_check,
      DROP COLUMN second_factor_failures,
      DROP COLUMN second_factor_failed_since,
      DROP COLUMN second_factor_locked_until;
  `);
}
