// Counts the database queries of one request (and their time), for the Server-Timing header
// and the tests that hold loaders to a query budget. AsyncLocalStorage follows the request
// through every await, so parallel requests never mix their counts.
import { AsyncLocalStorage } from "node:async_hooks";

export type QueryTally = { count: number; milliseconds: number; statements: string[] };

const current = new AsyncLocalStorage<QueryTally>();

/** Runs `work` with a fresh tally; returns both. */
export async function withQueryTally<T>(work: () => Promise<T>): Promise<{ result: T; tally: QueryTally }> {
  const tally: QueryTally = { count: 0, milliseconds: 0, statements: [] };
  const result = await current.run(tally, work);
  return { result, tally };
}

/** Sequelize's logging hook: adds one query to the running request's tally, if any. */
export function recordQuery(sql: string, milliseconds?: number): void {
  const tally = current.getStore();
  if (!tally) return;
  tally.count += 1;
  tally.milliseconds += milliseconds ?? 0;
  // Kept short, yet long enough to hold a select list: the fleet test checks which columns are read.
  if (tally.statements.length < 20) tally.statements.push(sql.slice(0, 1000));
}
