import { compileModel, parseModel } from "#server/engine/index.ts";
import { arrivals, distinctRulePartitions, firstOfEachList } from "#server/engine/analysis.ts";
import { BENCH_SIZE, benchSize, generateModel } from "#server/engine/testing/generate-model.ts";
const g = generateModel(20250301, Number(process.argv[2] ?? 2000) === 2000 ? BENCH_SIZE : benchSize(Number(process.argv[2])));
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
const c = compileModel(p.model);
console.log("domain v4", c.domains[4].size, "v6", c.domains[6].size, "arrivals", arrivals(c).length, "classes", c.classes.length, "catalogue", c.catalogue.length, "slices", c.week.slices.length, "ifaces", c.interfaceAddresses.length, "addresses", c.addresses.length);
console.log("lists", firstOfEachList(c).length, "partitions", distinctRulePartitions(c).length);
const parts = distinctRulePartitions(c);
let runs = 0, act = 0; for (const q of parts) { runs += q.owner.values.length; act += q.active.length; }
console.log("avg runs", runs / parts.length, "avg active", act / parts.length, "v4 parts", parts.filter(q => q.family === 4).length);
{
  let triples = 0, runsTotal = 0; const all = new Set();
  const dest: number[][] = c.interfaceAddresses.map(() => []);
  for (const { iface, to } of arrivals(c)) dest[iface].push(to);
  for (let iface = 0; iface < c.interfaceAddresses.length; iface++) for (let cls = 0; cls < c.catalogue.length; cls++) {
    const seen = new Set();
    for (const to of dest[iface]) for (const q of c.weekOutcomes(iface, to, cls)) { if (seen.has(q.outcome)) continue; seen.add(q.outcome); all.add(q.outcome); runsTotal += q.outcome.values.length; }
    triples += seen.size;
  }
  console.log("triples", triples, "distinct runs", all.size, "avg runs per triple", runsTotal / triples);
}
