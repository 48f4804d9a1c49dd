// Engine benchmark on a seeded synthetic model of realistic large size.
//   npm run bench                       readable report
//   npm run bench -- --json             one JSON object
//   --no-series                         skip the scaling series (it takes a few minutes)
//   --series=250,500,1000               choose its sizes (inbound rules)
//   --series-runs=3                     fresh child processes per size (median, min, max)
//   --write-chart                       write docs/bench/scaling.svg from the series
//   --only=fleet                        only the fleet-reach measure (its own child process)
// Targets (2-core machine): full exposure ≤ 100 ms, findings ≤ 150 ms, a one-rule edit
// re-analysed (compile on the basis, exposure counts, findings) ≤ 20 ms, compiled trace ≥ 100× faster than the
// naive evaluator, ≥ 1,000,000 lookups/s, peak RSS ≤ 512 MiB; a one-rule move diffed in
// ≤ 100 ms and ≤ 400 MiB peak RSS; at 16,000 rules compile ≤ 2 s, findings ≤ 3 s, diff ≤ 3 s,
// peak RSS ≤ 1 GiB; fleet reach over 500 demo-size devices ≤ 1 s warm. Sizes of the series,
// the diff and the fleet run in fresh child processes, so each peak RSS is that run's own.
// The edits' key `edits.<name>.reanalysisMs` keeps its meaning (compile on the basis + every
// exposure cell's outcome counts over the week + findings); since 2026-12-04 the counts are
// read through the revision summary's worstOutcome, the call the app makes after a save
// (exposureCounts below), instead of a walk over every slice's cells.

