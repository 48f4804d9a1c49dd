// `tsx server/db/cli.ts migrate|seed|reset` — used by the set-up scripts.
import { getDatabase } from "./database.server.ts";
import { createMigrator, createSeeder } from "./migrator.ts";

const command = process.argv[2];
const sequelize = getDatabase();

try {
  if (command === "migrate") {
    const applied = await createMigrator(sequelize).up();
    console.log(applied.length ? `  applied ${applied.map((m) => m.name).join(", ")}` : "  migrations up to date");
  } else if (command === "seed") {
    const applied = await createSeeder(sequelize).up();
    console.log(applied.length ? `  seeded ${applied.map((m) => m.name).join(", ")}` : "  demo seed already present");
  } else if (command === "reset") {
    // Test databases only: start every run from an empty schema.
    const database = new URL(process.env.DATABASE_URL ?? "").pathname.slice(1);
    if (!database.endsWith("_test")) throw new Error(`refusing to reset "${database}": only databases ending in _test`);
    await sequelize.query("DROP SCHEMA public CASCADE; CREATE SCHEMA public;");
    console.log(`  reset ${database}`);
  } else {
    console.error("usage: tsx server/db/cli.ts migrate|seed|reset");
    process.exitCode = 2;
  }
} finally {
  await sequelize.close();
}
