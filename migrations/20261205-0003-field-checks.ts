import type { MigrationContext } from "#server/db/migrator.ts";

// Field checks: what the team observed when they tried a device from a vantage point, each
// row predicted with the revision live at its time (server/engine/field-checks.ts). One row
// per check with its counts (the fleet table and the device overview read the last one) and
// every row's result as the engine gave it. A check is a record of what happened: it never
// changes once written, and goes only with its device.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE field_checks (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      device_id uuid NOT NULL REFERENCES devices(id) ON DELETE CASCADE,
      source varchar(8) NOT NULL CHECK (source IN ('upload', 'api')),
      file_name varchar(255) NOT NULL DEFAULT '',
      current_revision integer NOT NULL CHECK (current_revision >= 1),
      rows_total integer NOT NULL CHECK (rows_total >= 1),
      agreements integer NOT NULL CHECK (agreements >= 0),
      differences integer NOT NULL CHECK (differences >= 0),
      invalid integer NOT NULL CHECK (invalid >= 0),
      results jsonb NOT NULL CHECK (jsonb_typeof(results) = 'array' AND jsonb_array_length(results) = rows_total),
      created_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      created_by_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT field_checks_counts_add_up CHECK (agreements + differences + invalid = rows_total)
    );
    CREATE INDEX field_checks_device_time ON field_checks(device_id, created_at DESC);
    CREATE INDEX field_checks_organisation ON field_checks(organisation_id, device_id, created_at DESC);

    CREATE FUNCTION field_checks_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'field checks are immutable';
    END $$;
    CREATE TRIGGER field_checks_no_update BEFORE UPDATE ON field_checks
      FOR EACH ROW EXECUTE FUNCTION field_checks_immutable();
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP TABLE IF EXISTS field_checks;
    DROP FUNCTION IF EXISTS field_checks_immutable();
  `);
}
