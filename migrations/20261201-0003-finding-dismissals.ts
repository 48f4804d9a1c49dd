import type { MigrationContext } from "#server/db/migrator.ts";

// A dismissal is an accepted risk for one finding of one device, named by a key that stays
// the same across revisions (code + sorted elements), so it keeps applying to later
// revisions until someone restores it. Rows are never deleted: a restore stamps
// restored_at/restored_by, so the history of who accepted what stays readable.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE finding_dismissals (
      id uuid PRIMARY KEY,
      organisation_id uuid NOT NULL REFERENCES organisations(id) ON DELETE CASCADE,
      device_id uuid NOT NULL REFERENCES devices(id) ON DELETE CASCADE,
      finding_key varchar(1000) NOT NULL,
      code varchar(40) NOT NULL,
      elements jsonb NOT NULL DEFAULT '[]',
      -- severity and title as they were when dismissed; the engine may later report others
      severity varchar(8) NOT NULL CHECK (severity IN ('info', 'low', 'medium', 'high', 'critical')),
      title varchar(300) NOT NULL,
      revision_number integer NOT NULL CHECK (revision_number >= 1),
      reason varchar(500) NOT NULL CHECK (char_length(btrim(reason)) BETWEEN 3 AND 500),
      dismissed_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      dismissed_by_email varchar(254) NOT NULL,
      dismissed_at timestamptz NOT NULL DEFAULT now(),
      restored_at timestamptz,
      restored_by_user_id uuid REFERENCES users(id) ON DELETE SET NULL,
      restored_by_email varchar(254),
      CHECK ((restored_at IS NULL) = (restored_by_email IS NULL))
    );
    -- At most one standing dismissal per finding of a device.
    CREATE UNIQUE INDEX finding_dismissals_standing ON finding_dismissals(device_id, finding_key) WHERE restored_at IS NULL;
    CREATE INDEX finding_dismissals_organisation ON finding_dismissals(organisation_id) WHERE restored_at IS NULL;
    CREATE INDEX finding_dismissals_device ON finding_dismissals(device_id);
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DROP TABLE IF EXISTS finding_dismissals;`);
}
