#!/usr/bin/env bash
# A private PostgreSQL cluster for Counterpart, on 127.0.0.1 only, on a fixed port.
# Usage: scripts/pg.sh start [DBNAME...] | stop | status | url [DBNAME]
# Works as root (initdb and postgres then run as the `postgres` OS user) and as a normal user.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"

pg_bin() {
  local d
  d=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
  echo "$d"
}

ensure_pg_installed() {
  if [ -z "$(pg_bin)" ] || [ ! -x "$(pg_bin)/initdb" ]; then
    log "installing PostgreSQL from Debian's packages"
    apt_install postgresql
    # Debian's package starts its own cluster on 5432; we do not need it.
    if command -v pg_ctlcluster >/dev/null; then
      for c in $(ls /etc/postgresql 2>/dev/null); do pg_ctlcluster "$c" main stop 2>/dev/null || true; done
    fi
  fi
}

as_pg() { if is_root; then runuser -u postgres -- "$@"; else "$@"; fi; }

BASE="$PG_BASE"
PGDATA_DIR="$BASE/data"
LOG_FILE="$BASE/postgres.log"

init_cluster() {
  [ -f "$PGDATA_DIR/PG_VERSION" ] && return 0
  log "creating the database cluster in $PGDATA_DIR"
  mkdir -p "$PGDATA_DIR" "$SOCK_DIR"
  local pw="$BASE/pwfile"
  printf '%s\n' "$DB_PASS" > "$pw"
  if is_root; then chown -R postgres:postgres "$BASE"; fi
  chmod 700 "$PGDATA_DIR"
  as_pg "$(pg_bin)/initdb" -D "$PGDATA_DIR" -U postgres --auth-local=trust --auth-host=scram-sha-256 \
    --pwfile="$pw" -E UTF8 --locale=C.UTF-8 >/dev/null
  rm -f "$pw"
}

is_running() { as_pg "$(pg_bin)/pg_ctl" -D "$PGDATA_DIR" status >/dev/null 2>&1; }

psql_super() { as_pg "$(pg_bin)/../bin/psql" -h "$SOCK_DIR" -p "$PG_PORT" -U postgres -d postgres -v ON_ERROR_STOP=1 -qtA "$@"; }

ensure_database() {
  local name="$1"
  if [ "$(psql_super -c "SELECT 1 FROM pg_roles WHERE rolname='$DB_USER'")" != 1 ]; then
    psql_super -c "CREATE ROLE $DB_USER LOGIN CREATEDB PASSWORD '$DB_PASS'"
  elif [ "$(psql_super -c "SELECT rolcreatedb FROM pg_roles WHERE rolname='$DB_USER'")" != t ]; then
    psql_super -c "ALTER ROLE $DB_USER CREATEDB"
  fi
  if [ "$(psql_super -c "SELECT 1 FROM pg_database WHERE datname='$name'")" != 1 ]; then
    log "creating database $name"
    psql_super -c "CREATE DATABASE $name OWNER $DB_USER"
  fi
}

drop_database() {
  psql_super -c "DROP DATABASE IF EXISTS $1 WITH (FORCE)"
}

start() {
  ensure_pg_installed
  init_cluster
  if is_running; then
    log "PostgreSQL already running on 127.0.0.1:$PG_PORT"
  else
    mkdir -p "$SOCK_DIR"
    if is_root; then chown postgres:postgres "$SOCK_DIR" "$BASE"; fi
    as_pg "$(pg_bin)/pg_ctl" -D "$PGDATA_DIR" -l "$LOG_FILE" -w -t 60 \
      -o "-c listen_addresses=127.0.0.1 -p $PG_PORT -k $SOCK_DIR -c unix_socket_permissions=0700" start >/dev/null
    log "PostgreSQL started on 127.0.0.1:$PG_PORT"
  fi
  for db in "$@"; do ensure_database "$db"; done
}

stop() {
  if [ -f "$PGDATA_DIR/PG_VERSION" ] && is_running; then
    as_pg "$(pg_bin)/pg_ctl" -D "$PGDATA_DIR" -m fast -w stop >/dev/null
    log "PostgreSQL stopped"
  fi
}

cmd="${1:-status}"; shift || true
case "$cmd" in
  start) start "$@" ;;
  stop) stop ;;
  status) if is_running; then echo running; else echo stopped; exit 3; fi ;;
  recreate) start; drop_database "$1"; ensure_database "$1" ;;
  url) database_url "${1:-}" ;;
  *) echo "usage: $0 start [DB...]|stop|status|recreate DB|url [DB]" >&2; exit 2 ;;
esac
