// Working the job queues in this process: the web process (unless SALLYPORT_JOBS=0) and each
// job-only process (server/jobs/main.ts) call startJobWorking once at start-up.
import { closeAnalysisPool } from "./analysis-pool.server.ts";
import { stopJobQueue } from "./job-queue.server.ts";
import { workRevisionAnalysis } from "./revision-analysis.server.ts";

let stopWorking: (() => Promise<void>) | undefined;

/** Jobs at a time per process: JOB_CONCURRENCY, default 2 (their heavy part waits for the pool's threads anyway). */
export function jobConcurrency(): number {
  const configured = Number(process.env.JOB_CONCURRENCY);
  return Number.isInteger(configured) && configured > 0 ? configured : 2;
}

/**
 * Starts working the queues. A database that is down at start-up is retried every five seconds
 * in the background: the web server answers (503s) meanwhile, and picks the jobs up once it is back.
 */
export async function startJobWorking(): Promise<void> {
  try {
    stopWorking = await workRevisionAnalysis({ concurrency: jobConcurrency() });
  } catch (error) {
    console.error(`job worker: could not start (${error instanceof Error ? error.message : String(error)}); retrying in 5 s`);
    setTimeout(() => void startJobWorking(), 5_000).unref();
  }
}

/** Stops fetching jobs, lets running ones finish (up to ten seconds), ends the pool's threads. */
export async function stopJobWorking(): Promise<void> {
  await stopWorking?.();
  stopWorking = undefined;
  await stopJobQueue();
  await closeAnalysisPool();
}

// The app's server bundle and server/http/main.ts each hold their own copy of this module: the
// running worker is kept on the process's global object, so one starts it and the other stops it,
// and a development reload of the bundle does not start a second one.
const RUNNING = Symbol.for("sallyport.jobWorking");
type JobHolder = { [RUNNING]?: { stop: () => Promise<void> } };

/** The web process's jobs: started once, unless job-only processes work the queues (SALLYPORT_JOBS=0). */
export function startProcessJobs(): void {
  const holder = globalThis as JobHolder;
  if (holder[RUNNING] || process.env.SALLYPORT_JOBS === "0") return;
  holder[RUNNING] = { stop: stopJobWorking };
  void startJobWorking();
}

/** Stops the process's jobs, whichever copy of this module started them. */
export async function stopProcessJobs(): Promise<void> {
  const holder = globalThis as JobHolder;
  const running = holder[RUNNING];
  holder[RUNNING] = undefined;
  await running?.stop();
}
