import type { MigrationContext } from "#server/db/migrator.ts";

// Plain SQL so the constraints that protect the data (role check, append-only audit log)
// are visible in one place.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE users (
      id uuid PRIMARY KEY,
      email varchar(254) NOT NULL UNIQUE CHECK (email = lower(email)),
      name varchar(100) NOT NULL,
      password_hash varchar(255) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE organisations (
      id uuid PRIMARY KEY,
      slug varchar(63) NOT NULL UNIQUE CHECK (slug ~ '^[a-z0-9]([a-z0-9-]*[a-z0-9])?$'),
      name varchar(100) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE memberships (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      role varchar(16) NOT NULL CHECK (role IN ('trainee', 'reviewer', 'engineer', 'admin', 'owner')),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (organisation_id, user_id)
    );
    CREATE INDEX memberships_user_id ON memberships(user_id);

    CREATE TABLE sites (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      name varchar(100) NOT NULL,
      customer varchar(100) NOT NULL DEFAULT '',
      location varchar(200) NOT NULL DEFAULT '',
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (organisation_id, name)
    );

    CREATE TABLE sessions (
      id uuid PRIMARY KEY,
      token_hash varchar(64) NOT NULL UNIQUE,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      expires_at timestamptz NOT NULL,
      last_seen_at timestamptz NOT NULL,
      user_agent varchar(300) NOT NULL DEFAULT '',
      client_address varchar(64) NOT NULL DEFAULT '',
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX sessions_user_id ON sessions(user_id);

    CREATE TABLE audit_events (
      id bigserial PRIMARY KEY,
      organisation_id uuid,
      actor_user_id uuid,
      actor_email varchar(254) NOT NULL DEFAULT '',
      action varchar(64) NOT NULL,
      target_type varchar(32) NOT NULL,
      target_id varchar(64) NOT NULL DEFAULT '',
      changes jsonb NOT NULL DEFAULT '{}',
      client_address varchar(64) NOT NULL DEFAULT '',
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX audit_events_organisation ON audit_events(organisation_id, created_at DESC);

    CREATE FUNCTION audit_events_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'audit_events is append-only';
    END $$;
    CREATE TRIGGER audit_events_no_update BEFORE UPDATE OR DELETE ON audit_events
      FOR EACH ROW EXECUTE FUNCTION audit_events_append_only();
    CREATE TRIGGER audit_events_no_truncate BEFORE TRUNCATE ON audit_events
      FOR EACH STATEMENT EXECUTE FUNCTION audit_events_append_only();

    CREATE TABLE sign_in_attempts (
      id bigserial PRIMARY KEY,
      scope varchar(16) NOT NULL CHECK (scope IN ('account', 'client')),
      subject varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX sign_in_attempts_lookup ON sign_in_attempts(scope, subject, created_at);

    CREATE TABLE password_resets (
      id uuid PRIMARY KEY,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      token_hash varchar(64) NOT NULL UNIQUE,
      expires_at timestamptz NOT NULL,
      used_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE invitations (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      invited_by_id uuid REFERENCES users(id) ON DELETE SET NULL,
      email varchar(254) NOT NULL CHECK (email = lower(email)),
      role varchar(16) NOT NULL CHECK (role IN ('trainee', 'reviewer', 'engineer', 'admin', 'owner')),
      token_hash varchar(64) NOT NULL UNIQUE,
      expires_at timestamptz NOT NULL,
      accepted_at timestamptz,
      revoked_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX invitations_organisation ON invitations(organisation_id);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP TABLE IF EXISTS invitations, password_resets, sign_in_attempts, audit_events, sessions,
      sites, memberships, organisations, users CASCADE;
    DROP FUNCTION IF EXISTS audit_events_append_only();
  `);
}
