#!/usr/bin/env bash
# `npm start`: everything from a fresh machine to a served app on http://localhost:3000.
# `npm run dev` (this script with --dev) serves with Vite's hot reload instead of a build.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"

step "Sallyport set-up"
ensure_debian_packages postgresql
ensure_npm_dependencies
ensure_postgres_cluster
ensure_database "${SALLYPORT_DB_NAME:-sallyport}"
ensure_session_secret
ensure_second_factor_key
export PORT="${PORT:-3000}"
ensure_app_origin
ensure_outbox_secret
run_migrations_and_seed
ensure_fake_smtp
cd "$ROOT"
if [ "${1:-}" = "--dev" ]; then
  export NODE_ENV=development
else
  build_app
  export NODE_ENV=production
fi
step "Serving on $APP_ORIGIN (Ctrl-C stops the web server; \`npm run stop\` stops PostgreSQL and the fake SMTP server)"
exec node --import tsx server/launch.ts
