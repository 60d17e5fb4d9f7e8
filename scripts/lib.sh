#!/usr/bin/env bash
# Shared provisioning steps for `npm start` and `npm test`. Each step checks before it acts,
# so a second run on a provisioned machine does nothing but verify.
set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
PG_VERSION_WANTED="${PG_VERSION_WANTED:-15}"

log() { printf '[rateledger] %s\n' "$*" >&2; }

# Debian packages the app needs at run time: PostgreSQL for the private cluster, Chromium for
# PDF printing and browser tests, poppler-utils for PDF checks (pdfsig verifies signatures),
# libnss3-tools (certutil) for the trust store pdfsig reads, fonts for Chromium's fallbacks.
ensure_system_packages() {
  local missing=()
  command -v chromium >/dev/null 2>&1 || missing+=(chromium)
  command -v pdftotext >/dev/null 2>&1 || missing+=(poppler-utils)
  ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1 || missing+=(postgresql)
  dpkg -s fonts-liberation >/dev/null 2>&1 || missing+=(fonts-liberation)
  command -v certutil >/dev/null 2>&1 || missing+=(libnss3-tools)
  if ((${#missing[@]})); then
    log "installing Debian packages: ${missing[*]}"
    if [ "$(id -u)" != 0 ]; then
      log "not root: install them yourself with: sudo apt-get install ${missing[*]}"; exit 1
    fi
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
  fi
}

# npm ci when node_modules is missing or was installed from another lockfile.
ensure_node_modules() {
  local stamp="$ROOT/node_modules/.rateledger-lock.sha256"
  local want
  want="$(sha256sum "$ROOT/package-lock.json" | cut -d' ' -f1)"
  if [ ! -f "$stamp" ] || [ "$(cat "$stamp")" != "$want" ]; then
    log "installing npm packages (npm ci)"
    (cd "$ROOT" && npm ci --no-audit --no-fund --loglevel=error)
    echo "$want" >"$stamp"
  fi
}

pg_bin() {
  local dir
  dir="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)"
  [ -n "$dir" ] || { log "PostgreSQL binaries not found"; exit 1; }
  echo "$dir"
}

# start_cluster DIR PORT [throwaway]: a private PostgreSQL cluster owned by the `postgres` system
# user (initdb refuses root), listening on 127.0.0.1 only, with its socket inside DIR.
start_cluster() {
  local dir="$1" port="$2" throwaway="${3:-}"
  local bin; bin="$(pg_bin)"
  local as_pg=()
  if [ "$(id -u)" = 0 ]; then as_pg=(runuser -u postgres --); fi
  mkdir -p "$dir"
  if [ "$(id -u)" = 0 ]; then chown postgres:postgres "$dir"; fi
  if [ ! -f "$dir/data/PG_VERSION" ]; then
    log "creating a private PostgreSQL cluster in $dir"
    "${as_pg[@]}" "$bin/initdb" -D "$dir/data" -U postgres --auth=trust -E UTF8 --locale=C.UTF-8 >/dev/null
  fi
  local opts="-c listen_addresses=127.0.0.1 -p $port -c unix_socket_directories='$dir'"
  if [ -n "$throwaway" ]; then opts="$opts -c fsync=off -c synchronous_commit=off -c full_page_writes=off"; fi
  if "${as_pg[@]}" "$bin/pg_ctl" -D "$dir/data" status >/dev/null 2>&1; then
    log "PostgreSQL already running in $dir"
  else
    "${as_pg[@]}" "$bin/pg_ctl" -D "$dir/data" -l "$dir/server.log" -w -o "$opts" start >/dev/null
  fi
}

stop_cluster() {
  local dir="$1"
  local bin; bin="$(pg_bin)"
  local as_pg=()
  if [ "$(id -u)" = 0 ]; then as_pg=(runuser -u postgres --); fi
  if [ -f "$dir/data/PG_VERSION" ]; then
    "${as_pg[@]}" "$bin/pg_ctl" -D "$dir/data" -m fast -w stop >/dev/null 2>&1 || true
  fi
}

# ensure_database PORT NAME: create the database when absent.
ensure_database() {
  local port="$1" name="$2"
  local bin; bin="$(pg_bin)"
  if ! "$bin/psql" -h 127.0.0.1 -p "$port" -U postgres -tAc "select 1 from pg_database where datname='$name'" | grep -q 1; then
    "$bin/createdb" -h 127.0.0.1 -p "$port" -U postgres "$name"
  fi
}

# The directory must be enterable by the postgres user; fall back to a folder under /var/tmp
# when the checkout sits somewhere it cannot reach.
cluster_dir_for() {
  local wanted="$1"
  mkdir -p "$(dirname "$wanted")"
  if [ "$(id -u)" = 0 ] && ! runuser -u postgres -- test -x "$(dirname "$wanted")"; then
    local alt="/var/tmp/rateledger-pg-$(echo "$wanted" | sha256sum | cut -c1-12)"
    log "postgres cannot enter $(dirname "$wanted"); using $alt for the cluster"
    echo "$alt"
  else
    echo "$wanted"
  fi
}

# ensure_roles PORT DATABASE [OWNER] [APP]: least privilege in the private cluster. OWNER (default
# rateledger_owner) owns the database and every object in it and runs the migrations; APP
# (default rateledger_app) is what the server connects as: it owns nothing, is no superuser, and
# gets only row privileges, granted by the migration step (server/platform/db/app-role-grants.ts).
# Objects an older version created as `postgres` are handed to OWNER, so an existing .data/pg
# cluster upgrades in place.
ensure_roles() {
  local port="$1" name="$2" owner="${3:-rateledger_owner}" app="${4:-rateledger_app}"
  local bin; bin="$(pg_bin)"
  "$bin/psql" -h 127.0.0.1 -p "$port" -U postgres -d "$name" -v ON_ERROR_STOP=1 -q \
    -v owner="$owner" -v app="$app" -v db="$name" >/dev/null <<'SQL'
select format('create role %I login nosuperuser nocreatedb nocreaterole', :'owner')
  where not exists (select 1 from pg_roles where rolname = :'owner') \gexec
select format('create role %I login nosuperuser nocreatedb nocreaterole', :'app')
  where not exists (select 1 from pg_roles where rolname = :'app') \gexec
select format('alter database %I owner to %I', :'db', :'owner') \gexec
select format('alter schema %I owner to %I', nspname, :'owner') from pg_namespace
  where nspname in ('drizzle', 'pgboss') and nspowner <> (select oid from pg_roles where rolname = :'owner') \gexec
select format('alter table %I.%I owner to %I', n.nspname, c.relname, :'owner')
  from pg_class c join pg_namespace n on n.oid = c.relnamespace
  where n.nspname in ('public', 'drizzle', 'pgboss') and c.relkind in ('r', 'p', 'v', 'm')
    and c.relowner <> (select oid from pg_roles where rolname = :'owner') \gexec
select format('alter sequence %I.%I owner to %I', n.nspname, c.relname, :'owner')
  from pg_class c join pg_namespace n on n.oid = c.relnamespace
  where n.nspname in ('public', 'drizzle', 'pgboss') and c.relkind = 'S'
    and c.relowner <> (select oid from pg_roles where rolname = :'owner')
    and not exists (select 1 from pg_depend d where d.objid = c.oid and d.deptype in ('a', 'i')) \gexec
select format('alter function %I.%I(%s) owner to %I', n.nspname, p.proname, pg_get_function_identity_arguments(p.oid), :'owner')
  from pg_proc p join pg_namespace n on n.oid = p.pronamespace
  where n.nspname in ('public', 'pgboss') and p.proowner <> (select oid from pg_roles where rolname = :'owner') \gexec
select format('alter type %I.%I owner to %I', n.nspname, t.typname, :'owner')
  from pg_type t join pg_namespace n on n.oid = t.typnamespace
  where n.nspname in ('public', 'pgboss') and t.typtype in ('e', 'd', 'c') and t.typrelid = 0
    and t.typowner <> (select oid from pg_roles where rolname = :'owner') \gexec
SQL
}
