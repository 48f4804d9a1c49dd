// The analysis pool (docs/decisions/018): worker threads (Piscina) that compile large models and
// compute their findings and fleet summary, so a heavy analysis holds one worker thread, not the
// event loop that answers every organisation's pages. Model documents go in as JSON-like data,
// plain results come back (structured clone). Small models stay on the calling thread: for
// them the copy to and from a thread costs more than the analysis (measured: decision 018).
import { existsSync } from "node:fs";
import { availableParallelism } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { Piscina } from "piscina";
import type { Finding, Outcome } from "../engine/index.ts";
import { awayFromTurn } from "../http/admission.server.ts";
import type { ModelDocument } from "../workspace/index.ts";

/** What a worker thread answers about one revision. */
export type PooledAnalysis = {
  findings: Finding[];
  findingKeys: Array<[string, string]>;
  findingsBySeverity: Record<string, number>;
  worstOutsideOutcome: Outcome | null;
};

/**
 * Models with fewer elements (rules, address entries, accounts… as elementCount counts them)
 * are analysed on the calling thread. 300: the demo devices (≤ 60 elements) compile in a few
 * milliseconds, below the pool's round trip of copying the document and the findings (decision 018).
 */
export const POOL_THRESHOLD_ELEMENTS = Number(process.env.ANALYSIS_POOL_THRESHOLD ?? 300);

/** Worker threads: ANALYSIS_THREADS, else one fewer than the cores (at least one). */
function threadCount(): number {
  const configured = Number(process.env.ANALYSIS_THREADS);
  return Number.isInteger(configured) && configured > 0 ? configured : Math.max(1, availableParallelism() - 1);
}

/**
 * The worker's source file. This module runs from server/jobs/ (development, Vitest, the CLI) or
 * bundled into build/server/index.js (production): both sit two folders below the checkout, and
 * the worker always runs from its TypeScript source through tsx (a runtime dependency).
 */
function workerFile(): string {
  const here = path.dirname(fileURLToPath(import.meta.url));
  for (let folder = here; ; folder = path.dirname(folder)) {
    const candidate = path.join(folder, "server/jobs/analysis-worker.ts");
    if (existsSync(candidate)) return candidate;
    if (path.dirname(folder) === folder) throw new Error(`the analysis worker (server/jobs/analysis-worker.ts) was not found above ${here}`);
  }
}

let pool: Piscina | undefined;

function thePool(): Piscina {
  if (!pool) {
    // tsx compiles the worker's TypeScript: inherited from `node --import tsx` (npm start, the
    // tests' server), added when the process was started without it (Vitest, scripts).
    const execArgv = process.execArgv.some((argument) => argument.includes("tsx")) ? process.execArgv : [...process.execArgv, "--import", "tsx"];
    const threads = threadCount();
    // Idle threads end after a minute: a quiet server holds no compiled engine copies.
    pool = new Piscina({ filename: workerFile(), execArgv, minThreads: 0, maxThreads: threads, idleTimeout: 60_000 });
  }
  return pool;
}

/** The findings and fleet summary of a model document, computed on a worker thread. */
export async function analyseOffThread(effective: ModelDocument): Promise<PooledAnalysis> {
  // A request that waits on a worker thread gives its turn up meanwhile (server/http/admission.server.ts).
  return (await awayFromTurn(() => thePool().run({ effective }))) as PooledAnalysis;
}

/** Ends the worker threads (shutdown, tests). */
export async function closeAnalysisPool(): Promise<void> {
  const closing = pool;
  pool = undefined;
  await closing?.destroy();
}
