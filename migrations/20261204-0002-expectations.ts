import type { MigrationContext } from "#server/db/migrator.ts";

// Expectations: what a device's team records must always hold (a probe and its outcome, or a
// bound on the most exposed outcome a set of sources may get), checked by the engine on every
// revision, proposal and save. One row per expectation, in the team's order; the definition is
// the expectation as the export file writes it (server/engine/expectations.ts), so the engine's
// schema stays the one check of its shape. The id is the team's own short name, unique per device.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE device_expectations (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      device_id uuid NOT NULL REFERENCES devices(id) ON DELETE CASCADE,
      expectation_id varchar(63) NOT NULL CHECK (expectation_id ~ '^[A-Za-z0-9._-]{1,63}$'),
      position integer NOT NULL CHECK (position >= 1),
      kind varchar(8) NOT NULL CHECK (kind IN ('probe', 'bound')),
      definition jsonb NOT NULL CHECK (definition->>'id' = expectation_id AND definition->>'kind' = kind),
      created_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      created_by_email varchar(254) NOT NULL,
      updated_by_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT device_expectations_id_per_device UNIQUE (device_id, expectation_id),
      -- Reordering renumbers several rows in one transaction: checked at its end.
      CONSTRAINT device_expectations_position_per_device UNIQUE (device_id, position) DEFERRABLE INITIALLY DEFERRED
    );
    CREATE INDEX device_expectations_organisation ON device_expectations(organisation_id);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DROP TABLE IF EXISTS device_expectations;`);
}
