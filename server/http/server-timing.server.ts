// With SERVER_TIMING=1, every response says how many database queries it took and how long
// they ran (W3C Server Timing), so a loader that grows a query per row shows at once — and the
// integration tests hold the device pages to a query budget through it.
import { isServerTimingEnabled } from "../config.server.ts";
import { withQueryTally } from "../db/query-log.server.ts";
import type { Middleware } from "./request-context.server.ts";

export const serverTimingMiddleware: Middleware = async (_args, next) => {
  if (!isServerTimingEnabled()) return next();
  const { result: response, tally } = await withQueryTally(next);
  response.headers.append("Server-Timing", `db;desc="${tally.count} queries";dur=${tally.milliseconds.toFixed(1)}`);
  return response;
};