import { spawn, spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { buildCli, ROOT } from "#server/cli/build.mjs";
import { freshBundle } from "#server/cli/fresh-bundle.mjs";
import { performance } from "node:perf_hooks";
import { changeEffect, compileModel, diffModels, exposure, findings, fleetReach, parseModel, trace, worstOutcome } from "#server/engine/index.ts";
import type { CompiledModel, DeviceModel, Outcome } from "#server/engine/index.ts";
import { exposureCells } from "#server/engine/exposure.ts";
import { BENCH_SIZE, benchSize, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { scalingChart } from "./scaling-chart.ts";
import { benchProbes, NAIVE_PROBES, naiveMicrosecondsPerProbe, SEED, START } from "./machine-speed.ts";

const TRACE_PROBES = 20_000;
const LOOKUPS = 4_000_000;
const EXPOSURE_RUNS = 5;
const FINDINGS_RUNS = 3;
const CLI_RUNS = 5;
/** The instant of the CLI's `exposure --at`: Tuesday 10:00 UTC in the benchmark week. */
const CLI_AT = new Date(START + (24 + 10) * 3_600_000).toISOString();
const LAUNCHER = join(ROOT, "server/cli/sallyport.mjs");
const DIFF_RUNS = 5;
const SERIES = [250, 500, 1000, 2000, 4000, 8000, 16000];
const WARM_UP_RULES = 250;
const SERIES_PAIRS = 3;
const CHART = fileURLToPath(new URL("../../docs/bench/scaling.svg", import.meta.url));

const EDIT_RUNS = 5;

/** One-element edits of the bench model, as the editor makes them (rule positions picked once, so every run is the same edit). */
const EDITS: Record<string, (m: DeviceModel) => DeviceModel> = {
  move: (m) => {
    const rules = [...m.inboundRules];
    const [rule] = rules.splice(100, 1);
    rules.splice(900, 0, rule);
    return { ...m, inboundRules: rules };
  },
  switch: (m) => ({ ...m, inboundRules: m.inboundRules.map((r, i) => (i === 500 ? { ...r, enabled: !r.enabled } : r)) }),
  action: (m) => ({ ...m, inboundRules: m.inboundRules.map((r, i) => (i === 700 ? { ...r, action: r.action === "allow" ? "deny" : "allow" } : r)) }),
  add: (m) => ({ ...m, inboundRules: [...m.inboundRules.slice(0, 400), { ...m.inboundRules[1200], id: "bench-added" }, ...m.inboundRules.slice(400)] }),
  remove: (m) => ({ ...m, inboundRules: m.inboundRules.filter((_, i) => i !== 300) }),
  // A source list of another rule, new for this rule: the elements change, so little is re-used.
  sources: (m) => ({ ...m, inboundRules: m.inboundRules.map((r, i) => (i === 300 ? { ...r, sources: [...r.sources, m.addresses[7].name] } : r)) }),
};

interface EditTiming {
  /** Compile on the basis + every exposure cell's outcome counts over the week (exposureCounts) + findings. */
  reanalysisMs: Spread;
  compileMs: number;
  exposureMs: number;
  findingsMs: number;
  partitions: { swept: number; derived: number; updated: number; reused: number; inherited: number };
}

/**
 * One-element edit → re-analysis (in its own process, like the diff, so the main run's peak RSS stays its own): the model compiled on the analysed previous version
 * (compileModel's basis), every exposure cell's counts, and the findings. Each run starts from
 * the same analysed basis. Medians of the parts are reported beside the spread of the total.
 */
function editBenchmark(model: DeviceModel): Record<string, EditTiming> {
  const basis = compileModel(model);
  findings(basis);
  exposureCounts(basis);
  const out: Record<string, EditTiming> = {};
  // A server has run these code paths before: one untimed pass over every edit first, so the
  // first edit timed is not also the one that warms the JIT compiler up.
  for (const edit of Object.values(EDITS)) {
    const parsed = parseModel(edit(model));
    if (parsed.ok) findings(compileModel(parsed.model, { basis }));
  }
  for (const [name, edit] of Object.entries(EDITS)) {
    const parsed = parseModel(edit(model));
    if (!parsed.ok) throw new Error(`bench edit "${name}" made an invalid model`);
    const totals: number[] = [];
    const parts: { compile: number[]; exposure: number[]; findings: number[] } = { compile: [], exposure: [], findings: [] };
    let partitions = { swept: 0, derived: 0, updated: 0, reused: 0, inherited: 0 };
    for (let i = 0; i < EDIT_RUNS; i++) {
      const [device, compileMs] = time(() => compileModel(parsed.model, { basis }));
      const [, exposureMs] = time(() => exposureCounts(device));
      const [, findingsMs] = time(() => findings(device));
      parts.compile.push(compileMs);
      parts.exposure.push(exposureMs);
      parts.findings.push(findingsMs);
      totals.push(compileMs + exposureMs + findingsMs);
      partitions = { ...device.partitionSources };
    }
    out[name] = { reanalysisMs: spread(totals), compileMs: round(median(parts.compile), 1), exposureMs: round(median(parts.exposure), 1), findingsMs: round(median(parts.findings), 1), partitions };
  }
  return out;
}

/**
 * Every exposure cell's outcome counts over the week (the exposure map's numbers), read as the
 * app reads them after a save: the revision summary's worstOutcome (there on the wan
 * interfaces, here on every interface), which takes each cell's distinct outcomes of the week
 * and their counts alone — no CIDR ranges, no per-slice entries. (Before 2026-12-04 this
 * walked every slice's cells and made each partition's outcome-sets object, work no
 * caller does after a save; the key's meaning, every cell's counts, is unchanged.)
 */
function exposureCounts(device: CompiledModel): Outcome | null {
  return worstOutcome(device, device.model.interfaces.map((face) => face.name));
}

function time<T>(f: () => T): [T, number] {
  const t0 = performance.now();
  const value = f();
  return [value, performance.now() - t0];
}

function round(x: number, digits = 3): number {
  const k = 10 ** digits;
  return Math.round(x * k) / k;
}

interface Spread {
  min: number;
  median: number;
  max: number;
}

function spread(values: readonly number[]): Spread {
  const sorted = [...values].sort((a, b) => a - b);
  return { min: round(sorted[0], 1), median: round(sorted[Math.floor(sorted.length / 2)], 1), max: round(sorted[sorted.length - 1], 1) };
}

/** Runs the launcher as a child process; resolves to the wall time from spawn to exit and the bytes it wrote. */
function timeCli(args: readonly string[]): Promise<{ ms: number; bytes: number }> {
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    const child = spawn(process.execPath, [LAUNCHER, ...args], { cwd: ROOT, stdio: ["ignore", "pipe", "inherit"] });
    let bytes = 0;
    child.stdout.on("data", (chunk: Buffer) => {
      bytes += chunk.length;
    });
    child.on("error", reject);
    child.on("close", (code) => {
      const ms = performance.now() - t0;
      if (code === 0) resolve({ ms, bytes });
      else reject(new Error(`sallyport ${args.join(" ")} exited with ${code}`));
    });
  });
}

/**
 * The built CLI as a pipeline runs it: build/cli is built first (so the launcher runs the
 * bundle), the generated model is written to a temporary file, and each call is a child
 * process whose output is read and counted, not kept.
 */
