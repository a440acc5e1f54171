#!/usr/bin/env bash
# npm run backup [-- --db NAME]: a pg_dump (custom format) of Counterpart's database in the
# private cluster, written to .data/backups/NAME-YYYYMMDD-HHMMSS.dump; prints the file's path.
# The database is COUNTERPART_DB_NAME (default counterpart) unless --db names another.
# Restore it with `npm run restore -- FILE` (scripts/restore.sh).
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"

db="$DB_NAME"
while [ $# -gt 0 ]; do
  case "$1" in
    --db) db="${2:?--db needs a database name}"; shift 2 ;;
    -h|--help) sed -n '2,5p' "$0" | sed 's/^# \{0,1\}//'; exit 0 ;;
    *) log "unknown option $1 (usage: backup.sh [--db NAME])"; exit 2 ;;
  esac
done
[[ "$db" =~ ^[a-z_][a-z0-9_]*$ ]] || { log "not a database name: $db"; exit 2; }

bin="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)"
[ -x "$bin/pg_dump" ] || { log "pg_dump not found; run scripts/pg.sh start once to install PostgreSQL"; exit 1; }
bash "$ROOT/scripts/pg.sh" status >/dev/null 2>&1 || { log "PostgreSQL is not running on port $PG_PORT (scripts/pg.sh start)"; exit 1; }

dir="$DATA_DIR/backups"
mkdir -p "$dir"
file="$dir/$db-$(date -u +%Y%m%d-%H%M%S).dump"
[ -e "$file" ] && file="${file%.dump}-$$.dump"
tmp="$file.partial"
trap 'rm -f "$tmp"' EXIT
PGPASSWORD="$DB_PASS" "$bin/pg_dump" -h 127.0.0.1 -p "$PG_PORT" -U "$DB_USER" -d "$db" -Fc --no-owner -f "$tmp"
mv "$tmp" "$file"
trap - EXIT
log "backup of $db written ($(du -h "$file" | cut -f1))"
echo "$file"
