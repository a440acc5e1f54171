#!/usr/bin/env bash
# For working on one suite: build and start the test server (as npm test does) and leave it running.
# Then: COUNTERPART_TEST_URL=http://127.0.0.1:3100 npx playwright test e2e/x.spec.ts  (or npx vitest run --project api)
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$ROOT"
PORT_="${COUNTERPART_TEST_PORT:-3100}"
bash scripts/pg.sh start counterpart_test
export DATABASE_URL="$(database_url counterpart_test)"
npx tsx scripts/migrate.ts && npx tsx db/seed/index.ts
[ "${SKIP_BUILD:-}" = 1 ] || npx nuxt build > "$DATA_DIR/build.log" 2>&1 || { tail -30 "$DATA_DIR/build.log"; exit 1; }
free_port() { for pid in $(ss -ltnpH "sport = :$1" 2>/dev/null | grep -o 'pid=[0-9]*' | cut -d= -f2 | sort -u); do kill "$pid"; done; }
free_port "$PORT_"; free_port 2526
sleep 0.5
SMTP_PORT=2526 HTTP_PORT=2581 MAIL_STORE="$DATA_DIR/mail/test-messages.json" nohup npx tsx scripts/mail-catcher.ts > "$DATA_DIR/logs/test-mail.log" 2>&1 &
HOST=127.0.0.1 PORT=$PORT_ NUXT_AUTH_SECRET="$(random_secret)" AUTH_ORIGIN="http://127.0.0.1:$PORT_/api/auth" \
  PUBLIC_ORIGIN="http://127.0.0.1:$PORT_" NUXT_SMTP_PORT=2526 NUXT_MAIL_CATCHER_URL=http://127.0.0.1:2581 \
  nohup node .output/server/index.mjs > "$DATA_DIR/logs/test-app.log" 2>&1 &
echo "test server on http://127.0.0.1:$PORT_ (pid $!)"
