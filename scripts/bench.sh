#!/usr/bin/env bash
# `npm run bench`: the speed and memory benchmarks, against a throwaway database (as `npm test`
# provisions one) unless DATABASE_URL is set. Each script prints medians and PASS/FAIL.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_system_packages
ensure_node_modules

if [ -z "${DATABASE_URL:-}" ]; then
  PG_DIR="$(mktemp -d /var/tmp/rateledger-bench-pg.XXXXXX)"
  chmod 755 "$PG_DIR"
  PG_PORT="${RATELEDGER_BENCH_PG_PORT:-$((50000 + RANDOM % 4000))}"
  start_cluster "$PG_DIR" "$PG_PORT" throwaway
  ensure_database "$PG_PORT" rateledger_bench
  export DATABASE_URL="postgres://postgres@127.0.0.1:$PG_PORT/rateledger_bench"
  trap 'stop_cluster "$PG_DIR"; rm -rf "$PG_DIR"' EXIT
fi
npx tsx server/platform/db/migrate.ts
npx tsx tests/bench/index.ts "$@"
