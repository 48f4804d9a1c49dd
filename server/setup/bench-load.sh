#!/usr/bin/env bash
# `npm run bench:load`: its own database with the demo seed (kept between runs, so the large
# organisation is seeded once), the build, then the load benchmark (tests/bench/load.bench.ts).
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
prepare_load_benchmark
cd "$ROOT"
exec node --import tsx tests/bench/load.bench.ts "$@"
