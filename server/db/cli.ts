// `tsx server/db/cli.ts migrate|seed|reset …` (one or more, in order: one process instead of a
// tsx start-up for each) — used by the set-up scripts. They run as the owner
// role (MIGRATION_DATABASE_URL) when there is one, and hand the runtime role (DATABASE_URL) only
// what it needs afterwards (docs/decisions/013); with one URL alone everything runs as that role.
import { createDatabase } from "./database.server.ts";
import { createMigrator, createSeeder } from "./migrator.ts";
import { grantRuntimeRole, runtimeRoleOf } from "./roles.ts";
import { grantJobQueue } from "./job-queue-grants.ts";
import { JOB_QUEUE_SCHEMA } from "../jobs/queues.ts";

const commands = process.argv.slice(2);
const runtimeUrl = process.env.DATABASE_URL;
if (!runtimeUrl) {
  console.error("DATABASE_URL is not set: run this through `npm start` or `npm test`.");
  process.exit(2);
}
const ownerUrl = process.env.MIGRATION_DATABASE_URL || runtimeUrl;
const sequelize = createDatabase(ownerUrl);
const runtimeRole = runtimeRoleOf(runtimeUrl, ownerUrl);

try {
  const usable = commands.length > 0 && commands.every((command) => ["migrate", "seed", "reset"].includes(command));
  if (!usable) {
    console.error("usage: tsx server/db/cli.ts migrate|seed|reset …");
    process.exitCode = 2;
  }
  for (const command of usable ? commands : []) {
    if (command === "migrate") {
      const applied = await createMigrator(sequelize).up();
      console.log(applied.length ? `  applied ${applied.map((m) => m.name).join(", ")}` : "  migrations up to date");
      if (runtimeRole) {
        await grantRuntimeRole(sequelize, runtimeRole);
        await grantJobQueue(sequelize, runtimeRole);
        console.log(`  runtime role ${runtimeRole}: data read and written, audit log insert and read only`);
      }
    } else if (command === "seed") {
      const applied = await createSeeder(sequelize).up();
      console.log(applied.length ? `  seeded ${applied.map((m) => m.name).join(", ")}` : "  demo seed already present");
    } else if (command === "reset") {
      // Test databases only: start every run from an empty schema.
      const database = new URL(ownerUrl).pathname.slice(1);
      if (!database.endsWith("_test")) throw new Error(`refusing to reset "${database}": only databases ending in _test`);
      await sequelize.query(`DROP SCHEMA public CASCADE; CREATE SCHEMA public; DROP SCHEMA IF EXISTS ${JOB_QUEUE_SCHEMA} CASCADE;`);
      console.log(`  reset ${database}`);
    }
  }
} finally {
  await sequelize.close();
}
