#!/usr/bin/env bash
# `npm run bench:web`: a benchmark database with the demo seed, the build, then the web benchmark.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_debian_packages postgresql >/dev/null
ensure_npm_dependencies >/dev/null
ensure_postgres_cluster >/dev/null
# Its own database (reset on every run); SALLYPORT_BENCH_DB_NAME gives another, so runs in two worktrees never reset each other.
ensure_database "${SALLYPORT_BENCH_DB_NAME:-sallyport_bench_test}"
ensure_session_secret
ensure_second_factor_key
export SALLYPORT_TEST_RESET=1
run_migrations_and_seed >/dev/null
build_app >/dev/null
cd "$ROOT"
exec node --import tsx tests/bench/web.bench.ts "$@"
