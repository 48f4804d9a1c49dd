// A job-only process: works the job queues and serves nothing. `npm start` runs JOB_WORKERS of
// them beside the web processes (server/launch.ts); run one alone with
// `node --import tsx server/jobs/main.ts` (DATABASE_URL set). Any number may run at once.
import { getEnvironment } from "../config.server.ts";
import { getDatabase } from "../db/database.server.ts";
import { startJobWorking, stopJobWorking } from "./worker.server.ts";

getEnvironment();
getDatabase();
await startJobWorking();
console.log(`Sallyport job worker ${process.pid} working the queues`);
for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.on(signal, () => void stopJobWorking().finally(() => process.exit(0)));
}
