#!/usr/bin/env bash
# npm run restore -- FILE [--into NAME] [--force]: restores a backup made by scripts/backup.sh
# (pg_restore of a custom-format dump) into the private cluster.
#   --into NAME  restore into database NAME, which must not exist yet (it is created); the
#                running app keeps using its own database.
#   --force      allow replacing a database that exists and holds tables: it is dropped
#                (connections to it are ended) and created again before the restore.
# Without --into the target is COUNTERPART_DB_NAME (default counterpart), the app's own
# database: one that holds tables is only replaced with --force. Nothing is changed when the
# file cannot be read.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"

usage() { log "usage: restore.sh FILE [--into NAME] [--force]"; exit 2; }
file=""; target="$DB_NAME"; named=0; force=0
while [ $# -gt 0 ]; do
  case "$1" in
    --into) target="${2:-}"; named=1; [ -n "$target" ] || usage; shift 2 ;;
    --force) force=1; shift ;;
    -h|--help) sed -n '2,10p' "$0" | sed 's/^# \{0,1\}//'; exit 0 ;;
    -*) log "unknown option $1"; usage ;;
    *) [ -z "$file" ] || usage; file="$1"; shift ;;
  esac
done
[ -n "$file" ] || usage
[[ "$target" =~ ^[a-z_][a-z0-9_]*$ ]] || { log "not a database name: $target"; exit 2; }
[ -f "$file" ] || { log "no backup file $file"; exit 2; }

bin="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)"
[ -x "$bin/pg_restore" ] || { log "pg_restore not found; run scripts/pg.sh start once to install PostgreSQL"; exit 1; }
"$bin/pg_restore" --list "$file" >/dev/null 2>&1 || { log "$file is not a backup pg_restore can read"; exit 2; }
bash "$ROOT/scripts/pg.sh" status >/dev/null 2>&1 || { log "PostgreSQL is not running on port $PG_PORT (scripts/pg.sh start)"; exit 1; }

q() { PGPASSWORD="$DB_PASS" "$bin/psql" -h 127.0.0.1 -p "$PG_PORT" -U "$DB_USER" -d "$1" -v ON_ERROR_STOP=1 -qtA -c "$2"; }
exists="$(q postgres "SELECT 1 FROM pg_database WHERE datname = '$target'")"
tables=0
[ "$exists" = 1 ] && tables="$(q "$target" "SELECT count(*) FROM pg_tables WHERE schemaname NOT IN ('pg_catalog', 'information_schema')")"
if [ "$tables" != 0 ]; then
  if [ "$force" != 1 ]; then
    if [ "$named" = 1 ]; then
      log "database $target already exists and holds $tables tables; --into needs a new name (or add --force to replace it)"
    else
      log "database $target already holds $tables tables; add --force to replace it, or restore --into a new database"
    fi
    exit 3
  fi
  log "replacing database $target (--force)"
  bash "$ROOT/scripts/pg.sh" recreate "$target" >/dev/null
else
  bash "$ROOT/scripts/pg.sh" start "$target" >/dev/null
fi

PGPASSWORD="$DB_PASS" "$bin/pg_restore" -h 127.0.0.1 -p "$PG_PORT" -U "$DB_USER" -d "$target" --no-owner --exit-on-error "$file"
log "restored $(basename "$file") into $target"
echo "$target"
