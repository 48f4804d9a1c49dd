import type { MigrationContext } from "#server/db/migrator.ts";

// What the fleet pages show about a revision that the engine must analyse (findings by
// severity, the worst outcome on outside interfaces) moves out of the immutable revision
// row: saving no longer waits for the analysis, which a background job writes here (and a
// reader that needs it first computes it once). Existing revisions keep their values.
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TABLE revision_analyses (
      revision_id uuid PRIMARY KEY REFERENCES device_revisions(id) ON DELETE CASCADE,
      findings_by_severity jsonb NOT NULL,
      worst_outside_outcome varchar(16)
        CHECK (worst_outside_outcome IN ('silent', 'refused', 'answered', 'login-denied', 'login-mfa', 'login-password')),
      computed_at timestamptz NOT NULL DEFAULT now()
    );
    INSERT INTO revision_analyses (revision_id, findings_by_severity, worst_outside_outcome)
      SELECT id, COALESCE(summary->'findingsBySeverity', '{}'::jsonb), summary->>'worstOutsideOutcome'
      FROM device_revisions;
  `);
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`DROP TABLE IF EXISTS revision_analyses;`);
}
