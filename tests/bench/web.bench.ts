// Web benchmark: the trace page's loader and a trace round trip on a benchmark-size device, and
// a proposal's draft edit followed by its refreshed effect headline.
//   npm run bench:web            readable report
//   npm run bench:web -- --json  one JSON object
// Targets (2-core machine): device page loader ≤ 300 ms, trace round trip ≤ 50 ms (medians,
// warm: a revision's compiled model is cached, as it is for an engineer tracing probe after probe);
// a draft edit → refreshed effect headline ≤ 500 ms (issue 11: the edit's POST plus the effect
// JSON the draft editor fetches after it, a one-rule move each time, median); a REST API trace
// call with a bearer token ≤ 20 ms (issue 13, median on loopback: token, rate limit, audit entry and
// the engine's trace included).
// Needs the build and a database: `bash server/setup/bench-web.sh` prepares both.
// JSON: machine {naiveUsPerProbe: the machine's speed on the day, tests/bench/machine-speed.ts}, model, the timings above, targets.
import { spawn } from "node:child_process";
import { performance } from "node:perf_hooks";
import { revisionAnalysisQueue } from "#server/jobs/revision-analysis.server.ts";
import { startJobWorking, stopJobWorking } from "#server/jobs/worker.server.ts";
import { createDevice, saveEdit } from "#server/services/devices.server.ts";
import { moveRule } from "#server/workspace/index.ts";
import { getDatabase } from "#server/db/database.server.ts";
import { ApiToken, Membership, Organisation, Site, User } from "#models/index.ts";
import { createApiToken, revokeApiToken } from "#server/services/api-tokens.server.ts";
import { createProposal } from "#server/services/proposals.server.ts";
import { BENCH_SIZE, generateModel, prng } from "#server/engine/testing/generate-model.ts";
import { findFreePort } from "../support/free-port.ts";
import { waitUntilAnswering } from "../support/answering.ts";
import { machineSpeed } from "./machine-speed.ts";

const json = process.argv.includes("--json");
const LOADER_RUNS = 15;
const TRACE_RUNS = 200;
const API_TRACE_RUNS = 200;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}
function percentile(values: number[], p: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor(sorted.length * p))];
}
const round = (value: number) => Math.round(value * 10) / 10;
const SAVE_RUNS = 5;
const EFFECT_RUNS = 7;

