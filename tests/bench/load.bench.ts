// Load benchmark (issue 14, docs/decisions/018): the demo organisation plus a second organisation
// of many benchmark-size devices, served as `npm start` serves them (server/launch.ts: honours
// WEB_CONCURRENCY and JOB_WORKERS), driven over HTTP (sign-in through fetch; the measured requests through one keep-alive agent per session, as a browser).
//   npm run bench:load                         full run: 500 devices, 100 requests/s for 60 s
//   npm run bench:load -- --json               one JSON object (keys below)
//   npm run bench:load -- --devices=20 --duration=5 --rate=20 --sessions=20 --closed-seconds=3   a smoke run
//   … --profile-server=DIR                     every server process writes a CPU profile into DIR
//   … --closed-routes=fleet,traceApi           the closed loop on those routes only
// Phases:
//  1. open loop — `rate` requests a second for `duration` seconds, each started on schedule whether
//     or not earlier ones finished, spread over `sessions` signed-in demo sessions: the demo fleet
//     page, a device's trace page and the trace JSON route, in equal shares; *meanwhile* ten users
//     of the large organisation load its fleet page again and again (closed loop).
//  2. closed loop — per route, `connections` requests kept in flight for `closed-seconds`: the
//     maximum throughput the server sustains on it.
// JSON keys: { config: {devices, modelSize, rate, durationSeconds, sessions, connections, closedSeconds,
// webConcurrency, jobWorkers, admissionConcurrency}, machine: {naiveUsPerProbe (the machine's speed on the
// day: tests/bench/machine-speed.ts)}, seedSeconds, openLoop: { overall, byRoute: {fleet, tracePage, traceApi},
// heavyFleet, clientCpuCores, serverCpuCores }, closedLoop: { fleet, tracePage, traceApi, heavyFleet } }, where every latency block is
// { count, errors, errorKinds (only when errors: HTTP status or fetch failure code → count), p50Ms, p95Ms, p99Ms, maxMs,
// turnWaitP50Ms, turnWaitP95Ms (how long the answers waited for a turn in the web process: the server
// says so in Server-Timing "turn" when started with ADMISSION_TIMING=1, as here) } and every closed-loop block adds requestsPerSecond, clientCpuCores (the load generator's own CPU
// over that phase, in cores: it shares the machine with the server) and serverCpuMsPerRequest (the
// server processes' CPU over the phase divided by its requests: the figure a busy neighbour moves least).
// Targets (issue 14, 2-core machine): open-loop p95 ≤ 250 ms with 0 errors; the demo trace JSON
// route's p95 ≤ 50 ms while the large fleet page is being loaded.
// Needs the build and its own database: `bash server/setup/bench-load.sh` prepares both; the large
// organisation is seeded once and kept between runs (SALLYPORT_LOAD_DB_NAME names the database).
import { spawn } from "node:child_process";
import http from "node:http";
import { performance } from "node:perf_hooks";
import { Membership, Organisation, Site, User } from "#models/index.ts";
import { getDatabase } from "#server/db/database.server.ts";
import { deviceRevisions } from "#server/devices/index.ts";
import { BENCH_SIZE, generateModel, prng, type ModelSize } from "#server/engine/testing/generate-model.ts";
import { revisionAnalysisQueue } from "#server/jobs/revision-analysis.server.ts";
import { startJobWorking, stopJobWorking } from "#server/jobs/worker.server.ts";
import { createDevice } from "#server/services/devices.server.ts";
import { createUserWithOrganisation } from "#server/services/organisations.server.ts";
import { findFreePort } from "../support/free-port.ts";
import { waitUntilAnswering } from "../support/answering.ts";
import { machineSpeed } from "./machine-speed.ts";
import { serverCpuMs, signIn } from "./server-processes.ts";

