import path from "node:path";
import { fileURLToPath } from "node:url";
import type { QueryInterface, Sequelize } from "sequelize";
import { SequelizeStorage, Umzug } from "umzug";

export type MigrationContext = { context: QueryInterface };

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

// Separate meta tables: both storages default to SequelizeMeta and would collide.
export function createMigrator(sequelize: Sequelize): Umzug<QueryInterface> {
  return new Umzug({
    migrations: { glob: ["migrations/*.ts", { cwd: root }] },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, modelName: "schema_migrations" }),
    logger: undefined,
  });
}

export function createSeeder(sequelize: Sequelize): Umzug<QueryInterface> {
  return new Umzug({
    migrations: { glob: ["seeders/[0-9]*.ts", { cwd: root }] },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, modelName: "schema_seeds" }),
    logger: undefined,
  });
}