async function cliBenchmark(model: unknown): Promise<{ bundle: boolean; at: string; runs: number; helpStartMs: Spread; exposureAtMs: Spread; exposureAtBytes: number }> {
  await buildCli();
  const bundle = freshBundle(pathToFileURL(`${ROOT}/`)) !== null;
  const dir = mkdtempSync(join(tmpdir(), "sallyport-bench-"));
  const file = join(dir, "model.json");
  writeFileSync(file, JSON.stringify(model));
  spawnSync(process.execPath, [LAUNCHER, "--help"], { stdio: "ignore" }); // warm the file cache
  const help: number[] = [];
  for (let i = 0; i < CLI_RUNS; i++) help.push((await timeCli(["--help"])).ms);
  const at: number[] = [];
  let bytes = 0;
  for (let i = 0; i < CLI_RUNS; i++) {
    const run = await timeCli(["exposure", file, "--at", CLI_AT, "--json"]);
    at.push(run.ms);
    bytes = run.bytes;
  }
  rmSync(dir, { recursive: true, force: true });
  return { bundle, at: CLI_AT, runs: CLI_RUNS, helpStartMs: spread(help), exposureAtMs: spread(at), exposureAtBytes: bytes };
}


const median = (xs: readonly number[]): number => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const currentPeakRssMiB = (): number => process.resourceUsage().maxRSS / 1024;

