// A worker thread of the analysis pool (analysis-pool.server.ts): compiles a model document and
// answers with its findings and fleet summary, as plain data. The engine is pure, so it runs
// here unchanged; a long compile blocks only this thread, never the web server's event loop.
import { compileModel, findings } from "../engine/index.ts";
import { keysOf } from "../devices/finding-keys.ts";
import { summariseDocument } from "../workspace/summary.ts";
import type { ModelDocument } from "../workspace/index.ts";
import type { PooledAnalysis } from "./analysis-pool.server.ts";

export default function analyse({ effective }: { effective: ModelDocument }): PooledAnalysis {
  const compiled = compileModel(effective);
  const found = findings(compiled);
  const { findingsBySeverity, worstOutsideOutcome } = summariseDocument(effective, compiled, found);
  return { findings: [...found], findingKeys: keysOf(found), findingsBySeverity, worstOutsideOutcome };
}
