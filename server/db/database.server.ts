import { Sequelize } from "sequelize";
import { initModels } from "#models/index.ts";
import { getEnvironment } from "../config.server.ts";
import { recordQuery } from "./query-log.server.ts";

let sequelize: Sequelize | undefined;

/**
 * The one Sequelize instance of this process, with every model registered. The app calls it
 * once at start-up (app/entry.server.tsx), the database scripts at theirs; services then use
 * the models directly.
 */
export function getDatabase(): Sequelize {
  if (sequelize) return sequelize;
  sequelize = createDatabase(getEnvironment().DATABASE_URL);
  return sequelize;
}

export function createDatabase(url: string): Sequelize {
  const instance = new Sequelize(url, {
    dialect: "postgres",
    // Counted per request (Server-Timing, query budgets), never printed.
    logging: (sql: string, milliseconds?: number) => recordQuery(sql, milliseconds),
    benchmark: true,
    pool: { max: 10, min: 0, idle: 10_000 },
  });
  initModels(instance);
  return instance;
}
