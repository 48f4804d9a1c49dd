import { compileModel, findings, parseModel } from "#server/engine/index.ts";
import { SMALL_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
const MEDIUM = { ...SMALL_SIZE, interfaces: 4, rules: 30, addressObjects: 20, entries: 50, groups: 5, accounts: 5, schedules: 3 };
const g = generateModel(728958014, MEDIUM); const p = parseModel(g.model); if (!p.ok) throw 1;
const before = p.model; const random = prng(1073741820); const pick = () => Math.floor(random() * 1e9);
const at = pick() % before.inboundRules.length;
const after = parseModel({ ...before, inboundRules: before.inboundRules.map((r, i) => (i === at ? { ...r, enabled: !r.enabled } : r)) }); if (!after.ok) throw 2;
console.log("switched", before.inboundRules[at].id, "now enabled", !before.inboundRules[at].enabled);
const prev = compileModel(before); findings(prev);
const inc = compileModel(after.model, { basis: prev }); const a = findings(inc); const b = findings(compileModel(after.model));
for (let i = 0; i < Math.max(a.length, b.length); i++) if (JSON.stringify(a[i]) !== JSON.stringify(b[i])) { console.log("INC", JSON.stringify(a[i])); console.log("FRESH", JSON.stringify(b[i])); break; }
console.log(inc.partitionSources);
