// Background analysis of saved revisions (docs/decisions/018): saving returns as soon as the
// revision is written and a job is queued in PostgreSQL (pg-boss); a job worker — in the web
// process, or in any number of job-only processes — then computes its findings and fleet summary
// (large models on the analysis pool's worker threads) and stores them (revision_analyses). Jobs
// are retried with back-off, survive a restart (they are rows), and a job for a revision already
// analysed does nothing. A reader that needs the summary before the job ran computes it itself
// (DeviceRevisions.summariesOf), so the pages never wait for the queue and never show a stale answer.
import type PgBoss from "pg-boss";
import { deviceRevisions } from "../devices/index.ts";
import { jobQueue } from "./job-queue.server.ts";
import { QUEUES } from "./queues.ts";

export const REVISION_ANALYSIS_QUEUE = QUEUES.revisionAnalysis.name;

export type RevisionAnalysisJob = { revisionId: string };
/** What a finished job records (pg-boss keeps it as the job's output): whether it did the work. */
export type RevisionAnalysisOutput = { analysed: boolean };

const FINISHED = new Set(["completed", "failed", "cancelled"]);

export class RevisionAnalysisQueue {
  readonly #sending = new Set<Promise<string | null>>();
  readonly #sent = new Set<string>();

  /** Queues a saved revision; returns at once. A revision already waiting is not queued twice. */
  enqueue(revisionId: string): void {
    const sending = this.send(revisionId).catch((error: unknown) => {
      // The first reader computes the summary instead; nothing is lost.
      console.error(`could not queue the analysis of revision ${revisionId}:`, error);
      return null;
    });
    this.#sending.add(sending);
    void sending.finally(() => this.#sending.delete(sending));
  }

  /** Queues the job and answers its id (null when one for this revision waits already). */
  async send(revisionId: string): Promise<string | null> {
    const boss = await jobQueue();
    const id = await boss.send(REVISION_ANALYSIS_QUEUE, { revisionId } satisfies RevisionAnalysisJob, { singletonKey: revisionId });
    if (id) this.#sent.add(id);
    return id;
  }

  /**
   * Resolves when every job this process queued has finished, in whichever process it ran
   * (tests, benchmarks); rejects after `timeoutMs`.
   */
  async idle(timeoutMs = 60_000): Promise<void> {
    await Promise.all([...this.#sending]);
    if (this.#sent.size === 0) return;
    const boss = await jobQueue();
    const deadline = Date.now() + timeoutMs;
    for (const id of [...this.#sent]) {
      for (;;) {
        const job = await boss.getJobById(REVISION_ANALYSIS_QUEUE, id, { includeArchive: true });
        if (!job || FINISHED.has(job.state)) break;
        if (Date.now() > deadline) throw new Error(`revision analysis job ${id} still ${job.state} after ${timeoutMs} ms`);
        await new Promise((resolve) => setTimeout(resolve, 50));
      }
      this.#sent.delete(id);
    }
  }
}

/** The process's queue. */
export const revisionAnalysisQueue = new RevisionAnalysisQueue();

/** The job's work: analyse and store, unless it was done already (a retry, a second delivery). */
export async function runRevisionAnalysis(job: RevisionAnalysisJob): Promise<RevisionAnalysisOutput> {
  return { analysed: await deviceRevisions.analyseSaved(job.revisionId) };
}

/**
 * Works the revision-analysis queue in this process, `concurrency` jobs at a time (each one's
 * heavy part runs on the analysis pool). Answers a function that stops working it.
 */
export async function workRevisionAnalysis(
  options: { concurrency?: number; boss?: PgBoss; queue?: string; handle?: (job: RevisionAnalysisJob) => Promise<RevisionAnalysisOutput> } = {},
): Promise<() => Promise<void>> {
  const boss = options.boss ?? (await jobQueue());
  const queue = options.queue ?? REVISION_ANALYSIS_QUEUE;
  const handle = options.handle ?? runRevisionAnalysis;
  const workers: string[] = [];
  for (let index = 0; index < Math.max(1, options.concurrency ?? 1); index++) {
    // pg-boss fetches with SKIP LOCKED: any number of workers in any number of processes share the queue.
    workers.push(await boss.work<RevisionAnalysisJob>(queue, { batchSize: 1, pollingIntervalSeconds: 0.5 }, async ([job]) => handle(job.data)));
  }
  return async () => {
    for (const id of workers) await boss.offWork({ id });
  };
}