async function main() {
  // The machine's speed first, while nothing of the benchmark runs yet (tests/bench/machine-speed.ts).
  const machine = machineSpeed();
  getDatabase();
  // This process works the analysis jobs it queues, as the web process of `npm start` does.
  await startJobWorking();
  const organisation = await Organisation.findOne({ where: { slug: "lanternfield" } });
  const site = organisation ? await Site.findOne({ where: { organisationId: organisation.id } }) : null;
  if (!organisation || !site) throw new Error("the demo organisation is missing: run the bench through server/setup/bench-web.sh");
  const generated = generateModel(20250301, BENCH_SIZE);
  const document = { ...generated.model, device: { ...generated.model.device, name: `bench-${Date.now().toString(36)}` } };
  const setupStart = performance.now();
  const device = await createDevice(organisation.id, site.id, document, { userId: null, email: "bench@sallyport.invalid", clientAddress: "127.0.0.1" }, "Benchmark model");
  const saveMs = performance.now() - setupStart;
  let analysisStart = performance.now();
  await revisionAnalysisQueue.idle();
  const backgroundAnalysisMs = performance.now() - analysisStart;
  // Saving a one-rule move, as the rules editor does: validate, readable diff, write; the analysis follows in the background.
  const moveTimes: number[] = [];
  for (let run = 0; run < SAVE_RUNS; run++) {
    const start = performance.now();
    await saveEdit(organisation.id, device.id, run + 1, (current) => moveRule(current, current.inboundRules[run].id, current.inboundRules.length), { userId: null, email: "bench@sallyport.invalid", clientAddress: "127.0.0.1" }, "Benchmark move");
    moveTimes.push(performance.now() - start);
  }
  analysisStart = performance.now();
  await revisionAnalysisQueue.idle();
  const lastAnalysisMs = performance.now() - analysisStart;

  const port = await findFreePort();
  const base = `http://127.0.0.1:${port}`;
  const server = spawn(process.execPath, ["--import", "tsx", "server/http/main.ts"], { env: { ...process.env, NODE_ENV: "production", PORT: String(port), APP_ORIGIN: base }, stdio: ["ignore", "ignore", "inherit"] });
  try {
    await waitUntilAnswering(base, 30_000);
    const signIn = await fetch(`${base}/login`, { method: "POST", redirect: "manual", headers: { Origin: base, "Content-Type": "application/x-www-form-urlencoded" }, body: new URLSearchParams({ email: "priya.nandakumar@lanternfield.example", password: "demo-password-engineer" }) });
    const cookie = signIn.headers.getSetCookie().map((line) => line.split(";")[0]).join("; ");
    if (!cookie) throw new Error("sign-in failed");
    const get = async (path: string) => {
      const start = performance.now();
      const response = await fetch(`${base}${path}`, { headers: { Cookie: cookie } });
      await response.arrayBuffer();
      if (!response.ok) throw new Error(`${path}: ${response.status}`);
      return performance.now() - start;
    };
    const page = `/o/lanternfield/devices/${device.id}/analysis`;
    const loaderTimes: number[] = [];
    const documentTimes: number[] = [];
    for (let run = 0; run < LOADER_RUNS; run++) loaderTimes.push(await get(`${page}.data`));
    for (let run = 0; run < 5; run++) documentTimes.push(await get(page));

    const random = prng(7);
    const interfaces = generated.model.interfaces ?? [];
    const services = ["https", "ssh", "http", "ping", "snmp", "telnet"];
    const traceTimes: number[] = [];
    for (let run = 0; run < TRACE_RUNS; run++) {
      const source = `${1 + Math.floor(random() * 222)}.${Math.floor(random() * 256)}.${Math.floor(random() * 256)}.${Math.floor(random() * 256)}`;
      const probe = new URLSearchParams({ from: source, interface: interfaces[Math.floor(random() * interfaces.length)].name, service: services[Math.floor(random() * services.length)], at: "2026-12-02T10:00:00Z" });
      traceTimes.push(await get(`/o/lanternfield/devices/${device.id}/api/trace?${probe}`));
    }
    // The same probes through the REST API with a personal token of the demo engineer (its rate
    // limit raised for the run, so the benchmark measures the call, not the limit).
    const engineer = await User.findOne({ where: { email: "priya.nandakumar@lanternfield.example" } });
    const membership = engineer ? await Membership.findOne({ where: { userId: engineer.id, organisationId: organisation.id } }) : null;
    if (!engineer || !membership) throw new Error("the demo engineer is missing");
    const engineerActor = { userId: engineer.id, email: engineer.email, clientAddress: "127.0.0.1" };
    const made = await createApiToken(organisation.id, { kind: "personal", name: `bench-${Date.now().toString(36)}`, scope: "read", lifetimeDays: 7 }, { ...engineerActor, role: membership.role });
    await ApiToken.update({ ratePerMinute: 100_000 }, { where: { id: made.token.id } });
    const apiRandom = prng(7);
    const apiTraceTimes: number[] = [];
    try {
      for (let run = 0; run < API_TRACE_RUNS; run++) {
        const source = `${1 + Math.floor(apiRandom() * 222)}.${Math.floor(apiRandom() * 256)}.${Math.floor(apiRandom() * 256)}.${Math.floor(apiRandom() * 256)}`;
        const probe = new URLSearchParams({ from: source, interface: interfaces[Math.floor(apiRandom() * interfaces.length)].name, service: services[Math.floor(apiRandom() * services.length)], at: "2026-12-02T10:00:00Z" });
        const start = performance.now();
        const response = await fetch(`${base}/api/v1/devices/${device.id}/trace?${probe}`, { headers: { Authorization: `Bearer ${made.secret}` } });
        await response.arrayBuffer();
        if (!response.ok) throw new Error(`API trace: ${response.status}`);
        apiTraceTimes.push(performance.now() - start);
      }
    } finally {
      await revokeApiToken(made.token.id, engineerActor, null);
    }
    // A draft edit and the refreshed effect headline, as the draft editor does them: the edit's
    // form POST (answered with a redirect), then GET …/effect?summary=1. Each run is a new
    // proposal on the current revision (made untimed), so each measures a one-rule move.
    const author = await User.findOne({ where: { email: "priya.nandakumar@lanternfield.example" } });
    if (!author) throw new Error("the demo engineer is missing");
    const editTimes: number[] = [];
    const effectTimes: number[] = [];
    const roundTrips: number[] = [];
    for (let run = 0; run < EFFECT_RUNS; run++) {
      const proposal = await createProposal(
        { organisationId: organisation.id, deviceId: device.id },
        { title: `Benchmark proposal ${run + 1}`, reason: "", ticket: "", workFrom: "", window: { start: new Date(Date.now() - 3_600_000), end: new Date(Date.now() + 3_600_000) } },
        { kind: "revision" },
        { userId: author.id, email: author.email, name: author.name, role: "engineer", clientAddress: "127.0.0.1" },
      );
      const path = `/o/lanternfield/devices/${device.id}/proposals/${proposal.id}`;
      const ruleId = generated.model.inboundRules?.[10 + run * 7]?.id ?? "";
      const start = performance.now();
      const edit = await fetch(`${base}${path}/draft/rules`, {
        method: "POST",
        redirect: "manual",
        headers: { Cookie: cookie, Origin: base, "Content-Type": "application/x-www-form-urlencoded" },
        body: new URLSearchParams({ intent: "move-rule", ruleId, to: "1", baseRevision: "1" }),
      });
      await edit.arrayBuffer();
      if (edit.status !== 302) throw new Error(`draft edit: ${edit.status}`);
      const edited = performance.now();
      const answer = await fetch(`${base}${path}/effect?summary=1`, { headers: { Cookie: cookie } });
      const body = (await answer.json()) as { proposal?: { draftVersion: number }; effect?: { headline: string } };
      if (!answer.ok || body.proposal?.draftVersion !== 2 || !body.effect?.headline) throw new Error(`effect: ${answer.status} ${JSON.stringify(body).slice(0, 200)}`);
      const done = performance.now();
      editTimes.push(edited - start);
      effectTimes.push(done - edited);
      roundTrips.push(done - start);
    }

    const result = {
      machine,
      model: { interfaces: interfaces.length, inboundRules: generated.model.inboundRules?.length ?? 0, addressObjects: generated.model.addresses?.length ?? 0 },
      saveRevisionMs: round(saveMs),
      saveOneRuleMoveMs: { min: round(Math.min(...moveTimes)), median: round(median(moveTimes)), max: round(Math.max(...moveTimes)) },
      backgroundAnalysisMs: { firstRevision: round(backgroundAnalysisMs), afterMoves: round(lastAnalysisMs) },
      loaderColdMs: round(loaderTimes[0]),
      loaderMedianMs: round(median(loaderTimes.slice(1))),
      loaderP95Ms: round(percentile(loaderTimes.slice(1), 0.95)),
      documentMedianMs: round(median(documentTimes)),
      traceRoundTripMedianMs: round(median(traceTimes)),
      traceRoundTripP95Ms: round(percentile(traceTimes, 0.95)),
      apiTraceMedianMs: round(median(apiTraceTimes)),
      apiTraceP95Ms: round(percentile(apiTraceTimes, 0.95)),
      draftEditToEffectHeadlineMs: { min: round(Math.min(...roundTrips)), median: round(median(roundTrips)), max: round(Math.max(...roundTrips)), editMedian: round(median(editTimes)), effectMedian: round(median(effectTimes)), runs: EFFECT_RUNS },
      targets: { loaderMs: median(loaderTimes.slice(1)) <= 300, traceRoundTripMs: median(traceTimes) <= 50, saveMs: median(moveTimes) <= 300, draftEditToEffectHeadlineMs: median(roundTrips) <= 500, apiTraceMs: median(apiTraceTimes) <= 20 },
    };
    if (json) console.log(JSON.stringify(result));
    else {
      console.log(`machine: the naive evaluator took ${machine.naiveUsPerProbe} µs a probe (tests/bench/machine-speed.ts)`);
      console.log(`benchmark device: ${result.model.inboundRules} inbound rules, ${result.model.addressObjects} address objects, ${result.model.interfaces} interfaces`);
      console.log(`creating the device (validate, write; analysis in the background): ${result.saveRevisionMs} ms`);
      console.log(`saving a one-rule move: min ${result.saveOneRuleMoveMs.min} / median ${result.saveOneRuleMoveMs.median} / max ${result.saveOneRuleMoveMs.max} ms — target ≤ 300 ms: ${result.targets.saveMs ? "met" : "MISSED"}`);
      console.log(`background analysis: first revision ${result.backgroundAnalysisMs.firstRevision} ms, the queued moves ${result.backgroundAnalysisMs.afterMoves} ms`);
      console.log(`trace page loader: cold ${result.loaderColdMs} ms, warm median ${result.loaderMedianMs} ms (p95 ${result.loaderP95Ms}) — target ≤ 300 ms: ${result.targets.loaderMs ? "met" : "MISSED"}`);
      console.log(`trace page document (loader + render): median ${result.documentMedianMs} ms`);
      console.log(`trace round trip: median ${result.traceRoundTripMedianMs} ms (p95 ${result.traceRoundTripP95Ms}) — target ≤ 50 ms: ${result.targets.traceRoundTripMs ? "met" : "MISSED"}`);
      console.log(`REST API trace call (bearer token): median ${result.apiTraceMedianMs} ms (p95 ${result.apiTraceP95Ms}) — target ≤ 20 ms: ${result.targets.apiTraceMs ? "met" : "MISSED"}`);
      const effect = result.draftEditToEffectHeadlineMs;
      console.log(`draft edit → refreshed effect headline (one-rule move, ${effect.runs} runs): min ${effect.min} / median ${effect.median} / max ${effect.max} ms (edit ${effect.editMedian}, effect ${effect.effectMedian}) — target ≤ 500 ms: ${result.targets.draftEditToEffectHeadlineMs ? "met" : "MISSED"}`);
    }
  } finally {
    server.kill("SIGTERM");
    await stopJobWorking();
    await getDatabase().query(`DELETE FROM devices WHERE id = '${device.id}'`);
    await getDatabase().close();
  }
}

await main();
