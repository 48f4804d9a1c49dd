import type { MigrationContext } from "#server/db/migrator.ts";

// A request to change a user's sign-in e-mail, confirmed from a link sent to the new address
// (the change happens only then). Like password resets: only the token's hash is stored, the
// link expires and works once; used_at also marks requests superseded by a newer one.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE email_changes (
      id uuid PRIMARY KEY,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      new_email varchar(254) NOT NULL CHECK (new_email = lower(new_email)),
      token_hash varchar(64) NOT NULL UNIQUE,
      expires_at timestamptz NOT NULL,
      used_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX email_changes_user_id ON email_changes(user_id);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DROP TABLE IF EXISTS email_changes;`);
}
