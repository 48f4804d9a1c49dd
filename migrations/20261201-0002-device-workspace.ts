import type { MigrationContext } from "#server/db/migrator.ts";

// Devices keep their model as validated documents, one immutable row per revision; see
// docs/decisions/003-device-models-as-revisioned-documents.md.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE devices (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      site_id uuid NOT NULL REFERENCES sites(id) ON DELETE RESTRICT,
      name varchar(100) NOT NULL,
      current_revision_number integer NOT NULL DEFAULT 0,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (organisation_id, name)
    );
    CREATE INDEX devices_site ON devices(site_id);

    CREATE TABLE device_revisions (
      id uuid PRIMARY KEY,
      device_id uuid NOT NULL REFERENCES devices(id) ON DELETE CASCADE,
      number integer NOT NULL CHECK (number >= 1),
      document jsonb NOT NULL,
      shared_objects jsonb NOT NULL DEFAULT '{"addresses": [], "addressGroups": []}',
      summary jsonb NOT NULL DEFAULT '{}',
      message varchar(500) NOT NULL DEFAULT '',
      author_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      author_email varchar(254) NOT NULL DEFAULT '',
      created_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (device_id, number)
    );

    -- A revision, once written, never changes (it may only go with its device).
    CREATE FUNCTION device_revisions_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'device revisions are immutable';
    END $$;
    CREATE TRIGGER device_revisions_no_update BEFORE UPDATE ON device_revisions
      FOR EACH ROW EXECUTE FUNCTION device_revisions_immutable();

    CREATE TABLE shared_address_objects (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      kind varchar(8) NOT NULL CHECK (kind IN ('address', 'group')),
      name varchar(63) NOT NULL CHECK (name ~ '^[A-Za-z0-9._-]{1,63}$'),
      -- entries of an address object, or member names of a group
      items jsonb NOT NULL DEFAULT '[]',
      description varchar(300) NOT NULL DEFAULT '',
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (organisation_id, name)
    );
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP TABLE IF EXISTS shared_address_objects, device_revisions, devices CASCADE;
    DROP FUNCTION IF EXISTS device_revisions_immutable();
  `);
}
