// Background analysis of saved revisions: saving returns as soon as the revision is written,
// and this queue then compiles it, computes its findings and the worst outcome on outside
// interfaces, stores them (revision_analyses) and warms the repository's caches. A reader that
// needs the summary before the job ran computes it itself (DeviceRevisions.summariesOf), so the
// pages never wait for the queue and never show a stale answer. One revision at a time, in
// save order; a revision already queued is not queued twice.
import { deviceRevisions } from "../devices/index.ts";

export class RevisionAnalysisQueue {
  readonly #queued = new Set<string>();
  #tail: Promise<void> = Promise.resolve();

  constructor(private readonly analyse: (revisionId: string) => Promise<void>) {}

  /** Queues a saved revision; returns at once. */
  enqueue(revisionId: string): void {
    if (this.#queued.has(revisionId)) return;
    this.#queued.add(revisionId);
    this.#tail = this.#tail
      // After the current request's response is on its way.
      .then(() => new Promise<void>((resolve) => setImmediate(resolve)))
      .then(() => this.analyse(revisionId))
      .catch((error: unknown) => {
        // The first reader computes the summary instead; nothing is lost.
        console.error(`background analysis of revision ${revisionId} failed:`, error);
      })
      .finally(() => this.#queued.delete(revisionId));
  }

  /** Resolves when every queued revision has been analysed (tests, benchmarks, shutdown). */
  idle(): Promise<void> {
    return this.#tail;
  }
}

/** The process's queue, analysing through the process's repository. */
export const revisionAnalysisQueue = new RevisionAnalysisQueue((revisionId) => deviceRevisions.analyseSaved(revisionId));
