import { performance } from "node:perf_hooks";
import { Session } from "node:inspector/promises";
import { writeFileSync } from "node:fs";
import { compileModel, findings, parseModel } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModel } from "#server/engine/index.ts";
import { exposureCells, outcomeSets } from "#server/engine/exposure.ts";
import { BENCH_SIZE, generateModel } from "#server/engine/testing/generate-model.ts";
const g = generateModel(20250301, BENCH_SIZE);
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
const model = p.model;
const kind = process.argv[2] ?? "move";
const EDITS: Record<string, (m: DeviceModel) => DeviceModel> = {
  move: (m) => { const rules = [...m.inboundRules]; const [rule] = rules.splice(100, 1); rules.splice(900, 0, rule); return { ...m, inboundRules: rules }; },
  switch: (m) => ({ ...m, inboundRules: m.inboundRules.map((r, i) => (i === 500 ? { ...r, enabled: !r.enabled } : r)) }),
  action: (m) => ({ ...m, inboundRules: m.inboundRules.map((r, i) => (i === 700 ? { ...r, action: r.action === "allow" ? "deny" : "allow" } : r)) }),
  add: (m) => ({ ...m, inboundRules: [...m.inboundRules.slice(0, 400), { ...m.inboundRules[1200], id: "bench-added" }, ...m.inboundRules.slice(400)] }),
  remove: (m) => ({ ...m, inboundRules: m.inboundRules.filter((_, i) => i !== 300) }),
  sources: (m) => ({ ...m, inboundRules: m.inboundRules.map((r, i) => (i === 300 ? { ...r, sources: [...r.sources, m.addresses[7].name] } : r)) }),
};
function exposureCounts(device: CompiledModel) { for (let s = 0; s < device.week.slices.length; s++) for (const cell of exposureCells(device, s)) outcomeSets(device, cell.partition); }
const basis = compileModel(model); findings(basis); exposureCounts(basis);
const next = parseModel(EDITS[kind](model)); if (!next.ok) throw new Error("bad edit");
const s = new Session(); s.connect(); await s.post("Profiler.enable"); await s.post("Profiler.setSamplingInterval", { interval: 100 });
const mins = { compile: Infinity, exposure: Infinity, findings: Infinity };
for (let i = 0; i < 8; i++) {
  if (i === 2) await s.post("Profiler.start");
  let t0 = performance.now(); const d = compileModel(next.model, { basis }); const c = performance.now() - t0;
  t0 = performance.now(); exposureCounts(d); const e = performance.now() - t0;
  t0 = performance.now(); findings(d); const f = performance.now() - t0;
  mins.compile = Math.min(mins.compile, c); mins.exposure = Math.min(mins.exposure, e); mins.findings = Math.min(mins.findings, f);
}
const { profile } = await s.post("Profiler.stop");
writeFileSync("/tmp/edit.cpuprofile", JSON.stringify(profile));
console.log(kind, JSON.stringify(mins));
