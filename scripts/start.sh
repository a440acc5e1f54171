#!/usr/bin/env bash
# npm start: everything a fresh machine needs, then the app on http://127.0.0.1:3000
# (dependencies, PostgreSQL on loopback, migrations, demo data, mail catcher, production build).
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$ROOT"

APP_PORT="${PORT:-3000}"
ensure_node_modules
bash scripts/pg.sh start "$DB_NAME"
export DATABASE_URL="$(database_url)"
npx tsx scripts/migrate.ts
npx tsx db/seed/index.ts

log "building the app"
npx nuxt build > "$DATA_DIR/build.log" 2>&1 || { tail -40 "$DATA_DIR/build.log"; exit 1; }

mkdir -p "$DATA_DIR/logs"
pids=()
# each helper runs in its own process group (setsid): end the group, children included
cleanup() { for p in "${pids[@]}"; do kill -- "-$p" 2>/dev/null || kill "$p" 2>/dev/null || true; done; }
trap cleanup EXIT INT TERM

SMTP_PORT=2525 HTTP_PORT=2580 MAIL_STORE="$DATA_DIR/mail/messages.json" setsid npx tsx scripts/mail-catcher.ts &
pids+=($!)

export HOST=127.0.0.1 PORT="$APP_PORT"
NUXT_AUTH_SECRET="${NUXT_AUTH_SECRET:-$(ensure_auth_secret)}"
export NUXT_AUTH_SECRET
export AUTH_ORIGIN="http://127.0.0.1:$APP_PORT/api/auth"
export PUBLIC_ORIGIN="http://127.0.0.1:$APP_PORT"
export NUXT_SMTP_PORT=2525 NUXT_MAIL_CATCHER_URL="http://127.0.0.1:2580"
log "Counterpart on http://127.0.0.1:$APP_PORT  (demo accounts: admin@, analyst@, reviewer@counterpart.test / counterpart-demo)"
log "mails caught at http://127.0.0.1:2580/messages; stop with Ctrl-C (PostgreSQL keeps running: npm run db:stop)"
# one job worker beside the web process (more: `npm run worker` on any machine reaching the database)
setsid bash scripts/worker.sh > "$DATA_DIR/logs/worker.log" 2>&1 &
pids+=($!)
COUNTERPART_ROLE=web setsid node .output/server/index.mjs &
pids+=($!)
wait "${pids[-1]}"