const argument = (name: string, fallback: number) => {
  const given = process.argv.find((value) => value.startsWith(`--${name}=`));
  const parsed = given ? Number(given.slice(name.length + 3)) : fallback;
  if (!Number.isFinite(parsed) || parsed <= 0) throw new Error(`--${name} must be a positive number`);
  return parsed;
};
const json = process.argv.includes("--json");
const config = {
  devices: argument("devices", 500),
  modelSize: process.argv.includes("--demo-size") ? "demo" : "bench",
  rate: argument("rate", 100),
  durationSeconds: argument("duration", 60),
  sessions: argument("sessions", 200),
  heavyUsers: argument("heavy-users", 10),
  connections: argument("connections", 32),
  closedSeconds: argument("closed-seconds", 15),
  webConcurrency: Number(process.env.WEB_CONCURRENCY ?? 1),
  jobWorkers: Number(process.env.JOB_WORKERS ?? 0),
  admissionConcurrency: Number(process.env.ADMISSION_CONCURRENCY ?? 1),
};
const LARGE_ORGANISATION = "Tidewater Freight (load benchmark)";
const LARGE_OWNER = "load-owner@tidewater.example";
const LARGE_PASSWORD = "load benchmark tide lantern 7";
const DEMO_ENGINEER = ["priya.nandakumar@lanternfield.example", "demo-password-engineer"] as const;
/** Smaller models for a quick run (--demo-size): about the demo devices' size. */
const DEMO_SIZE: ModelSize = { ...BENCH_SIZE, interfaces: 4, rules: 30, addressObjects: 20, entries: 60, groups: 4, accounts: 5, schedules: 2 };
const log = (line: string) => {
  if (!json) console.log(line);
};

type Latencies = { count: number; errors: number; errorKinds?: Record<string, number>; p50Ms: number; p95Ms: number; p99Ms: number; maxMs: number; turnWaitP50Ms?: number; turnWaitP95Ms?: number };
class Recorder {
  readonly times: number[] = [];
  /** How long each answer waited for its turn in the web process (its Server-Timing "turn"). */
  readonly turnWaits: number[] = [];
  errors = 0;
  /** What went wrong, counted: an HTTP status or the fetch failure's code. */
  readonly errorKinds: Record<string, number> = {};
  add(ms: number, ok: boolean | string, turnWait?: number) {
    this.times.push(ms);
    if (turnWait !== undefined) this.turnWaits.push(turnWait);
    if (ok !== true) {
      this.errors += 1;
      const kind = ok === false ? "failed" : ok;
      this.errorKinds[kind] = (this.errorKinds[kind] ?? 0) + 1;
    }
  }
  summary(): Latencies {
    const percentile = (values: number[]) => {
      const sorted = [...values].sort((a, b) => a - b);
      return (p: number) => (sorted.length ? Math.round(sorted[Math.min(sorted.length - 1, Math.floor(sorted.length * p))] * 10) / 10 : 0);
    };
    const at = percentile(this.times);
    const waitAt = percentile(this.turnWaits);
    return { count: this.times.length, errors: this.errors, ...(this.errors ? { errorKinds: this.errorKinds } : {}), p50Ms: at(0.5), p95Ms: at(0.95), p99Ms: at(0.99), maxMs: at(1), ...(this.turnWaits.length ? { turnWaitP50Ms: waitAt(0.5), turnWaitP95Ms: waitAt(0.95) } : {}) };
  }
}

/** The large organisation with its devices (made once; later runs add only what is missing). */
async function seedLargeOrganisation(): Promise<string> {
  let owner = await User.findOne({ where: { email: LARGE_OWNER } });
  if (!owner) owner = (await createUserWithOrganisation({ email: LARGE_OWNER, name: "Load Owner", password: LARGE_PASSWORD, organisationName: LARGE_ORGANISATION }, "127.0.0.1")).user;
  const membership = await Membership.findOne({ where: { userId: owner.id }, include: [{ model: Organisation, as: "organisation", required: true }] });
  const organisation = (membership as Membership & { organisation: Organisation }).organisation;
  const [site] = await Site.findOrCreate({ where: { organisationId: organisation.id, name: "Tidewater depots" }, defaults: { organisationId: organisation.id, name: "Tidewater depots", customer: "", location: "" } });
  const existing = (await deviceRevisions.currentRecords(organisation.id)).length;
  const size = config.modelSize === "demo" ? DEMO_SIZE : BENCH_SIZE;
  for (let index = existing; index < config.devices; index++) {
    const generated = generateModel(40_000 + index, size).model;
    const document = { ...generated, device: { ...generated.device, name: `tidewater-${String(index + 1).padStart(3, "0")}` } };
    await createDevice(organisation.id, site.id, document, { userId: owner.id, email: owner.email, clientAddress: "127.0.0.1" }, "Load benchmark device");
    if ((index + 1) % 25 === 0) {
      log(`  seeded ${index + 1} / ${config.devices} devices; waiting for their analysis`);
      await revisionAnalysisQueue.idle(30 * 60_000);
    }
  }
  await revisionAnalysisQueue.idle(30 * 60_000);
  return organisation.slug;
}

