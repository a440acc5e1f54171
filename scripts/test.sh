#!/usr/bin/env bash
# npm test: the same set-up as npm start (on a separate test database and ports), plus Debian's
# chromium, then every suite: vitest (unit and API against the running server) and Playwright.
# Ends with the line "N passed, N failed" over all suites; exits non-zero if anything failed.
set -uo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$ROOT"

TEST_PORT="${COUNTERPART_TEST_PORT:-3100}"
SMTP_TEST_PORT="${COUNTERPART_SMTP_TEST_PORT:-2526}"
MAIL_HTTP_TEST_PORT="${COUNTERPART_MAIL_HTTP_TEST_PORT:-2581}"
TEST_DB=counterpart_test
RESULTS="$ROOT/test-results"
mkdir -p "$RESULTS" "$DATA_DIR/logs"
rm -f "$RESULTS/totals.txt" "$RESULTS/vitest.json" "$RESULTS/playwright.json"

fail_setup() { log "set-up failed: $*"; echo "0 passed, 1 failed" | tee "$RESULTS/totals.txt"; exit 1; }

ensure_node_modules || fail_setup "npm ci"
ensure_chromium || fail_setup "chromium"
started_pg=0
if ! bash scripts/pg.sh status >/dev/null 2>&1; then started_pg=1; fi
bash scripts/pg.sh start >/dev/null || fail_setup "PostgreSQL"
bash scripts/pg.sh recreate "$TEST_DB" || fail_setup "test database"
export DATABASE_URL="$(database_url "$TEST_DB")"
npx tsx scripts/migrate.ts || fail_setup "migrations"
npx tsx db/seed/index.ts || fail_setup "seed"

log "building the app"
npx nuxt build > "$DATA_DIR/build.log" 2>&1 || { tail -40 "$DATA_DIR/build.log"; fail_setup "nuxt build"; }
node cli/bundle.mjs || fail_setup "command-line bundle"

pids=()
cleanup() {
  # each helper runs in its own process group (setsid): end the group, children included
  for p in "${pids[@]}"; do kill -- "-$p" 2>/dev/null || kill "$p" 2>/dev/null || true; done
  wait 2>/dev/null
  if [ "$started_pg" = 1 ]; then bash scripts/pg.sh stop; fi
}
trap cleanup EXIT

export MAIL_CATCHER_URL="http://127.0.0.1:$MAIL_HTTP_TEST_PORT"
SMTP_PORT=$SMTP_TEST_PORT HTTP_PORT=$MAIL_HTTP_TEST_PORT MAIL_STORE="$DATA_DIR/mail/test-messages.json" \
  setsid npx tsx scripts/mail-catcher.ts > "$DATA_DIR/logs/test-mail.log" 2>&1 &
pids+=($!)
rm -f "$DATA_DIR/mail/test-messages.json"

export COUNTERPART_TEST_URL="http://127.0.0.1:$TEST_PORT"
export COUNTERPART_TEST_JOBS=1 # the job-system tests' own job kind (server/services/jobs/testJobs.ts)
# one random secret for the web process and every worker (the tests start more workers with this environment)
export NUXT_AUTH_SECRET="$(random_secret)"
HOST=127.0.0.1 PORT=$TEST_PORT \
  AUTH_ORIGIN="$COUNTERPART_TEST_URL/api/auth" PUBLIC_ORIGIN="$COUNTERPART_TEST_URL" \
  NUXT_SMTP_PORT=$SMTP_TEST_PORT NUXT_MAIL_CATCHER_URL="$MAIL_CATCHER_URL" \
  COUNTERPART_ROLE=web setsid node .output/server/index.mjs > "$DATA_DIR/logs/test-app.log" 2>&1 &
pids+=($!)
# the jobs run in a separate worker process, as in production (tests/api/jobs-*.test.ts start more)
export COUNTERPART_WORKER_SOCKET="$DATA_DIR/run/test-worker.sock"
export COUNTERPART_WORKER_NICE=0 # the job tests time the worker: full speed beside the test runner
NUXT_SMTP_PORT=$SMTP_TEST_PORT NUXT_MAIL_CATCHER_URL="$MAIL_CATCHER_URL" \
  setsid bash scripts/worker.sh > "$DATA_DIR/logs/test-worker.log" 2>&1 &
pids+=($!)
for _ in $(seq 1 60); do
  curl -sf "$COUNTERPART_TEST_URL/api/auth/csrf" >/dev/null 2>&1 && break
  sleep 0.5
done
curl -sf "$COUNTERPART_TEST_URL/api/auth/csrf" >/dev/null 2>&1 || { tail -30 "$DATA_DIR/logs/test-app.log"; fail_setup "server did not start"; }
for _ in $(seq 1 60); do
  curl -sf --unix-socket "$COUNTERPART_WORKER_SOCKET" http://worker/_worker/health >/dev/null 2>&1 && break
  sleep 0.5
done
curl -sf --unix-socket "$COUNTERPART_WORKER_SOCKET" http://worker/_worker/health >/dev/null 2>&1 || { tail -30 "$DATA_DIR/logs/test-worker.log"; fail_setup "worker did not start"; }

log "vitest"
npx vitest run --reporter=default --reporter=json --outputFile.json="$RESULTS/vitest.json"
vitest_rc=$?

log "playwright"
PLAYWRIGHT_JSON_OUTPUT_NAME="$RESULTS/playwright.json" npx playwright test --reporter=list,json
pw_rc=$?

node scripts/test-totals.mjs "$RESULTS/vitest.json" "$RESULTS/playwright.json"
totals_rc=$?
[ $vitest_rc = 0 ] && [ $pw_rc = 0 ] && [ $totals_rc = 0 ]
