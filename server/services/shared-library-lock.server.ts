// One lock per organisation's shared library, held for the length of a transaction. A change
// to the library takes it alone ("write") and gives every device that uses the changed objects
// a new revision; a device save takes it shared ("read") and reads the library after it has the
// lock. So a device save never records a library value that a concurrent library change is
// replacing, and a library change never misses a device that started to use it meanwhile.
// Order: this lock first, then device rows; no path takes them the other way round.
import type { Transaction } from "sequelize";
import { getDatabase } from "../db/database.server.ts";

export async function lockSharedLibrary(transaction: Transaction, organisationId: string, mode: "read" | "write"): Promise<void> {
  // A transaction-level advisory lock (released at commit or rollback), keyed by the organisation.
  const lock = mode === "write" ? "pg_advisory_xact_lock" : "pg_advisory_xact_lock_shared";
  await getDatabase().query(`SELECT ${lock}(hashtextextended(:key, 0))`, { replacements: { key: `shared-library:${organisationId}` }, transaction });
}
