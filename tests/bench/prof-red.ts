import { performance } from "node:perf_hooks";
import { compileModel, parseModel, findings } from "#server/engine/index.ts";
import { distinctRulePartitions, redundantRules, firstMatchRules } from "#server/engine/analysis.ts";
import { BENCH_SIZE, generateModel } from "#server/engine/testing/generate-model.ts";
const g = generateModel(20250301, BENCH_SIZE);
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
for (let r = 0; r < 3; r++) {
const c = compileModel(p.model); distinctRulePartitions(c); firstMatchRules(c);
let t0 = performance.now(); const red = redundantRules(c); const t1 = performance.now();
const f = findings(c);
const counts: Record<string, number> = {}; for (const x of f) counts[x.code] = (counts[x.code] ?? 0) + 1;
console.log("redundantRules", (t1 - t0).toFixed(1), "n", red.size, JSON.stringify(counts));
}
