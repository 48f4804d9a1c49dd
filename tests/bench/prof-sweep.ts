import { compileModel, parseModel } from "#server/engine/index.ts";
import { distinctRulePartitions } from "#server/engine/analysis.ts";
import { BENCH_SIZE, benchSize, generateModel } from "#server/engine/testing/generate-model.ts";
const n = Number(process.argv[2] ?? 2000);
const g = generateModel(20250301, n === 2000 ? BENCH_SIZE : benchSize(n));
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
const c = compileModel(p.model);
const parts = distinctRulePartitions(c);
let words = 0, rulesSeen = 0, sched = 0;
for (const q of parts) for (const pos of q.active) { words += c.ruleSourceBits(pos, q.family).words.length; rulesSeen++; if (c.rules[pos].schedule >= 0) sched++; }
console.log("partitions", parts.length, "avg active", rulesSeen / parts.length, "avg words per active rule", words / rulesSeen, "scheduled share", sched / rulesSeen, "domain words", c.domains[4].words, c.domains[6].words);
console.log(c.partitionSources);
