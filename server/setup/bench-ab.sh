#!/usr/bin/env bash
# `npm run bench:ab -- --a=DIR --b=DIR --route=…`: two checkouts' servers side by side on the load
# benchmark's database (the demo seed; the large organisation once `npm run bench:load` seeded it),
# asked alternately, CPU per request of each (tests/bench/ab-cpu.ts). Builds this checkout; the
# other checkout must have been built.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_debian_packages postgresql >/dev/null
ensure_npm_dependencies >/dev/null
ensure_postgres_cluster >/dev/null
ensure_database "${SALLYPORT_LOAD_DB_NAME:-sallyport_load_test}"
ensure_session_secret
ensure_second_factor_key
ensure_app_origin
run_migrations_and_seed >/dev/null
build_app >/dev/null
cd "$ROOT"
exec node --import tsx tests/bench/ab-cpu.ts "$@"
