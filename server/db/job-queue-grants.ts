// The runtime role's share of the job queue's schema (docs/decisions/018): it sends, fetches,
// completes and archives jobs — rows only. The owner role made the tables and queues by
// migration; the runtime role owns nothing there, so it cannot alter or drop them.
import type { Sequelize } from "sequelize";
import { JOB_QUEUE_SCHEMA } from "../jobs/queues.ts";

/** Idempotent: run after every migration, like grantRuntimeRole. */
export async function grantJobQueue(sequelize: Sequelize, role: string): Promise<void> {
  await sequelize.query(`
    REVOKE CREATE ON SCHEMA ${JOB_QUEUE_SCHEMA} FROM PUBLIC;
    GRANT USAGE ON SCHEMA ${JOB_QUEUE_SCHEMA} TO ${role};
    GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA ${JOB_QUEUE_SCHEMA} TO ${role};
  `);
}