// Connections are held as browsers hold them: each signed-in session is one browser with its
// own keep-alive agent of at most six connections (what browsers open per HTTP/1.1 origin),
// kept open between requests; a request beyond six waits in the client, and that wait counts
// in its time (the clock starts when it is due). Node's fetch shares one unbounded pool
// instead: once the server fell behind the open loop opened a new connection per request in
// flight — thousands — overflowing the listen backlog, and measured connect time-outs and
// resets (UND_ERR_CONNECT_TIMEOUT, ECONNRESET) that no browser population of this size causes.
const agents = new Map<string, http.Agent>();
function agentOf(cookie: string): http.Agent {
  let agent = agents.get(cookie);
  if (!agent) {
    agent = new http.Agent({ keepAlive: true, maxSockets: 6 });
    agents.set(cookie, agent);
  }
  return agent;
}

/** The time taken and true, or what went wrong: the status, or the failure's code. */
async function timed(base: string, path: string, cookie: string): Promise<[number, true | string, number | undefined]> {
  const start = performance.now();
  let turnWait: number | undefined;
  const outcome = await new Promise<true | string>((resolve) => {
    const request = http.get(`${base}${path}`, { agent: agentOf(cookie), headers: { Cookie: cookie, "Accept-Encoding": "br, gzip" } }, (response) => {
      const waited = /(?:^|,\s*)turn;dur=([\d.]+)/.exec(String(response.headers["server-timing"] ?? ""));
      if (waited) turnWait = Number(waited[1]);
      response.on("data", () => undefined);
      response.on("end", () => resolve((response.statusCode ?? 0) >= 200 && (response.statusCode ?? 0) < 300 ? true : `HTTP ${response.statusCode}`));
      response.on("error", (error: NodeJS.ErrnoException) => resolve(error.code ?? error.message));
    });
    request.on("error", (error: NodeJS.ErrnoException) => resolve(error.code ?? error.message));
  });
  return [performance.now() - start, outcome, turnWait];
}

/**
 * The load generator's own CPU from now until the returned function is called, in cores (CPU
 * seconds per second): on two cores the client competes with the server it measures, so its
 * share says how much of the machine the figures had.
 */
function clientCpu(): () => number {
  const cpu = process.cpuUsage();
  const start = performance.now();
  return () => {
    const used = process.cpuUsage(cpu);
    return Math.round(((used.user + used.system) / 1000 / (performance.now() - start)) * 100) / 100;
  };
}


