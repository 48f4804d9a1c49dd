import type { MigrationContext } from "#server/db/migrator.ts";

// Throttle rows also count password-reset requests and sign-ups, per e-mail and per client
// address (docs/decisions/013), in the same table as failed sign-ins.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE sign_in_attempts DROP CONSTRAINT IF EXISTS sign_in_attempts_scope_check;
    ALTER TABLE sign_in_attempts ADD CONSTRAINT sign_in_attempts_scope_check
      CHECK (scope IN ('account', 'client', 'reset-email', 'reset-client', 'signup-email', 'signup-client'));
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DELETE FROM sign_in_attempts WHERE scope NOT IN ('account', 'client');
    ALTER TABLE sign_in_attempts DROP CONSTRAINT IF EXISTS sign_in_attempts_scope_check;
    ALTER TABLE sign_in_attempts ADD CONSTRAINT sign_in_attempts_scope_check CHECK (scope IN ('account', 'client'));
  `);
}
