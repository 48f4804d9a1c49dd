import { OUTAGE_RETRY_AFTER_SECONDS } from "#server/http/failures.server";
import { getDatabase } from "#server/db/database.server";

// For the set-up scripts and monitoring: the app answers and the database is reachable.
export async function loader() {
  try {
    await getDatabase().query("SELECT 1");
    return Response.json({ status: "ok" });
  } catch {
    return Response.json({ status: "database unreachable" }, { status: 503, headers: { "Retry-After": String(OUTAGE_RETRY_AFTER_SECONDS), "Cache-Control": "no-store" } });
  }
}
