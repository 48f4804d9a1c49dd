import { performance } from "node:perf_hooks";
import { compileModel, parseModel } from "#server/engine/index.ts";
import { Domain } from "#server/engine/domain.ts";
import { rangesOf } from "#server/engine/address-sets.ts";
import { benchSize, generateModel } from "#server/engine/testing/generate-model.ts";
const g = generateModel(20250301, benchSize(16000));
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
const c = compileModel(p.model);
const sets = new Map<string, unknown>(); c.rules.forEach((r) => sets.set(p.model.inboundRules[r.position].sources.join("\n"), r.sources));
const list = [...sets.values()] as any[];
for (const fam of [4, 6] as const) {
  const ranges = list.map((s) => rangesOf(s, fam));
  let total = 0; for (const r of ranges) total += r.length;
  for (let i = 0; i < 3; i++) { const t0 = performance.now(); const d = new Domain(fam, ranges); console.log(fam, "sets", ranges.length, "ranges", total / 2, "size", d.size, (performance.now() - t0).toFixed(0), "ms"); }
}
{
  const names = new Set<string>(); for (const r of p.model.inboundRules) for (const n of r.sources) names.add(n);
  for (const fam of [4, 6] as const) {
    const t0 = performance.now();
    const ranges = [...names].map((n) => rangesOf(c.addressSetOf(n), fam));
    let total = 0; for (const r of ranges) total += r.length;
    const d = new Domain(fam, ranges); console.log("by name", fam, "names", names.size, "ranges", total / 2, "size", d.size, (performance.now() - t0).toFixed(0), "ms");
  }
}
