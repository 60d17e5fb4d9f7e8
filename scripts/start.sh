#!/usr/bin/env bash
# `npm start`: provision whatever is missing, then serve Rateledger on http://127.0.0.1:3000.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_system_packages
ensure_node_modules

if [ -z "${DATABASE_URL:-}" ]; then
  PG_DIR="$(cluster_dir_for "$ROOT/.data/pg")"
  PG_PORT="${RATELEDGER_PG_PORT:-54329}"
  start_cluster "$PG_DIR" "$PG_PORT"
  ensure_database "$PG_PORT" rateledger
  export DATABASE_URL="postgres://postgres@127.0.0.1:$PG_PORT/rateledger"
  OWN_CLUSTER=1
else
  OWN_CLUSTER=0
fi

cleanup() {
  trap - INT TERM EXIT
  if [ -n "${SERVER_PID:-}" ]; then kill -TERM "$SERVER_PID" 2>/dev/null || true; wait "$SERVER_PID" 2>/dev/null || true; fi
  if [ "$OWN_CLUSTER" = 1 ]; then log "stopping PostgreSQL"; stop_cluster "$PG_DIR"; fi
}
trap cleanup INT TERM EXIT

mkdir -p "$ROOT/.data" "$ROOT/reports"
if [ -z "${SESSION_SECRET:-}" ]; then
  [ -f "$ROOT/.data/session-secret" ] || head -c 32 /dev/urandom | base64 >"$ROOT/.data/session-secret"
  SESSION_SECRET="$(cat "$ROOT/.data/session-secret")"
  export SESSION_SECRET
fi

log "building the client and the server"
npx vite build --logLevel warn
node scripts/run-built.mjs

node dist/server/platform/db/migrate.js
node dist/server/demo/seed.js

node dist/server/index.js &
SERVER_PID=$!
wait "$SERVER_PID"
