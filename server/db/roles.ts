// The runtime role's privileges (docs/decisions/013). The owner role owns every table and runs
// the migrations; the runtime role — the one the web server connects as — reads and writes the
// data but may only insert into and read the audit log. Not owning anything, it can neither
// alter a table nor disable a trigger (PostgreSQL: ALTER TABLE needs ownership).
import type { Sequelize } from "sequelize";

/** The runtime role's name when it differs from the role that migrates, else null (one role does everything). */
export function runtimeRoleOf(runtimeUrl: string, ownerUrl: string): string | null {
  const runtime = decodeURIComponent(new URL(runtimeUrl).username);
  const owner = decodeURIComponent(new URL(ownerUrl).username);
  if (!runtime || runtime === owner) return null;
  if (!/^[a-z_][a-z0-9_]{0,62}$/.test(runtime)) throw new Error(`the runtime role "${runtime}" must be a plain lower-case PostgreSQL name`);
  return runtime;
}

/** Tables the runtime role may only insert into and read. */
export const APPEND_ONLY_TABLES = ["audit_events"] as const;

/** Tables the runtime role may only read: the audit chains' heads, written by the owner's trigger alone (docs/decisions/020). */
export const READ_ONLY_TABLES = ["audit_chain_heads"] as const;

/** Idempotent: run after every migration, so new tables are covered and nothing more is granted. */
export async function grantRuntimeRole(sequelize: Sequelize, role: string): Promise<void> {
  await sequelize.query(`
    REVOKE CREATE ON SCHEMA public FROM PUBLIC;
    REVOKE CREATE ON SCHEMA public FROM ${role};
    GRANT USAGE ON SCHEMA public TO ${role};
    GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO ${role};
    REVOKE TRUNCATE, REFERENCES, TRIGGER ON ALL TABLES IN SCHEMA public FROM ${role};
    GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO ${role};
    ${APPEND_ONLY_TABLES.map((table) => `REVOKE UPDATE, DELETE ON ${table} FROM ${role};`).join("\n    ")}
    ${READ_ONLY_TABLES.map((table) => `REVOKE INSERT, UPDATE, DELETE ON ${table} FROM ${role};`).join("\n    ")}
  `);
}
