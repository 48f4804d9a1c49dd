#!/usr/bin/env bash
# `npm run audit:verify [-- options]`: checks the audit log's hash chains of the local database
# (SALLYPORT_DB_NAME, default sallyport; or DATABASE_URL) — docs/decisions/020. Options: see
# server/db/audit-verify.ts. Set-up messages go to stderr, so --json output stays clean.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
{
  ensure_postgres_cluster
  ensure_database "${SALLYPORT_DB_NAME:-sallyport}"
} >&2
cd "$ROOT"
exec npx tsx server/db/audit-verify.ts "$@"
