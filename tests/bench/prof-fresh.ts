import { performance } from "node:perf_hooks";
import { compileModel, parseModel } from "#server/engine/index.ts";
import { arrivals, distinctRulePartitions, firstMatchRules, firstOfEachList, loginReachable } from "#server/engine/analysis.ts";
import { FindingContext } from "#server/engine/findings/context.ts";
import { FINDING_CHECKS } from "#server/engine/findings/index.ts";
import { BENCH_SIZE, benchSize, generateModel } from "#server/engine/testing/generate-model.ts";
const rules = Number(process.argv[2] ?? 2000);
const g = generateModel(20250301, rules === 2000 ? BENCH_SIZE : benchSize(rules));
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
const mins = new Map<string, number>();
for (let round = 0; round < 8; round++) {
  const t: [string, number][] = [];
  let t0 = performance.now();
  const lap = (name: string) => { const now = performance.now(); t.push([name, now - t0]); t0 = now; };
  const c = compileModel(p.model); lap("compile");
  arrivals(c); lap("arrivals");
  firstOfEachList(c); lap("firstOfEachList");
  distinctRulePartitions(c); lap("distinctPartitions");
  firstMatchRules(c); lap("firstMatch");
  loginReachable(c); lap("loginReachable");
  const ctx = new FindingContext(c);
  ctx.exposure(0, 0); lap("ctx.exposure");
  for (const check of FINDING_CHECKS) { check.check(ctx); lap(check.code); }
  for (const [n, ms] of t) mins.set(n, Math.min(mins.get(n) ?? Infinity, ms));
}
console.log([...mins].filter(([, ms]) => ms > 0.3).map(([n, ms]) => `${n} ${ms.toFixed(1)}`).join(" | "), "| findings sum", [...mins].filter(([n]) => n !== "compile").reduce((a, [, ms]) => a + ms, 0).toFixed(1));
