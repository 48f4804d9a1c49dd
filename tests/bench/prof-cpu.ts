import { compileModel, findings, parseModel } from "#server/engine/index.ts";
import { BENCH_SIZE, generateModel } from "#server/engine/testing/generate-model.ts";
import { Session } from "node:inspector/promises";
import { writeFileSync } from "node:fs";
const g = generateModel(20250301, BENCH_SIZE);
const p = parseModel(g.model); if (!p.ok) throw new Error("bad");
findings(compileModel(p.model));
const s = new Session(); s.connect(); await s.post("Profiler.enable"); await s.post("Profiler.setSamplingInterval", { interval: 100 }); await s.post("Profiler.start");
for (let i = 0; i < 4; i++) { const c = compileModel(p.model); findings(c); }
const { profile } = await s.post("Profiler.stop");
writeFileSync("/tmp/findings.cpuprofile", JSON.stringify(profile));
