#!/usr/bin/env bash
# npm run worker: one job worker (the built server in the worker role) for the PostgreSQL at
# DATABASE_URL (default: this machine's cluster). Run as many as you like, on any machine that
# reaches the database. The worker serves no pages; it answers GET /_worker/health on its own
# unix socket (.data/run/worker-<pid>.sock, or COUNTERPART_WORKER_SOCKET). If the worker
# process dies it is started again after a second (its unfinished job is failed by the sweep).
# Builds the app first when .output is missing. Jobs run at a lower CPU priority than the web
# process (nice 10, or COUNTERPART_WORKER_NICE; 0 for none): on a machine that serves pages
# too, an import or a robustness run takes the cores the requests leave.
set -uo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$ROOT"

export DATABASE_URL="${DATABASE_URL:-$(database_url)}"
# the worker signs nobody in, but the auth module refuses to boot without an origin
export AUTH_ORIGIN="${AUTH_ORIGIN:-http://worker.invalid/api/auth}"
# the built server refuses to start without the session secret: the one npm start keeps in .data
# (on another machine, set NUXT_AUTH_SECRET as for the web process)
NUXT_AUTH_SECRET="${NUXT_AUTH_SECRET:-$(ensure_auth_secret)}"
export NUXT_AUTH_SECRET
if [ ! -f .output/server/index.mjs ]; then
  log "building the app for the worker"
  mkdir -p "$DATA_DIR"
  npx nuxt build > "$DATA_DIR/build.log" 2>&1 || { tail -40 "$DATA_DIR/build.log"; exit 1; }
fi
mkdir -p "$DATA_DIR/run"
SOCKET="${COUNTERPART_WORKER_SOCKET:-$DATA_DIR/run/worker-$$.sock}"
child=0
quick=0
stop() { [ "$child" != 0 ] && kill "$child" 2>/dev/null; wait 2>/dev/null; rm -f "$SOCKET"; exit 0; }
trap stop INT TERM
while :; do
  rm -f "$SOCKET"
  nice -n "${COUNTERPART_WORKER_NICE:-10}" env -u PORT -u HOST -u NITRO_PORT -u NITRO_HOST COUNTERPART_ROLE=worker NITRO_UNIX_SOCKET="$SOCKET" node .output/server/index.mjs &
  child=$!
  began=$SECONDS
  log "worker $child started (health: curl --unix-socket $SOCKET http://worker/_worker/health)"
  wait "$child"
  rc=$?
  [ "$rc" = 0 ] && break
  if [ $((SECONDS - began)) -lt 10 ]; then quick=$((quick + 1)); else quick=0; fi
  [ "$quick" -ge 5 ] && { log "the worker failed 5 times in a row at start-up; giving up"; rm -f "$SOCKET"; exit 1; }
  log "worker $child ended (exit $rc); starting another in a second"
  sleep 1
done
rm -f "$SOCKET"
