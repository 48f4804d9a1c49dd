import { Sequelize } from "sequelize";

/**
 * A plain connection as the owner role (MIGRATION_DATABASE_URL, docs/decisions/013), for tests that
 * need what the app's runtime role may not do (create a trigger, read as the owner). No models are
 * registered on it, so the app's models stay bound to their own connection. Close it after use.
 */
export function ownerConnection(): Sequelize {
  return new Sequelize(process.env.MIGRATION_DATABASE_URL ?? process.env.DATABASE_URL!, { dialect: "postgres", logging: false });
}
