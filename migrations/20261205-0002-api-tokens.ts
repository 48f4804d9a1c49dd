import type { MigrationContext } from "#server/db/migrator.ts";

// The REST API's bearer tokens (docs/decisions/014). A token belongs to one organisation and is
// either personal (a member made it on their account page; it acts with that member's role in
// the organisation at each call) or a service token (an admin made it in the organisation's
// settings, with a role chosen then). Only the SHA-256 of the secret is kept. Tokens are revoked,
// never deleted, so the audit log's references stay meaningful.
//
// The per-token rate limit counts calls per minute in `api_rate_windows`; the audit log names
// the token an entry was made through; a proposal made with a service token remembers the token
// as its author (there is no person to name).
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE api_tokens (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      kind varchar(16) NOT NULL CHECK (kind IN ('personal', 'service')),
      -- personal: the member whose role the token acts with; service: none
      owner_user_id uuid REFERENCES users(id) ON DELETE CASCADE,
      -- service: the role chosen when it was made; personal: none (the owner's role at each call)
      role varchar(16) CHECK (role IN ('trainee', 'reviewer', 'engineer', 'admin')),
      name varchar(100) NOT NULL CHECK (char_length(btrim(name)) BETWEEN 1 AND 100),
      scope varchar(8) NOT NULL CHECK (scope IN ('read', 'write')),
      token_hash varchar(64) NOT NULL UNIQUE CHECK (token_hash ~ '^[0-9a-f]{64}$'),
      -- the first characters of the secret, so a list can tell tokens apart
      hint varchar(24) NOT NULL,
      rate_limit_per_minute integer NOT NULL DEFAULT 600 CHECK (rate_limit_per_minute BETWEEN 1 AND 100000),
      expires_at timestamptz NOT NULL,
      last_used_at timestamptz,
      last_used_address varchar(64) NOT NULL DEFAULT '',
      created_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      created_by_email varchar(254) NOT NULL,
      revoked_at timestamptz,
      revoked_by_email varchar(254),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CHECK ((kind = 'personal') = (owner_user_id IS NOT NULL)),
      CHECK ((kind = 'service') = (role IS NOT NULL)),
      CHECK ((revoked_at IS NULL) = (revoked_by_email IS NULL)),
      CHECK (expires_at > created_at)
    );
    CREATE INDEX api_tokens_organisation ON api_tokens(organisation_id, kind);
    CREATE INDEX api_tokens_owner ON api_tokens(owner_user_id) WHERE owner_user_id IS NOT NULL;
    -- A name tells a member's tokens (or the organisation's service tokens) apart while they work.
    CREATE UNIQUE INDEX api_tokens_personal_name ON api_tokens(organisation_id, owner_user_id, lower(name)) WHERE kind = 'personal' AND revoked_at IS NULL;
    CREATE UNIQUE INDEX api_tokens_service_name ON api_tokens(organisation_id, lower(name)) WHERE kind = 'service' AND revoked_at IS NULL;

    -- Calls per token per minute (a fixed window): one upsert per call.
    CREATE TABLE api_rate_windows (
      token_id uuid NOT NULL REFERENCES api_tokens(id) ON DELETE CASCADE,
      window_start timestamptz NOT NULL,
      calls integer NOT NULL,
      PRIMARY KEY (token_id, window_start)
    );

    ALTER TABLE audit_events
      ADD COLUMN api_token_id uuid,
      ADD COLUMN api_token_name varchar(100) NOT NULL DEFAULT '';

    ALTER TABLE change_proposals
      ADD COLUMN author_token_id uuid REFERENCES api_tokens(id) ON DELETE SET NULL;
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE change_proposals DROP COLUMN IF EXISTS author_token_id;
    ALTER TABLE audit_events DROP COLUMN IF EXISTS api_token_name, DROP COLUMN IF EXISTS api_token_id;
    DROP TABLE IF EXISTS api_rate_windows;
    DROP TABLE IF EXISTS api_tokens;
  `);
}
