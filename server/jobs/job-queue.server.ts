// The process's connection to the job queue (pg-boss on our PostgreSQL, docs/decisions/018).
// Every process that saves revisions sends jobs through it; the processes that run jobs (the web
// process unless SALLYPORT_JOBS=0, and `JOB_WORKERS` job-only processes) also work the queues.
// The tables and queues exist already (made by migration), so it never creates anything.
import PgBoss from "pg-boss";
import { getEnvironment } from "../config.server.ts";
import { JOB_QUEUE_SCHEMA } from "./queues.ts";

let starting: Promise<PgBoss> | undefined;

/** The started queue client; started on first use, once per process. */
export function jobQueue(): Promise<PgBoss> {
  starting ??= startQueue().catch((error: unknown) => {
    // The next caller tries again (the database may be back by then).
    starting = undefined;
    throw error;
  });
  return starting;
}

async function startQueue(): Promise<PgBoss> {
  return createJobQueue(getEnvironment().DATABASE_URL);
}

/** A new, started queue client on this database (the process's own is jobQueue(); tests make more to play a restart). */
export async function createJobQueue(connectionString: string): Promise<PgBoss> {
  const boss = new PgBoss({
    connectionString,
    schema: JOB_QUEUE_SCHEMA,
    application_name: "sallyport-jobs",
    max: 4,
    // Created by migration: a runtime role that cannot create tables must not try.
    migrate: false,
    // Archiving and expiry; several processes may supervise, pg-boss takes an advisory lock.
    supervise: true,
    schedule: false,
  });
  // An unreachable database is reported here (and retried by pg-boss), never thrown at the process.
  boss.on("error", (error: Error) => console.error(`job queue: ${error.message}`));
  await boss.start();
  return boss;
}

/** Stops working and sending; waits up to `timeoutMs` for running jobs (shutdown, tests). */
export async function stopJobQueue(timeoutMs = 10_000): Promise<void> {
  const current = starting;
  starting = undefined;
  if (!current) return;
  const boss = await current.catch(() => undefined);
  await boss?.stop({ graceful: true, wait: true, timeout: timeoutMs });
}
