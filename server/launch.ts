// `npm start`'s processes (docs/decisions/018): WEB_CONCURRENCY web processes sharing one port
// (node:cluster hands each connection to one of them) and JOB_WORKERS job-only processes. With
// both at their defaults (1 and 0) this is the one web process, which works the jobs itself.
// Sessions, throttles and API rate limits live in PostgreSQL and jobs are rows there, so any
// process answers any request; a process that dies is started again.
import cluster from "node:cluster";

const PROCESS_KIND = "SALLYPORT_PROCESS";

function count(name: string, fallback: number): number {
  const value = process.env[name];
  if (value === undefined || value === "") return fallback;
  const parsed = Number(value);
  if (!Number.isInteger(parsed) || parsed < 0 || parsed > 64) {
    console.error(`${name} must be a whole number from 0 to 64 (got "${value}").`);
    process.exit(2);
  }
  return parsed;
}

const webProcesses = Math.max(1, count("WEB_CONCURRENCY", 1));
const jobProcesses = count("JOB_WORKERS", 0);

if (cluster.isPrimary && webProcesses === 1 && jobProcesses === 0) {
  await import("./http/main.ts");
} else if (cluster.isPrimary) {
  // With job-only processes the web processes leave the queues to them.
  const web = { [PROCESS_KIND]: "web", SALLYPORT_JOBS: jobProcesses > 0 ? "0" : (process.env.SALLYPORT_JOBS ?? "1") };
  const jobs = { [PROCESS_KIND]: "jobs" };
  const kinds = new Map<number, Record<string, string>>();
  let stopping = false;
  const fork = (environment: Record<string, string>) => {
    const worker = cluster.fork(environment);
    kinds.set(worker.id, environment);
  };
  cluster.on("exit", (worker, code, signal) => {
    const environment = kinds.get(worker.id);
    kinds.delete(worker.id);
    if (stopping || !environment) return;
    console.error(`Sallyport ${environment[PROCESS_KIND]} process ${worker.process.pid} ended (${signal ?? code}); starting another`);
    setTimeout(() => fork(environment), 1_000);
  });
  for (let index = 0; index < webProcesses; index++) fork(web);
  for (let index = 0; index < jobProcesses; index++) fork(jobs);
  console.log(`Sallyport: ${webProcesses} web process(es) and ${jobProcesses} job worker(s) (WEB_CONCURRENCY, JOB_WORKERS)`);
  for (const signal of ["SIGINT", "SIGTERM"] as const) {
    process.on(signal, () => {
      stopping = true;
      for (const worker of Object.values(cluster.workers ?? {})) worker?.process.kill("SIGTERM");
      cluster.on("exit", () => {
        if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
      });
    });
  }
} else if (process.env[PROCESS_KIND] === "jobs") {
  await import("./jobs/main.ts");
} else {
  await import("./http/main.ts");
}
