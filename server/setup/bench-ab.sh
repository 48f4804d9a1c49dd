#!/usr/bin/env bash
# `npm run bench:ab -- --a=DIR --b=DIR --route=…`: two checkouts' servers side by side on the load
# benchmark's database (the demo seed; the large organisation once `npm run bench:load` seeded it),
# asked alternately, CPU per request of each (tests/bench/ab-cpu.ts). Builds this checkout; the
# other checkout must have been built.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
prepare_load_benchmark
cd "$ROOT"
exec node --import tsx tests/bench/ab-cpu.ts "$@"