async function main() {
  // The machine's speed first, while nothing of the benchmark runs yet (tests/bench/machine-speed.ts).
  const machine = machineSpeed();
  getDatabase();
  // This process works the analysis jobs it queues while seeding.
  await startJobWorking();
  const seedStart = performance.now();
  log(`Seeding ${config.devices} ${config.modelSize}-size devices in "${LARGE_ORGANISATION}" (kept between runs)…`);
  const largeSlug = await seedLargeOrganisation();
  const seedSeconds = Math.round((performance.now() - seedStart) / 100) / 10;
  await stopJobWorking();
  const demo = await Organisation.findOne({ where: { slug: "lanternfield" } });
  if (!demo) throw new Error("the demo organisation is missing: run through server/setup/bench-load.sh");
  const demoDevices = (await deviceRevisions.current(demo.id)).map(({ device, effective }) => ({ id: device.id, interfaces: effective.interfaces.map((entry) => entry.name) }));

  const port = await findFreePort();
  const base = `http://127.0.0.1:${port}`;
  // --profile-server=DIR: each server process writes a CPU profile there when it stops (node --cpu-prof).
  const profileDirectory = process.argv.find((value) => value.startsWith("--profile-server="))?.slice("--profile-server=".length);
  const server = spawn(process.execPath, [...(profileDirectory ? ["--cpu-prof", `--cpu-prof-dir=${profileDirectory}`] : []), "--import", "tsx", "server/launch.ts"], {
    env: { ...process.env, NODE_ENV: "production", PORT: String(port), APP_ORIGIN: base, TRUST_PROXY: "1", ADMISSION_TIMING: "1" },
    stdio: ["ignore", "ignore", "inherit"],
  });
  try {
    // Three processes compile the server on start: on a loaded 2-core machine that took over a minute.
    await waitUntilAnswering(base, 180_000);
    log(`Signing in ${config.sessions} demo sessions and ${config.heavyUsers} of the large organisation…`);
    // Each session from its own documentation address (RFC 5737 TEST-NET-3), so the per-address sign-in throttle is not what is measured.
    const address = (index: number) => `203.0.113.${1 + (index % 250)}`;
    const sessions: string[] = [];
    for (let index = 0; index < config.sessions; index++) sessions.push(await signIn(base, DEMO_ENGINEER[0], DEMO_ENGINEER[1], address(index)));
    const heavySessions: string[] = [];
    for (let index = 0; index < config.heavyUsers; index++) heavySessions.push(await signIn(base, LARGE_OWNER, LARGE_PASSWORD, `198.51.100.${1 + index}`));

    const random = prng(14);
    const services = ["https", "ssh", "http", "ping", "snmp"];
    const probe = () => {
      const device = demoDevices[Math.floor(random() * demoDevices.length)];
      const query = new URLSearchParams({
        from: `${1 + Math.floor(random() * 222)}.${Math.floor(random() * 256)}.${Math.floor(random() * 256)}.${1 + Math.floor(random() * 254)}`,
        interface: device.interfaces[Math.floor(random() * device.interfaces.length)] ?? "",
        service: services[Math.floor(random() * services.length)],
      });
      return { device, query };
    };
    const routes = {
      fleet: () => "/o/lanternfield/devices",
      tracePage: () => {
        const { device, query } = probe();
        return `/o/lanternfield/devices/${device.id}/analysis?${query}`;
      },
      traceApi: () => {
        const { device, query } = probe();
        return `/o/lanternfield/devices/${device.id}/api/trace?${query}`;
      },
      heavyFleet: () => `/o/${largeSlug}/devices`,
    };
    type RouteName = keyof typeof routes;
    const mix: RouteName[] = ["fleet", "tracePage", "traceApi"];

    // Warm-up: every page once, so compile-on-first-use is not counted as load.
    for (const name of [...mix, "heavyFleet"] as RouteName[]) await timed(base, routes[name](), name === "heavyFleet" ? heavySessions[0] : sessions[0]);

    log(`Open loop: ${config.rate} requests/s for ${config.durationSeconds} s over ${config.sessions} sessions, with ${config.heavyUsers} users loading the large fleet page…`);
    const byRoute: Record<string, Recorder> = { fleet: new Recorder(), tracePage: new Recorder(), traceApi: new Recorder() };
    const overall = new Recorder();
    const heavy = new Recorder();
    let running = true;
    const heavyLoops = heavySessions.map(async (cookie) => {
      while (running) {
        const [ms, ok, turnWait] = await timed(base, routes.heavyFleet(), cookie);
        heavy.add(ms, ok, turnWait);
      }
    });
    const inFlight: Array<Promise<void>> = [];
    const total = Math.round(config.rate * config.durationSeconds);
    const openClient = clientCpu();
    const openServerCpu = serverCpuMs(server.pid ?? 0);
    const started = performance.now();
    for (let index = 0; index < total; index++) {
      // Open loop: the next request starts on its schedule, not when an earlier one ends.
      const due = started + (index * 1000) / config.rate;
      const wait = due - performance.now();
      if (wait > 0) await new Promise((resolve) => setTimeout(resolve, wait));
      const name = mix[index % mix.length];
      inFlight.push(
        timed(base, routes[name](), sessions[index % sessions.length]).then(([ms, ok, turnWait]) => {
          byRoute[name].add(ms, ok, turnWait);
          overall.add(ms, ok, turnWait);
        }),
      );
    }
    await Promise.all(inFlight);
    running = false;
    await Promise.all(heavyLoops);
    const openLoop = { overall: overall.summary(), byRoute: Object.fromEntries(Object.entries(byRoute).map(([name, recorder]) => [name, recorder.summary()])), heavyFleet: heavy.summary(), clientCpuCores: openClient(), serverCpuCores: Math.round((serverCpuMs(server.pid ?? 0) - openServerCpu) / (performance.now() - started) * 100) / 100 };

    log(`Closed loop: ${config.connections} requests in flight per route for ${config.closedSeconds} s each…`);
    const closedLoop: Record<string, Latencies & { requestsPerSecond: number; clientCpuCores: number; serverCpuMsPerRequest: number }> = {};
    // --closed-routes=fleet,traceApi: only those (to profile one route).
    const closedRoutes = process.argv.find((value) => value.startsWith("--closed-routes="))?.slice("--closed-routes=".length).split(",");
    for (const name of [...mix, "heavyFleet"] as RouteName[]) {
      if (closedRoutes && !closedRoutes.includes(name)) continue;
      const recorder = new Recorder();
      const client = clientCpu();
      const serverCpu = serverCpuMs(server.pid ?? 0);
      const start = performance.now();
      const end = start + config.closedSeconds * 1000;
      const cookies = name === "heavyFleet" ? heavySessions : sessions;
      await Promise.all(
        Array.from({ length: config.connections }, async (_, connection) => {
          while (performance.now() < end) {
            const [ms, ok, turnWait] = await timed(base, routes[name](), cookies[connection % cookies.length]);
            recorder.add(ms, ok, turnWait);
          }
        }),
      );
      const seconds = (performance.now() - start) / 1000;
      closedLoop[name] = { ...recorder.summary(), requestsPerSecond: Math.round((recorder.times.length / seconds) * 10) / 10, clientCpuCores: client(), serverCpuMsPerRequest: Math.round(((serverCpuMs(server.pid ?? 0) - serverCpu) / Math.max(1, recorder.times.length)) * 10) / 10 };
    }

    const result = { config, machine, seedSeconds, openLoop, closedLoop };
    if (json) {
      console.log(JSON.stringify(result));
    } else {
      const line = (label: string, block: Latencies) => console.log(`  ${label}: ${block.count} requests, ${block.errors} errors — p50 ${block.p50Ms} / p95 ${block.p95Ms} / p99 ${block.p99Ms} / max ${block.maxMs} ms${block.turnWaitP50Ms === undefined ? "" : `; waiting for a turn p50 ${block.turnWaitP50Ms} / p95 ${block.turnWaitP95Ms} ms`}`);
      console.log(`Machine: the naive evaluator took ${machine.naiveUsPerProbe} µs a probe (tests/bench/machine-speed.ts)`);
      console.log(`Open loop (${config.rate}/s, ${config.durationSeconds} s; WEB_CONCURRENCY=${config.webConcurrency}, JOB_WORKERS=${config.jobWorkers}, ADMISSION_CONCURRENCY=${config.admissionConcurrency}):`);
      line("all", openLoop.overall);
      for (const [name, block] of Object.entries(openLoop.byRoute)) line(name, block);
      line(`large fleet page (${config.heavyUsers} users, closed loop)`, openLoop.heavyFleet);
      console.log(`  CPU: server ${openLoop.serverCpuCores} cores, load generator ${openLoop.clientCpuCores} cores`);
      console.log(`  targets: p95 ≤ 250 ms and 0 errors: ${openLoop.overall.p95Ms <= 250 && openLoop.overall.errors === 0 ? "met" : "MISSED"}; demo trace JSON p95 ≤ 50 ms meanwhile: ${openLoop.byRoute.traceApi.p95Ms <= 50 ? "met" : "MISSED"}`);
      console.log(`Closed loop (${config.connections} in flight):`);
      for (const [name, block] of Object.entries(closedLoop)) console.log(`  ${name}: ${block.requestsPerSecond} requests/s, p95 ${block.p95Ms} ms, ${block.errors} errors, server CPU ${block.serverCpuMsPerRequest} ms/request, load generator ${block.clientCpuCores} cores`);
    }
  } finally {
    for (const agent of agents.values()) agent.destroy();
    server.kill("SIGTERM");
    await getDatabase().close();
  }
}

await main();