function validated(rules: number): DeviceModel {
  const parsed = parseModel(generateModel(SEED, rules === BENCH_SIZE.rules ? BENCH_SIZE : benchSize(rules)).model);
  if (!parsed.ok) throw new Error(`benchmark model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  return parsed.model;
}

/**
 * The edit the diff is measured on: the first enabled rule at or after the middle of the
 * list moves to the top (an engineer promoting one rule; everything it can match changes hands).
 */
function oneRuleMove(model: DeviceModel): { after: DeviceModel; moved: { rule: string; from: number; to: number } } {
  const from = model.inboundRules.findIndex((r, i) => i >= Math.floor(model.inboundRules.length / 2) && r.enabled);
  const rules = [...model.inboundRules];
  const [rule] = rules.splice(from, 1);
  rules.unshift(rule);
  return { after: { ...model, inboundRules: rules }, moved: { rule: rule.id, from, to: 0 } };
}

/**
 * The effect of the one-rule move (changeEffect) as a proposal page asks for it, warm: the
 * revision compiled on the current one and both analysed (the repository keeps their findings),
 * so each run is the effect alone. Target ≤ 300 ms (issue 11).
 */
function effectMove(model: DeviceModel, after: DeviceModel): Spread {
  const before = compileModel(model);
  const revised = compileModel(after, { basis: before });
  const known = { before: findings(before), after: findings(revised) };
  const runs = Array.from({ length: DIFF_RUNS }, () => time(() => changeEffect(before, revised, { findings: known, workFrom: ["198.51.100.7"] }))[1]);
  return spread(runs);
}

/** Child process: the one-rule move on the benchmark model, diffed on freshly compiled revisions. */
function diffChild(): void {
  const model = validated(BENCH_SIZE.rules);
  const { after, moved } = oneRuleMove(model);
  const runs: number[] = [];
  let last = diffModels(compileModel(model), compileModel(after));
  for (let i = 0; i < DIFF_RUNS; i++) {
    const before = compileModel(model);
    const revised = compileModel(after);
    const [d, ms] = time(() => diffModels(before, revised));
    runs.push(ms);
    last = d;
  }
  const peak = currentPeakRssMiB();
  // The findings comparison is computed when first read; it is the findings of both revisions.
  const [, findingsMs] = time(() => last.findingsAdded.length + last.findingsResolved.length);
  const result = {
    rules: model.inboundRules.length,
    moved,
    ms: round(median(runs), 1),
    runsMs: runs.map((r) => round(r, 1)),
    peakRssMiB: round(peak, 1),
    changes: last.changes.length,
    lockout: last.lockout.length,
    findingsMs: round(findingsMs, 1),
    findingsPeakRssMiB: round(currentPeakRssMiB(), 1),
    effectMoveMs: effectMove(model, after),
  };
  process.stdout.write(`${JSON.stringify(result)}\n`);
}

/**
 * Child process: one size of the series. Three freshly compiled pairs of revisions are
 * diffed first (compile and diff: the median of the three); the diff's peak RSS is read
 * after the first pair, before anything else has run. Exposure and findings then each run on
 * a fresh compile, so neither is helped by partitions another built; each compiled model is
 * released before the next is made.
 */
function seriesChild(rules: number): void {
  // Warm the code paths on a small model first, so the figures are not the JIT's first pass.
  const small = validated(WARM_UP_RULES);
  for (let i = 0; i < 3; i++) diffModels(compileModel(small), compileModel(oneRuleMove(small).after));
  exposure(compileModel(small));
  findings(compileModel(small));

  const model = validated(rules);
  const entries = model.addresses.reduce((n, a) => n + a.entries.length, 0);
  const { after } = oneRuleMove(model);
  const compileRuns: number[] = [];
  const diffRuns: number[] = [];
  let diffPeak = 0;
  for (let i = 0; i < SERIES_PAIRS; i++) {
    const [before, compileMs] = time(() => compileModel(model));
    const revised = compileModel(after);
    compileRuns.push(compileMs);
    diffRuns.push(time(() => diffModels(before, revised))[1]);
    if (i === 0) diffPeak = currentPeakRssMiB();
  }
  // Each on its own compile, released before the next: one analysed model alive at a time, as when the app analyses a revision.
  const exposureMs = ((device: CompiledModel) => time(() => exposure(device).slices.reduce((n, sl) => n + sl.entries.length, 0))[1])(compileModel(model));
  const findingsMs = ((fresh: CompiledModel) => time(() => findings(fresh))[1])(compileModel(model));
  const result: SeriesRun = {
    rules,
    entries,
    compileMs: round(median(compileRuns), 1),
    exposureMs: round(exposureMs, 1),
    findingsMs: round(findingsMs, 1),
    diffMs: round(median(diffRuns), 1),
    peakRssMiB: round(currentPeakRssMiB(), 1),
    diffPeakRssMiB: round(diffPeak, 1),
  };
  process.stdout.write(`${JSON.stringify(result)}\n`);
}

const FLEET_DEVICES = 500;
const FLEET_RUNS = 5;
const FLEET_TEMPLATES = ["bwc-edge-01", "clf-gw-02", "ngl-core-01", "bwc-edge-v6", "clf-fw-01", "ngl-branch-02"];
const FLEET_ZONES = ["UTC", "Europe/Dublin", "America/Chicago", "Asia/Kolkata", "Australia/Lord_Howe"];

/**
 * 500 demo-size devices built here, not seeded: each a copy of one of the six demo documents
 * with its own name, time zone and outside IPv4 address (RFC 5737 documentation ranges), so
 * every device is compiled on its own and none shares another's partitions.
 */
function fleetModels(count: number): DeviceModel[] {
  const templates = FLEET_TEMPLATES.map((name) => JSON.parse(readFileSync(join(ROOT, "seeders/devices", `${name}.json`), "utf8")) as { device: Record<string, unknown>; interfaces: { role: string; addresses: string[] }[] });
  const rnd = prng(SEED + 5);
  const nets = ["192.0.2", "198.51.100", "203.0.113"];
  return Array.from({ length: count }, (_, i) => {
    const template = templates[i % templates.length];
    const host = `${nets[Math.floor(rnd() * nets.length)]}.${1 + Math.floor(rnd() * 250)}`;
    const interfaces = template.interfaces.map((f) => (f.role !== "wan" ? f : { ...f, addresses: f.addresses.map((a) => (a.includes(":") ? a : `${host}/${a.split("/")[1] ?? "32"}`)) }));
    const input = { ...template, device: { ...template.device, name: `bench-${String(i).padStart(3, "0")}`, timezone: FLEET_ZONES[i % FLEET_ZONES.length] }, interfaces };
    const parsed = parseModel(input);
    // A varied address that clashes with the template (one of its own) falls back to the template's.
    if (parsed.ok) return parsed.model;
    const plain = parseModel({ ...template, device: { ...template.device, name: `bench-${i}` } });
    if (!plain.ok) throw new Error(`demo template invalid: ${JSON.stringify(plain.errors.slice(0, 2))}`);
    return plain.model;
  });
}

interface FleetResult {
  devices: number;
  compileMs: number;
  /** The first fleet reach on freshly compiled models (partitions built on demand). */
  reach500ColdMs: number;
  /** Warm: the same question again, min / median / max of FLEET_RUNS. */
  reach500Ms: Spread;
  /** A /24 block over the fleet, warm. */
  block500Ms: Spread;
  rows: number;
  blockRows: number;
  peakRssMiB: number;
}

/** Child process: fleet reach over 500 demo-size devices, one address and one /24, cold then warm. */
function fleetChild(): void {
  const models = fleetModels(FLEET_DEVICES);
  const [members, compileMs] = time(() => models.map((model, i) => ({ id: `device-${i}`, name: model.device.name, compiled: compileModel(model) })));
  const at = "2026-12-02T10:00:00Z";
  const [first, coldMs] = time(() => fleetReach(members, "203.0.113.7", { at }));
  const warm = Array.from({ length: FLEET_RUNS }, () => time(() => fleetReach(members, "203.0.113.7", { at }))[1]);
  fleetReach(members, "203.0.113.0/24", { at });
  let blockRows = 0;
  const block = Array.from({ length: FLEET_RUNS }, () => {
    const [answer, ms] = time(() => fleetReach(members, "203.0.113.0/24", { at }));
    blockRows = answer.rows.length;
    return ms;
  });
  const result: FleetResult = {
    devices: members.length,
    compileMs: round(compileMs, 1),
    reach500ColdMs: round(coldMs, 1),
    reach500Ms: spread(warm),
    block500Ms: spread(block),
    rows: first.rows.length,
    blockRows,
    peakRssMiB: round(currentPeakRssMiB(), 1),
  };
  process.stdout.write(`${JSON.stringify(result)}\n`);
}

function fleetLines(fleet: FleetResult): string[] {
  return [
    `fleet reach over ${fleet.devices} demo-size devices (compiled in ${fleet.compileMs} ms): first ${fleet.reach500ColdMs} ms, warm (min / median / max of ${FLEET_RUNS}) ${fleet.reach500Ms.min} / ${fleet.reach500Ms.median} / ${fleet.reach500Ms.max} ms, ${fleet.rows} rows   target ≤ 1,000 ms: ${fleet.reach500Ms.median <= 1000 ? "met" : "MISSED"}`,
    `  a /24 block over the fleet, warm: ${fleet.block500Ms.min} / ${fleet.block500Ms.median} / ${fleet.block500Ms.max} ms, ${fleet.blockRows} rows; peak RSS ${fleet.peakRssMiB} MiB`,
  ];
}

/** Runs this script again in a fresh process with one child task and reads its JSON line. */
function child<T>(task: string): T {
  const out = spawnSync(process.execPath, [...process.execArgv, process.argv[1], `--child=${task}`], { encoding: "utf8", maxBuffer: 1 << 24 });
  if (out.status !== 0) throw new Error(`benchmark child ${task} failed (${out.status}): ${out.stderr}`);
  return JSON.parse(out.stdout.trim().split("\n").pop() ?? "") as T;
}

interface DiffResult {
  rules: number;
  moved: { rule: string; from: number; to: number };
  ms: number;
  runsMs: number[];
  peakRssMiB: number;
  changes: number;
  lockout: number;
  findingsMs: number;
  findingsPeakRssMiB: number;
  effectMoveMs: Spread;
}

interface SeriesRun {
  rules: number;
  entries: number;
  compileMs: number;
  exposureMs: number;
  findingsMs: number;
  diffMs: number;
  peakRssMiB: number;
  diffPeakRssMiB: number;
}

type Measure = "compileMs" | "exposureMs" | "findingsMs" | "diffMs" | "peakRssMiB" | "diffPeakRssMiB";
/** One size of the series: medians over its runs, and the runs themselves when there were several. */
type SeriesEntry = SeriesRun & { runs?: Record<Measure, number>[] };

/** Least-squares slope of log(value) against log(rules): value grows about as rules^slope. */
function growthExponent(points: readonly { rules: number; value: number }[]): number | null {
  const usable = points.filter((p) => p.value > 0);
  if (usable.length < 2) return null;
  const xs = usable.map((p) => Math.log(p.rules));
  const ys = usable.map((p) => Math.log(p.value));
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length;
  const my = ys.reduce((a, b) => a + b, 0) / ys.length;
  const sxy = xs.reduce((acc, x, i) => acc + (x - mx) * (ys[i] - my), 0);
  const sxx = xs.reduce((acc, x) => acc + (x - mx) ** 2, 0);
  return round(sxy / sxx, 2);
}

function seriesSizes(): number[] {
  const chosen = process.argv.find((a) => a.startsWith("--series="));
  if (chosen === undefined) return SERIES;
  const sizes = chosen
    .slice("--series=".length)
    .split(",")
    .map((t) => Number(t.trim()));
  if (sizes.length === 0 || sizes.some((n) => !Number.isInteger(n) || n < 1)) throw new Error(`--series takes rule counts, e.g. --series=250,500,1000`);
  return [...new Set(sizes)].sort((a, b) => a - b);
}

function seriesRuns(): number {
  const given = process.argv.find((a) => a.startsWith("--series-runs="));
  const n = given === undefined ? 1 : Number(given.slice("--series-runs=".length));
  if (!Number.isInteger(n) || n < 1) throw new Error("--series-runs takes a positive whole number");
  return n;
}

async function main(): Promise<void> {
  const childTask = process.argv.find((a) => a.startsWith("--child="))?.slice("--child=".length);
  if (childTask === "diff") return diffChild();
  if (childTask === "edits") {
    process.stdout.write(`${JSON.stringify(editBenchmark(validated(BENCH_SIZE.rules)))}\n`);
    return;
  }
  if (childTask?.startsWith("series:")) return seriesChild(Number(childTask.slice("series:".length)));
  if (childTask === "fleet") return fleetChild();
  const asJson = process.argv.includes("--json");
  if (process.argv.includes("--only=fleet")) {
    const fleet = child<FleetResult>("fleet");
    process.stdout.write(asJson ? `${JSON.stringify({ fleet, targets: { fleetReach500Ms: fleet.reach500Ms.median <= 1000 }, node: process.version })}\n` : `${fleetLines(fleet).join("\n")}\n`);
    return;
  }
  const generated = generateModel(SEED, BENCH_SIZE);
  // The CLI first, in child processes, while this process is small and idle (a pipeline's
  // shell is): later this process holds the compiled model and its collector would compete
  // with the child for the two cores.
  const cli = await cliBenchmark(generated.model);
  const [parsed, validateMs] = time(() => parseModel(generated.model));
  if (!parsed.ok) throw new Error(`benchmark model invalid: ${JSON.stringify(parsed.errors.slice(0, 3))}`);
  const model = parsed.model;
  const entryCount = model.addresses.reduce((n, a) => n + a.entries.length, 0);

  // Full exposure on a freshly compiled model (empty caches): every slice, partitions, outcome runs
  // and counts; CIDR lists are rendered when read. Median of EXPOSURE_RUNS fresh compiles.
  const runs: number[] = [];
  let exposureEntries = 0;
  let compileMs = 0;
  let device = compileModel(model);
  for (let i = 0; i < EXPOSURE_RUNS; i++) {
    const [fresh, ms] = time(() => compileModel(model));
    device = fresh;
    if (i === 0) compileMs = ms;
    const [entries, exposureRunMs] = time(() => exposure(device).slices.reduce((n, s) => n + s.entries.length, 0));
    exposureEntries = entries;
    runs.push(exposureRunMs);
  }
  const exposureMs = [...runs].sort((a, b) => a - b)[Math.floor(runs.length / 2)];

  // Findings on a freshly compiled model (the exposure, first-match and witness work included),
  // FINDINGS_RUNS times: min / median / max.
  const findingsRuns: number[] = [];
  let findingsCount = 0;
  for (let i = 0; i < FINDINGS_RUNS; i++) {
    const fresh = compileModel(model);
    const [list, ms] = time(() => findings(fresh));
    findingsCount = list.length;
    findingsRuns.push(ms);
  }
  const findingsSorted = [...findingsRuns].sort((a, b) => a - b);
  const findingsMs = { min: round(findingsSorted[0], 1), median: round(findingsSorted[Math.floor(findingsSorted.length / 2)], 1), max: round(findingsSorted[findingsSorted.length - 1], 1), count: findingsCount };

  // Trace per probe, the full public API (text parsing, time zone, layer details).
  const probes = benchProbes(model, generated.sampleSources, TRACE_PROBES, SEED + 1);
  const inputs = probes.map((p) => ({ from: p.from, interface: p.interface, service: p.service, at: p.atMs }));
  // First pass: partitions outside the exposure map (other ports, other destinations) are built on demand.
  const [, coldMs] = time(() => {
    for (const p of inputs) trace(device, p);
  });
  const traceColdUs = (coldMs * 1000) / probes.length;
  const [, traceMs] = time(() => {
    for (const p of inputs) trace(device, p);
  });
  const traceUs = (traceMs * 1000) / probes.length;

  // The naive evaluator on the same probes, same run.
  const naiveUs = naiveMicrosecondsPerProbe(model, probes.slice(0, NAIVE_PROBES));

  // Batch lookups: IPv4 sources classified against compiled (interface, address, service, slice) partitions.
  // Every IPv4 cell of the map, each with its full rule partition (no shortcut for silent services).
  const cells = device.week.slices
    .flatMap((_, slice) => exposureCells(device, slice).map((c) => device.entry(c.iface, c.to, c.cls, slice)))
    .filter((p) => p.family === 4);
  const rnd = prng(SEED + 2);
  const values = new Float64Array(1 << 16).map(() => Math.floor(rnd() * 4294967296));
  let checksum = 0;
  const [, lookupMs] = time(() => {
    const batch = values.length;
    for (let done = 0, k = 0; done < LOOKUPS; done += batch, k++) {
      const cell = cells[k % cells.length];
      for (let i = 0; i < batch; i++) checksum += device.lookupIPv4(cell, values[i]);
    }
  });
  const lookupsPerSecond = LOOKUPS / (lookupMs / 1000);
  const peakRssMiB = process.resourceUsage().maxRSS / 1024;

  // Each of the following runs in its own fresh process (one after another, never in parallel).
  const diff = child<DiffResult>("diff");
  const edits = child<Record<string, EditTiming>>("edits");
  const fleet = child<FleetResult>("fleet");
  const sizes = process.argv.includes("--no-series") ? [] : seriesSizes();
  const repeat = seriesRuns();
  const series = sizes.map((rules): SeriesEntry => {
    const runsOfSize = Array.from({ length: repeat }, () => child<SeriesRun>(`series:${rules}`));
    const of = (k: Measure): number => median(runsOfSize.map((r) => r[k]));
    const measures = (r: Record<Measure, number>): Record<Measure, number> => ({
      compileMs: r.compileMs,
      exposureMs: r.exposureMs,
      findingsMs: r.findingsMs,
      diffMs: r.diffMs,
      peakRssMiB: r.peakRssMiB,
      diffPeakRssMiB: r.diffPeakRssMiB,
    });
    const medians = measures({ compileMs: of("compileMs"), exposureMs: of("exposureMs"), findingsMs: of("findingsMs"), diffMs: of("diffMs"), peakRssMiB: of("peakRssMiB"), diffPeakRssMiB: of("diffPeakRssMiB") });
    return { rules, entries: runsOfSize[0].entries, ...medians, ...(repeat > 1 ? { runs: runsOfSize.map(measures) } : {}) };
  });
  const growth =
    series.length < 2
      ? null
      : {
          compile: growthExponent(series.map((e) => ({ rules: e.rules, value: e.compileMs }))),
          exposure: growthExponent(series.map((e) => ({ rules: e.rules, value: e.exposureMs }))),
          findings: growthExponent(series.map((e) => ({ rules: e.rules, value: e.findingsMs }))),
          diff: growthExponent(series.map((e) => ({ rules: e.rules, value: e.diffMs }))),
          peakRss: growthExponent(series.map((e) => ({ rules: e.rules, value: e.peakRssMiB }))),
        };
  const largest = series.find((e) => e.rules === 16000);

  const result = {
    seed: SEED,
    model: {
      interfaces: model.interfaces.length,
      inboundRules: model.inboundRules.length,
      addressObjects: model.addresses.length,
      addressEntries: entryCount,
      addressGroups: model.addressGroups.length,
      accounts: model.accounts.length,
      schedules: model.schedules.length,
      slices: device.week.slices.length,
      exposureEntries,
    },
    validateMs: round(validateMs, 1),
    compileMs: round(compileMs, 1),
    fullExposureMs: round(exposureMs, 1),
    fullExposureRunsMs: runs.map((r) => round(r, 1)),
    findingsMs,
    edits,
    traceUsPerProbe: round(traceUs),
    traceFirstPassUsPerProbe: round(traceColdUs),
    naiveUsPerProbe: round(naiveUs),
    speedup: round(naiveUs / traceUs, 1),
    lookupsPerSecond: Math.round(lookupsPerSecond),
    peakRssMiB: round(peakRssMiB, 1),
    cli,
    diff,
    fleet,
    series,
    growth,
    targets: {
      fullExposureMs: exposureMs <= 100,
      findingsMs: findingsMs.median <= 150,
      editReanalysisMs: Object.values(edits).every((e) => e.reanalysisMs.median <= 20),
      speedup: naiveUs / traceUs >= 100,
      lookupsPerSecond: lookupsPerSecond >= 1_000_000,
      peakRssMiB: peakRssMiB <= 512,
      cliHelpStartMs: cli.helpStartMs.median <= 200,
      cliExposureAtMs: cli.exposureAtMs.median <= 1000,
      diffMs: diff.ms <= 100,
      diffPeakRssMiB: diff.peakRssMiB <= 400,
      fleetReach500Ms: fleet.reach500Ms.median <= 1000,
      ...(largest === undefined
        ? {}
        : {
            at16000: {
              compileMs: largest.compileMs <= 2000,
              findingsMs: largest.findingsMs <= 3000,
              diffMs: largest.diffMs <= 3000,
              peakRssMiB: largest.peakRssMiB <= 1024,
              diffPeakRssMiB: largest.diffPeakRssMiB <= 1024,
            },
          }),
    },
    checksum,
    node: process.version,
  };
  if (process.argv.includes("--write-chart") && series.length > 0) {
    const runsNote = repeat > 1 ? `median of ${repeat} runs per size` : "one run per size";
    mkdirSync(dirname(CHART), { recursive: true });
    writeFileSync(CHART, scalingChart(series, `npm run bench, ${runsNote}, fresh process per size, 2-core machine, Node ${process.version}`));
  }
  if (asJson) {
    process.stdout.write(`${JSON.stringify(result)}\n`);
    return;
  }
  const m = result.model;
  process.stdout.write(
    [
      `model: ${m.interfaces} interfaces, ${m.inboundRules} inbound rules, ${m.addressObjects} address objects (${m.addressEntries} entries), ` +
        `${m.addressGroups} groups, ${m.accounts} accounts, ${m.schedules} schedules → ${m.slices} slices, ${m.exposureEntries} exposure entries`,
      `validate ${result.validateMs} ms, compile ${result.compileMs} ms`,
      `full exposure (all slices; median of ${EXPOSURE_RUNS} fresh compiles: ${result.fullExposureRunsMs.join(", ")}): ${result.fullExposureMs} ms   target ≤ 100 ms: ${result.targets.fullExposureMs ? "met" : "MISSED"}`,
      `findings (${result.findingsMs.count}, fresh compile each; min / median / max of ${FINDINGS_RUNS}): ${result.findingsMs.min} / ${result.findingsMs.median} / ${result.findingsMs.max} ms   target ≤ 150 ms: ${result.targets.findingsMs ? "met" : "MISSED"}`,
      ...Object.entries(result.edits).map(
        ([name, e]) =>
          `edit "${name}" → re-analysis (min / median / max of ${EDIT_RUNS}): ${e.reanalysisMs.min} / ${e.reanalysisMs.median} / ${e.reanalysisMs.max} ms ` +
          `(compile ${e.compileMs}, exposure counts ${e.exposureMs}, findings ${e.findingsMs}; partitions swept ${e.partitions.swept}, derived ${e.partitions.derived}, updated ${e.partitions.updated}, re-used ${e.partitions.reused})   target ≤ 20 ms: ${e.reanalysisMs.median <= 20 ? "met" : "MISSED"}`,
      ),
      `trace: ${result.traceUsPerProbe} µs/probe (first pass, building partitions on demand: ${result.traceFirstPassUsPerProbe} µs); naive: ${result.naiveUsPerProbe} µs/probe; speedup ${result.speedup}×   target ≥ 100×: ${result.targets.speedup ? "met" : "MISSED"}`,
      `batch lookups: ${result.lookupsPerSecond.toLocaleString("en")} /s   target ≥ 1,000,000: ${result.targets.lookupsPerSecond ? "met" : "MISSED"}`,
      `peak RSS: ${result.peakRssMiB} MiB   target ≤ 512 MiB: ${result.targets.peakRssMiB ? "met" : "MISSED"}`,
      `CLI (${cli.bundle ? "bundle" : "TypeScript sources: the bundle was not fresh"}, ${cli.runs} runs, min / median / max): --help ${cli.helpStartMs.min} / ${cli.helpStartMs.median} / ${cli.helpStartMs.max} ms   target ≤ 200 ms: ${result.targets.cliHelpStartMs ? "met" : "MISSED"}`,
      `CLI exposure --at ${cli.at} --json (${(cli.exposureAtBytes / 1_048_576).toFixed(1)} MiB of JSON): ${cli.exposureAtMs.min} / ${cli.exposureAtMs.median} / ${cli.exposureAtMs.max} ms   target ≤ 1,000 ms: ${result.targets.cliExposureAtMs ? "met" : "MISSED"}`,
      `diff, rule ${diff.moved.rule} moved from position ${diff.moved.from} to the top (median of ${DIFF_RUNS}: ${diff.runsMs.join(", ")}): ${diff.ms} ms, ` +
        `${diff.changes} changes, peak RSS ${diff.peakRssMiB} MiB   targets ≤ 100 ms: ${result.targets.diffMs ? "met" : "MISSED"}, ≤ 400 MiB: ${result.targets.diffPeakRssMiB ? "met" : "MISSED"}`,
      `  reading its findings comparison (findings of both revisions): ${diff.findingsMs} ms, peak RSS then ${diff.findingsPeakRssMiB} MiB`,
      `  its effect for a reviewer, warm (min / median / max of ${DIFF_RUNS}): ${diff.effectMoveMs.min} / ${diff.effectMoveMs.median} / ${diff.effectMoveMs.max} ms   target ≤ 300 ms: ${diff.effectMoveMs.median <= 300 ? "met" : "MISSED"}`,
      ...fleetLines(fleet),
      ...(series.length === 0
        ? []
        : [
            "",
            "rules    entries   compile ms  exposure ms  findings ms   diff ms  peak RSS MiB  diff peak MiB",
            ...series.map((e) =>
              [e.rules, e.entries, e.compileMs, e.exposureMs, e.findingsMs, e.diffMs, e.peakRssMiB, e.diffPeakRssMiB]
                .map((v, i) => String(v).padStart(i === 0 ? 5 : i === 1 ? 10 : 12))
                .join(" "),
            ),
            growth === null
              ? ""
              : `growth exponents (time ∝ rules^k): compile ${growth.compile}, exposure ${growth.exposure}, findings ${growth.findings}, diff ${growth.diff}; peak RSS ${growth.peakRss}`,
          ]),
      "",
    ].join("\n"),
  );
}

await main();
