import PgBoss from "pg-boss";
import type { MigrationContext } from "#server/db/migrator.ts";
import { JOB_QUEUE_SCHEMA, QUEUES } from "#server/jobs/queues.ts";

// Two things the fleet and the background analysis need (docs/decisions/018):
// 1. A revision's findings are stored with its summary, and beside them each finding's key and
//    severity alone, so the fleet table counts active findings without reading any document
//    (issue 14 point 4). Rows written before this stay without them; the first reader fills them.
// 2. The job queue's tables (pg-boss, in its own schema), created here by the owner role with
//    its queues, so the runtime role needs only to read and write rows there (server/db/roles.ts).
export async function up({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    ALTER TABLE revision_analyses
      ADD COLUMN findings jsonb CHECK (findings IS NULL OR jsonb_typeof(findings) = 'array'),
      ADD COLUMN finding_keys jsonb CHECK (finding_keys IS NULL OR jsonb_typeof(finding_keys) = 'array');
  `);
  // A database reset drops the schema too (server/db/cli.ts); made once otherwise.
  const installed = (await queryInterface.sequelize.query(`SELECT to_regclass('${JOB_QUEUE_SCHEMA}.version')::text AS name`, { plain: true })) as { name: string | null } | null;
  if (!installed?.name) await queryInterface.sequelize.query(PgBoss.getConstructionPlans(JOB_QUEUE_SCHEMA));
  for (const queue of Object.values(QUEUES)) {
    const { name, ...options } = queue;
    await queryInterface.sequelize.query(`SELECT ${JOB_QUEUE_SCHEMA}.create_queue(:name, :options)`, { replacements: { name, options: JSON.stringify(options) } });
  }
}

export async function down({ context: queryInterface }: MigrationContext): Promise<void> {
  await queryInterface.sequelize.query(`
    DROP SCHEMA IF EXISTS ${JOB_QUEUE_SCHEMA} CASCADE;
    ALTER TABLE revision_analyses DROP COLUMN IF EXISTS findings, DROP COLUMN IF EXISTS finding_keys;
  `);
}
