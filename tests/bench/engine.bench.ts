// Engine benchmark on a seeded synthetic model of realistic large size.
//   npm run bench            readable report
//   npm run bench -- --json  one JSON object
// Targets (2-core machine): full exposure ≤ 500 ms, compiled trace ≥ 100× faster than the
// naive evaluator, ≥ 1,000,000 lookups/s, peak RSS ≤ 512 MiB; the built CLI: `--help` starts
// in ≤ 200 ms, `exposure --at T --json` on the same model finishes in ≤ 1 s (medians).

import { spawn, spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { performance } from "node:perf_hooks";
import { pathToFileURL } from "node:url";
import { buildCli, ROOT } from "#server/cli/build.mjs";
import { freshBundle } from "#server/cli/fresh-bundle.mjs";
import { compileModel, exposure, parseModel, trace } from "#server/engine/index.ts";
import type { DeviceModel } from "#server/engine/index.ts";
import { exposureCells } from "#server/engine/exposure.ts";
import { NaiveEvaluator } from "#server/engine/naive.ts";
import { BENCH_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";

const SEED = 20250301;
const TRACE_PROBES = 20_000;
const NAIVE_PROBES = 400;
const LOOKUPS = 4_000_000;
const EXPOSURE_RUNS = 5;
const START = Date.UTC(2025, 2, 24);
const CLI_RUNS = 5;
/** The instant of the CLI's `exposure --at`: Tuesday 10:00 UTC in the benchmark week. */
const CLI_AT = new Date(START + (24 + 10) * 3_600_000).toISOString();
const LAUNCHER = join(ROOT, "server/cli/sallyport.mjs");

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

interface Probe {
  from: string;
  interface: string;
  service: string;
  atMs: number;
}

function probesFor(model: DeviceModel, sources: readonly string[], count: number, seed: number): Probe[] {
  const rnd = prng(seed);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const services = ["https", "http", "ssh", "telnet", "ping", "snmp", "webconsole", "tcp/8080"];
  return Array.from({ length: count }, () => ({
    from: pick(sources),
    interface: pick(model.interfaces).name,
    service: pick(services),
    atMs: START + Math.floor(rnd() * 7 * 24 * 60) * 60_000,
  }));
}

async function main(): Promise<void> {
  const asJson = process.argv.includes("--json");
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

  // Trace per probe, the full public API (text parsing, time zone, layer details).
  const probes = probesFor(model, generated.sampleSources, TRACE_PROBES, SEED + 1);
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
  const naive = new NaiveEvaluator(model);
  const naiveProbes = probes.slice(0, NAIVE_PROBES);
  const [, naiveMs] = time(() => {
    for (const p of naiveProbes) naive.trace(p);
  });
  const naiveUs = (naiveMs * 1000) / naiveProbes.length;

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
    traceUsPerProbe: round(traceUs),
    traceFirstPassUsPerProbe: round(traceColdUs),
    naiveUsPerProbe: round(naiveUs),
    speedup: round(naiveUs / traceUs, 1),
    lookupsPerSecond: Math.round(lookupsPerSecond),
    peakRssMiB: round(peakRssMiB, 1),
    cli,
    targets: {
      fullExposureMs: exposureMs <= 500,
      speedup: naiveUs / traceUs >= 100,
      lookupsPerSecond: lookupsPerSecond >= 1_000_000,
      peakRssMiB: peakRssMiB <= 512,
      cliHelpStartMs: cli.helpStartMs.median <= 200,
      cliExposureAtMs: cli.exposureAtMs.median <= 1000,
    },
    checksum,
    node: process.version,
  };
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
      `full exposure (all slices; median of ${EXPOSURE_RUNS} fresh compiles: ${result.fullExposureRunsMs.join(", ")}): ${result.fullExposureMs} ms   target ≤ 500 ms: ${result.targets.fullExposureMs ? "met" : "MISSED"}`,
      `trace: ${result.traceUsPerProbe} µs/probe (first pass, building partitions on demand: ${result.traceFirstPassUsPerProbe} µs); naive: ${result.naiveUsPerProbe} µs/probe; speedup ${result.speedup}×   target ≥ 100×: ${result.targets.speedup ? "met" : "MISSED"}`,
      `batch lookups: ${result.lookupsPerSecond.toLocaleString("en")} /s   target ≥ 1,000,000: ${result.targets.lookupsPerSecond ? "met" : "MISSED"}`,
      `peak RSS: ${result.peakRssMiB} MiB   target ≤ 512 MiB: ${result.targets.peakRssMiB ? "met" : "MISSED"}`,
      `CLI (${cli.bundle ? "bundle" : "TypeScript sources: the bundle was not fresh"}, ${cli.runs} runs, min / median / max): --help ${cli.helpStartMs.min} / ${cli.helpStartMs.median} / ${cli.helpStartMs.max} ms   target ≤ 200 ms: ${result.targets.cliHelpStartMs ? "met" : "MISSED"}`,
      `CLI exposure --at ${cli.at} --json (${(cli.exposureAtBytes / 1_048_576).toFixed(1)} MiB of JSON): ${cli.exposureAtMs.min} / ${cli.exposureAtMs.median} / ${cli.exposureAtMs.max} ms   target ≤ 1,000 ms: ${result.targets.cliExposureAtMs ? "met" : "MISSED"}`,
      "",
    ].join("\n"),
  );
}

await main();
