import type { MigrationContext } from "#server/db/migrator.ts";

// Teaching scenarios (docs/decisions/016): device models that live in the training area, apart
// from the fleet. Not devices: no site, no revisions, no findings cache, never in fleet counts,
// findings, proposals or changes. One self-contained model document each (version 2, no shared
// objects), edited in place under a version number that refuses a save on a stale copy.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE training_scenarios (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      title varchar(100) NOT NULL CHECK (length(btrim(title)) > 0),
      summary varchar(2000) NOT NULL DEFAULT '',
      origin varchar(8) NOT NULL CHECK (origin IN ('blank', 'example', 'copy')),
      example_key varchar(63),
      -- A copy remembers its device for its trainers; the device may go, the scenario stays.
      source_device_id uuid REFERENCES devices(id) ON DELETE SET NULL,
      source_revision integer,
      anonymised boolean NOT NULL DEFAULT false,
      document jsonb NOT NULL CHECK (document->>'schemaVersion' = '2'),
      version integer NOT NULL DEFAULT 1 CHECK (version >= 1),
      created_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      created_by_email varchar(254) NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT training_scenarios_title_per_organisation UNIQUE (organisation_id, title),
      CONSTRAINT training_scenarios_example_key CHECK ((origin = 'example') = (example_key IS NOT NULL)),
      CONSTRAINT training_scenarios_copy_only CHECK (origin = 'copy' OR (source_device_id IS NULL AND source_revision IS NULL AND NOT anonymised))
    );
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DROP TABLE IF EXISTS training_scenarios;`);
}
