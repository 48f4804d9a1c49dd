// A plain SELECT with bind parameters on a pooled connection, for the few reads every request
// makes (the session, the device in the URL, the fleet's change stamp). Sequelize's `query` adds
// its own work per call — scanning the SQL for replacements, escaping values into it, the
// retry wrapper, the result's post-processing — which the profile of the trace JSON route put
// at about a tenth of the request (docs/decisions/026). Values go as bind parameters ($1, $2…),
// never into the text. Rows are parsed by the same type parsers Sequelize installs on its
// connections; the query is counted (Server-Timing, query budgets) as Sequelize's are, and a
// failure is the Sequelize error the outage and conflict handling expect.
import { performance } from "node:perf_hooks";
import { ConnectionError, DatabaseError } from "sequelize";
import { getDatabase } from "./database.server.ts";
import { recordQuery } from "./query-log.server.ts";

/** What a pooled connection of PostgreSQL's driver (pg) offers here. */
type PgConnection = {
  query(config: { text: string; values: readonly unknown[] }): Promise<{ rows: Array<Record<string, unknown>> }>;
  _invalid?: boolean;
};

/** The rows of one SELECT, its values bound as $1, $2… (outside any transaction). */
export async function selectRows<Row extends Record<string, unknown> = Record<string, unknown>>(text: string, values: readonly unknown[]): Promise<Row[]> {
  const manager = getDatabase().connectionManager;
  // Sequelize's own pool: acquiring raises its ConnectionError when the database is unreachable.
  const connection = (await manager.getConnection({ type: "read" })) as PgConnection;
  const start = performance.now();
  try {
    const result = await connection.query({ text, values });
    recordQuery(text, performance.now() - start);
    return result.rows as Row[];
  } catch (error) {
    recordQuery(text, performance.now() - start);
    throw asSequelizeError(error, connection);
  } finally {
    manager.releaseConnection(connection);
  }
}

/** The driver's error as Sequelize would have raised it (its postgres dialect's rules, for the cases that matter here). */
function asSequelizeError(error: unknown, connection: PgConnection): Error {
  const failure = error instanceof Error ? error : new Error(String(error));
  const code = (failure as { code?: unknown }).code;
  // A connection that failed this way is not handed out again (as Sequelize's dialect does).
  if (code === "ECONNRESET" || /Connection terminated/.test(failure.message)) connection._invalid = true;
  if (code === "ECONNREFUSED") return new ConnectionError(failure);
  return new DatabaseError(failure as Error & { sql: string; parameters: object });
}
