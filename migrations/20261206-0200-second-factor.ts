import type { MigrationContext } from "#server/db/migrator.ts";

// Sallyport's own second factor (docs/decisions/019): a TOTP secret per user (RFC 6238), kept
// encrypted (AES-256-GCM, key from the server's secret), the last accepted time step so a code
// counts once, a secret being enrolled until it is confirmed, hashed single-use recovery codes,
// an organisation setting that requires a second factor of every member, a session that waits for
// the second step, and two throttle scopes for the code check.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE users
      ADD COLUMN second_factor_secret text,
      ADD COLUMN second_factor_enabled_at timestamptz,
      ADD COLUMN second_factor_last_step bigint,
      ADD COLUMN second_factor_pending_secret text,
      ADD COLUMN second_factor_pending_at timestamptz,
      ADD CONSTRAINT users_second_factor_check CHECK ((second_factor_secret IS NULL) = (second_factor_enabled_at IS NULL)),
      ADD CONSTRAINT users_second_factor_pending_check CHECK ((second_factor_pending_secret IS NULL) = (second_factor_pending_at IS NULL));

    CREATE TABLE recovery_codes (
      id uuid PRIMARY KEY,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      code_hash varchar(255) NOT NULL,
      used_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX recovery_codes_user_id ON recovery_codes (user_id) WHERE used_at IS NULL;

    ALTER TABLE organisations ADD COLUMN require_second_factor boolean NOT NULL DEFAULT false;

    -- A session made by the password step alone: not signed in until the second step passes.
    ALTER TABLE sessions ADD COLUMN second_factor_pending boolean NOT NULL DEFAULT false;

    ALTER TABLE sign_in_attempts DROP CONSTRAINT IF EXISTS sign_in_attempts_scope_check;
    ALTER TABLE sign_in_attempts ADD CONSTRAINT sign_in_attempts_scope_check
      CHECK (scope IN ('account', 'client', 'reset-email', 'reset-client', 'signup-email', 'signup-client', 'code-account', 'code-client'));
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DELETE FROM sign_in_attempts WHERE scope IN ('code-account', 'code-client');
    ALTER TABLE sign_in_attempts DROP CONSTRAINT IF EXISTS sign_in_attempts_scope_check;
    ALTER TABLE sign_in_attempts ADD CONSTRAINT sign_in_attempts_scope_check
      CHECK (scope IN ('account', 'client', 'reset-email', 'reset-client', 'signup-email', 'signup-client'));
    DELETE FROM sessions WHERE second_factor_pending;
    ALTER TABLE sessions DROP COLUMN second_factor_pending;
    ALTER TABLE organisations DROP COLUMN require_second_factor;
    DROP TABLE recovery_codes;
    ALTER TABLE users
      DROP CONSTRAINT users_second_factor_check,
      DROP CONSTRAINT users_second_factor_pending_check,
      DROP COLUMN second_factor_secret,
      DROP COLUMN second_factor_enabled_at,
      DROP COLUMN second_factor_last_step,
      DROP COLUMN second_factor_pending_secret,
      DROP COLUMN second_factor_pending_at;
  `);
}
