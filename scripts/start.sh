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
  # Least privilege: migrations run as the owner role, the server as an app role that owns
  # nothing (scripts/lib.sh ensure_roles; grants by the migration step).
  ensure_roles "$PG_PORT" rateledger
  export DATABASE_OWNER_URL="postgres://rateledger_owner@127.0.0.1:$PG_PORT/rateledger"
  export DATABASE_URL="postgres://rateledger_app@127.0.0.1:$PG_PORT/rateledger"
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
# The audit checkpoints and their signing key: owned by this user, out of the postgres account's
# reach (the cluster runs as `postgres`; this folder is 0700 and its files 0600).
export AUDIT_ANCHOR_DIR="${AUDIT_ANCHOR_DIR:-$ROOT/.data/audit-anchor}"
mkdir -p -m 700 "$AUDIT_ANCHOR_DIR"
if [ -z "${SESSION_SECRET:-}" ]; then
  [ -f "$ROOT/.data/session-secret" ] || head -c 32 /dev/urandom | base64 >"$ROOT/.data/session-secret"
  SESSION_SECRET="$(cat "$ROOT/.data/session-secret")"
  export SESSION_SECRET
fi

log "building the client, the server and the command-line tools"
npx vite build --logLevel warn
node scripts/run-built.mjs
node scripts/build-cli.mjs

node dist/server/migrate-database.js
node dist/server/demo/seed.js

node dist/server/index.js &
SERVER_PID=$!
# The demo people's first reports (one signed, one waiting for review), made through the server's
# own pages once it answers; does nothing when the demo organisation already holds a report.
node dist/server/demo/demo-activity.js "http://${HOST:-127.0.0.1}:${PORT:-3000}" &
wait "$SERVER_PID"
