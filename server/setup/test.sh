#!/usr/bin/env bash
# `npm test`: the same set-up as `npm start` with a separate test database, then every suite.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"

step "Sallyport test set-up"
ensure_debian_packages postgresql chromium
ensure_npm_dependencies
ensure_postgres_cluster
# Set only when the tests are to run against a database server of someone else's choosing.
given_database_url="${DATABASE_URL:-}"
ensure_database "${SALLYPORT_TEST_DB_NAME:-sallyport_test}"
ensure_session_secret
ensure_second_factor_key
ensure_app_origin
export SALLYPORT_TEST_RESET=1
run_migrations_and_seed
# The browser suite gets a database of its own, so it can run beside the integration suite:
# integration tests restore backups into their database and rewrite its audit chain, and the
# sign-up throttle counts per database. With a given DATABASE_URL the two suites take turns on it.
browser_database_urls=""
if [ -z "$given_database_url" ]; then
  # A copy of the test database just migrated and seeded, not a second migration and seed.
  test_database="${SALLYPORT_TEST_DB_NAME:-sallyport_test}"
  browser_database_urls=$(unset DATABASE_URL MIGRATION_DATABASE_URL; copy_database "$test_database" "${test_database%_test}_browser_test" >&2 && echo "DATABASE_URL=$DATABASE_URL MIGRATION_DATABASE_URL=$MIGRATION_DATABASE_URL") \
    || fail "could not make the browser suite's database" "read the error above"
fi
cd "$ROOT"

failures=()
passed=0
run_suite() {
  local name="$1"; shift
  local started=$SECONDS
  step "$name"
  if "$@"; then ok "$name: passed (${SUITE_SECONDS:-$((SECONDS - started))} s)"; passed=$((passed + 1)); else failures+=("$name"); fi
}

# Several suites at the same time, each on its own core when it is single-threaded (typecheck,
# lint and the build; ESLint is not type-aware, so it needs nothing `react-router typegen` writes,
# and the build writes nothing typecheck reads); their output is shown in order once all have ended.
# run_suites_together NAME COMMAND [NAME COMMAND]...
run_suites_together() {
  local logs count=0
  logs=$(mktemp -d)
  local pids=() names=()
  while [ $# -ge 2 ]; do
    count=$((count + 1))
    names+=("$1")
    # The command in a subshell of its own (with lib.sh's `set -e`), so that neither its failure nor
    # an `exit` in it (lib.sh's `fail`) ends this one before it writes the status.
    (started=$SECONDS; set +e; (set -e; eval "$2") >"$logs/$count" 2>&1; echo $? >"$logs/$count.rc"; echo $((SECONDS - started)) >"$logs/$count.s") &
    pids+=($!)
    shift 2
  done
  wait "${pids[@]}"
  # Each suite's own time, measured while they ran side by side (run_suite only replays the output).
  local index
  for index in $(seq 1 "$count"); do
    SUITE_SECONDS=$(cat "$logs/$index.s") run_suite "${names[$((index - 1))]}" bash -c "cat '$logs/$index'; exit \$(cat '$logs/$index.rc')"
  done
  rm -rf "$logs"
}

suite_started=$SECONDS
# The build uses one core for most of its time, so it runs beside typecheck and lint (about 25 s saved).
run_suites_together "Typecheck" "npm run --silent typecheck" "Lint (ESLint)" "npm run --silent lint" "Build" build_app
ok "typecheck, lint and build: $((SECONDS - suite_started)) s"
[[ " ${failures[*]} " != *" Build "* ]] || fail "the build failed, so the integration and browser suites cannot run" "read the build errors above"
run_suite "Unit tests (Vitest)" npx vitest run --project unit
export NODE_ENV=production
if [ -n "$browser_database_urls" ]; then
  # Side by side: integration runs one file at a time and waits on its server much of the time.
  # Measured, this saves only about two minutes (the browser suite alone nearly fills both cores).
  suites_started=$SECONDS
  run_suites_together "Integration tests (Vitest, real PostgreSQL)" "npx vitest run --project integration" \
    "Browser tests (Playwright, Debian's Chromium)" "env $browser_database_urls npx playwright test"
  ok "integration and browser tests: $((SECONDS - suites_started)) s"
else
  run_suite "Integration tests (Vitest, real PostgreSQL)" npx vitest run --project integration
  run_suite "Browser tests (Playwright, Debian's Chromium)" npx playwright test
fi

step "Summary"
printf 'suites: %d passed, %d failed\n' "$passed" "${#failures[@]}"
if [ ${#failures[@]} -gt 0 ]; then
  printf '  failed: %s\n' "${failures[@]}"
  exit 1
fi
ok "every suite passed"
