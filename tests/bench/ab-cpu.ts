// A/B benchmark of the web server's CPU per request: two checkouts (say, main and a branch), each
// with its build, served side by side on one database, one route asked of each in turn —
// A, B, B, A, A, B… — and each server's CPU time per request read from /proc. On a shared
// machine wall times follow the neighbours' load; two servers asked alternately share it, so
// their ratio holds where a before/after pair of runs does not (decision 029 measured this way).
//   npm run bench:ab -- --a=/work/wt/old --b=. --route=api [--requests=400] [--rounds=5] [--json]
// Routes: fleet (the demo fleet page), trace (a demo device's trace page with a probe), api (its
// trace JSON route), large-fleet (the load benchmark's 500-device organisation: run
// `npm run bench:load` once to seed it). Each checkout needs `npm run build` (its own
// node_modules or a link to one). Linux only (/proc).
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { findFreePort } from "../support/free-port.ts";
import { waitUntilAnswering } from "../support/answering.ts";
import { machineSpeed } from "./machine-speed.ts";
import { serverCpuMs, signIn } from "./server-processes.ts";

const ROUTES = ["fleet", "trace", "api", "large-fleet"] as const;
type RouteName = (typeof ROUTES)[number];

const option = (name: string): string | undefined => process.argv.find((value) => value.startsWith(`--${name}=`))?.slice(name.length + 3);
const count = (name: string, fallback: number): number => {
  const value = Number(option(name) ?? fallback);
  if (!Number.isInteger(value) || value < 1) throw new Error(`--${name} must be a whole number of at least 1`);
  return value;
};

type Server = { label: string; base: string; process: ChildProcess; url: string; cookie: string };

async function startServer(label: string, checkout: string, route: RouteName): Promise<Server> {
  const port = await findFreePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, ["--import", "tsx", "server/launch.ts"], {
    cwd: checkout,
    env: { ...process.env, NODE_ENV: "production", PORT: String(port), APP_ORIGIN: base, TRUST_PROXY: "1", WEB_CONCURRENCY: "1", JOB_WORKERS: "0", SALLYPORT_JOBS: "0" },
    stdio: ["ignore", "ignore", "inherit"],
  });
  await waitUntilAnswering(base, 120_000);
  // Each server's sessions from its own documentation address (RFC 5737), so no throttle is shared.
  const address = label === "A" ? "203.0.113.201" : "203.0.113.202";
  if (route === "large-fleet") {
    const cookie = await signIn(base, "load-owner@tidewater.example", "load benchmark tide lantern 7", address);
    return { label, base, process: child, cookie, url: `${base}/o/tidewater-freight-load-benchmark/devices` };
  }
  const cookie = await signIn(base, "priya.nandakumar@lanternfield.example", "demo-password-engineer", address);
  if (route === "fleet") return { label, base, process: child, cookie, url: `${base}/o/lanternfield/devices` };
  const fleet = await (await fetch(`${base}/o/lanternfield/devices`, { headers: { Cookie: cookie } })).text();
  const device = /\/o\/lanternfield\/devices\/([0-9a-f-]{36})/.exec(fleet)?.[1];
  if (!device) throw new Error("no demo device on the fleet page");
  const probe = "from=198.51.100.7&interface=outside&service=ssh";
  const url = route === "api" ? `${base}/o/lanternfield/devices/${device}/api/trace?${probe}` : `${base}/o/lanternfield/devices/${device}/analysis?${probe}`;
  return { label, base, process: child, cookie, url };
}

async function ask(server: Server): Promise<void> {
  const response = await fetch(server.url, { headers: { Cookie: server.cookie, "Accept-Encoding": "br, gzip" } });
  await response.arrayBuffer();
  if (response.status !== 200) throw new Error(`${server.label}: ${server.url} answered ${response.status}`);
}

const spread = (values: readonly number[]) => {
  const sorted = [...values].sort((a, b) => a - b);
  const round = (value: number) => Math.round(value * 100) / 100;
  return { min: round(sorted[0]), median: round(sorted[Math.floor(sorted.length / 2)]), max: round(sorted[sorted.length - 1]) };
};

async function main() {
  const checkoutA = path.resolve(option("a") ?? ".");
  const checkoutB = path.resolve(option("b") ?? ".");
  const route = (option("route") ?? "api") as RouteName;
  if (!ROUTES.includes(route)) throw new Error(`--route must be one of ${ROUTES.join(", ")}`);
  const requests = count("requests", 400);
  const rounds = count("rounds", 5);
  const machine = machineSpeed();
  // One after the other: two servers starting at once race to create the database's roles.
  const a = await startServer("A", checkoutA, route);
  const b = await startServer("B", checkoutB, route);
  try {
    for (let index = 0; index < 30; index++) for (const server of [a, b]) await ask(server);
    const perRequest: Record<"A" | "B", number[]> = { A: [], B: [] };
    const started = performance.now();
    for (let round = 0; round < rounds; round++) {
      const spent = { A: 0, B: 0 };
      for (let index = 0; index < requests; index++) {
        // A B, then B A: neither is always the one asked right after the other.
        for (const server of index % 2 === 0 ? [a, b] : [b, a]) {
          const before = serverCpuMs(server.process.pid ?? 0);
          await ask(server);
          spent[server.label as "A" | "B"] += serverCpuMs(server.process.pid ?? 0) - before;
        }
      }
      perRequest.A.push(spent.A / requests);
      perRequest.B.push(spent.B / requests);
    }
    const result = {
      route,
      machine,
      checkouts: { A: checkoutA, B: checkoutB },
      requests,
      rounds,
      seconds: Math.round((performance.now() - started) / 100) / 10,
      cpuMsPerRequest: { A: spread(perRequest.A), B: spread(perRequest.B) },
      ratioOfMedians: Math.round((spread(perRequest.B).median / spread(perRequest.A).median) * 1000) / 1000,
    };
    if (process.argv.includes("--json")) console.log(JSON.stringify(result));
    else {
      console.log(`${route}: ${rounds} rounds × ${requests} requests each, asked alternately (the naive evaluator ${machine.naiveUsPerProbe} µs a probe)`);
      for (const label of ["A", "B"] as const) {
        const { min, median, max } = result.cpuMsPerRequest[label];
        console.log(`  ${label} ${result.checkouts[label]}: ${min} / ${median} / ${max} ms of CPU a request (min / median / max of the rounds)`);
      }
      console.log(`  B / A (medians): ${result.ratioOfMedians}`);
    }
  } finally {
    a.process.kill("SIGTERM");
    b.process.kill("SIGTERM");
  }
}

await main();
