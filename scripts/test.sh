#!/usr/bin/env bash
# `npm test`: provision as `npm start` does, into a throwaway cluster, then type-check, lint and
# run every Vitest project. Ends with a plain `N passed, N failed` line.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_system_packages
ensure_node_modules

if [ -z "${DATABASE_URL:-}" ]; then
  PG_DIR="$(mktemp -d /var/tmp/rateledger-test-pg.XXXXXX)"
  chmod 755 "$PG_DIR"
  PG_PORT="${RATELEDGER_TEST_PG_PORT:-$((55000 + RANDOM % 5000))}"
  start_cluster "$PG_DIR" "$PG_PORT" throwaway
  ensure_database "$PG_PORT" rateledger_test
  # As `npm start`: migrations as the owner role, the app (and the tests) as the app role;
  # tests that attack the database as its administrator would use TEST_SUPERUSER_URL.
  ensure_roles "$PG_PORT" rateledger_test
  export TEST_SUPERUSER_URL="postgres://postgres@127.0.0.1:$PG_PORT/rateledger_test"
  export DATABASE_OWNER_URL="postgres://rateledger_owner@127.0.0.1:$PG_PORT/rateledger_test"
  export DATABASE_URL="postgres://rateledger_app@127.0.0.1:$PG_PORT/rateledger_test"
  trap 'stop_cluster "$PG_DIR"; rm -rf "$PG_DIR"' EXIT
fi
export SESSION_SECRET="${SESSION_SECRET:-test-only-secret-not-for-production-use}"
export NODE_ENV=test

status=0
log "type-checking (tsc --noEmit)"
npx tsc --noEmit -p . || status=1
log "linting (biome)"
npx biome check . || status=1
log "building the client and the command-line tools"
npx vite build --logLevel warn || status=1
# The tests of server/cli run the bundles `npm run fit`/`mkt` run (dist/cli/, not committed).
node scripts/build-cli.mjs || status=1

RESULTS="$(mktemp "${TMPDIR:-/tmp}/rateledger-vitest.XXXXXX.json")"
npx vitest run --reporter=default --reporter=json --outputFile.json="$RESULTS" || status=1
node -e '
  const r = JSON.parse(require("fs").readFileSync(process.argv[1], "utf8"));
  const failed = r.numFailedTests + (process.argv[2] === "1" && r.numFailedTests === 0 ? 1 : 0);
  console.log(`${r.numPassedTests} passed, ${failed} failed` + (r.numPendingTests ? `, ${r.numPendingTests} skipped` : ""));
' "$RESULTS" "$status" || echo "0 passed, 1 failed"
rm -f "$RESULTS"
exit "$status"
