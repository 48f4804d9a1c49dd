// The job queues (pg-boss, docs/decisions/018): their names and policies, created by migration
// (migrations/20261206-0100-…) so the runtime role never needs to create tables.

/** pg-boss's tables live in their own schema, beside the application's. */
export const JOB_QUEUE_SCHEMA = "pgboss";

export const QUEUES = {
  /**
   * One job per saved revision: compute its findings and summary and store them. "short": at most
   * one waiting job per revision (its id is the singleton key); retried with back-off, and a job
   * that hangs expires after ten minutes and is retried too.
   */
  revisionAnalysis: { name: "revision-analysis", policy: "short", retryLimit: 5, retryDelay: 2, retryBackoff: true, expireInSeconds: 600 },
} as const;
