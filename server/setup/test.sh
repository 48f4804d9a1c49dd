#!/usr/bin/env bash
# `npm test`: the same set-up as `npm start` with a separate test database, then every suite.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"

step "Sallyport test set-up"
ensure_debian_packages postgresql chromium
ensure_npm_dependencies
ensure_postgres_cluster
ensure_database "${SALLYPORT_TEST_DB_NAME:-sallyport_test}"
ensure_session_secret
ensure_second_factor_key
ensure_app_origin
export SALLYPORT_TEST_RESET=1
run_migrations_and_seed
cd "$ROOT"

failures=()
passed=0
run_suite() {
  local name="$1"; shift
  step "$name"
  if "$@"; then ok "$name: passed"; passed=$((passed + 1)); else failures+=("$name"); fi
}

run_suite "Typecheck" npm run --silent typecheck
run_suite "Lint (ESLint)" npm run --silent lint
run_suite "Unit tests (Vitest)" npx vitest run --project unit
build_app
export NODE_ENV=production
run_suite "Integration tests (Vitest, real PostgreSQL)" npx vitest run --project integration
run_suite "Browser tests (Playwright, Debian's Chromium)" npx playwright test

step "Summary"
printf 'suites: %d passed, %d failed\n' "$passed" "${#failures[@]}"
if [ ${#failures[@]} -gt 0 ]; then
  printf '  failed: %s\n' "${failures[@]}"
  exit 1
fi
ok "every suite passed"
