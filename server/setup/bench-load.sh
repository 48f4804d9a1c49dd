#!/usr/bin/env bash
# `npm run bench:load`: its own database with the demo seed (kept between runs, so the large
# organisation is seeded once), the build, then the load benchmark (tests/bench/load.bench.ts).
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_debian_packages postgresql >/dev/null
ensure_npm_dependencies >/dev/null
ensure_postgres_cluster >/dev/null
ensure_database "${SALLYPORT_LOAD_DB_NAME:-sallyport_load_test}"
ensure_session_secret
ensure_app_origin
run_migrations_and_seed >/dev/null
build_app >/dev/null
cd "$ROOT"
exec node --import tsx tests/bench/load.bench.ts "$@"
