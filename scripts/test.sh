#!/usr/bin/env bash
# npm test: everything, from a clean clone. Sets up PostgreSQL, maildev and Chromium, then runs the
# typecheck, unit, integration (real database, real SMTP) and end-to-end (real browser) suites, and
# ends with one line: "N passed, N failed".
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
APP_PORT="${CHILLWRIGHT_TEST_PORT:-3101}"
SMTP_PORT="${CHILLWRIGHT_TEST_SMTP_PORT:-1125}"
MAIL_WEB_PORT="${CHILLWRIGHT_TEST_MAIL_WEB_PORT:-1180}"
RESULTS="$ROOT/test-results"
# A test that stops and restarts maildev (SMTP outage) leaves the new one to this cleanup.
trap 'stop_started; if [ -f "$DATA/maildev-$SMTP_PORT.pid" ]; then kill "$(cat "$DATA/maildev-$SMTP_PORT.pid")" 2>/dev/null || true; fi' EXIT
trap 'exit 130' INT TERM

ensure_node_modules
ensure_postgres
ensure_chromium
ensure_auth_secret
rm -rf "$RESULTS"
mkdir -p "$RESULTS"

say "Recreating the test database chillwright_test…"
recreate_database chillwright_test
export DATABASE_URL="$(pg_url chillwright_test)"
export AUTH_SECRET
export APP_URL="http://127.0.0.1:$APP_PORT"
export SMTP_HOST=127.0.0.1 SMTP_PORT
export MAILDEV_URL="http://127.0.0.1:$MAIL_WEB_PORT"
export MAIL_FROM="Chillwright test <no-reply@chillwright.test>"
export TRUST_PROXY=1
export NODE_ENV=production
# Alerts on a short clock so the suites see sweeps, retries and escalations in seconds.
export ALERT_SWEEP_SECONDS=1 ALERT_SETTLE_SECONDS=2 ALERT_POLL_SECONDS=0.5 ALERT_RETRY_DELAY_SECONDS=1 ALERT_RETRY_LIMIT=12
export SECOND_APP_URL="http://127.0.0.1:$((APP_PORT + 1))"
export MAILDEV_SMTP_PORT="$SMTP_PORT" MAILDEV_WEB_PORT="$MAIL_WEB_PORT" MAILDEV_PID_FILE="$DATA/maildev-$SMTP_PORT.pid"
node_modules/.bin/tsx db/migrate.ts
node_modules/.bin/tsx db/seed.ts
# The suites set up their scenarios as the owner; the app processes run as the runtime role.
ensure_runtime_login
export RUNTIME_DATABASE_URL="$(runtime_url chillwright_test)"

status=0
say "Typecheck…"
if node_modules/.bin/react-router typegen && node_modules/.bin/tsc; then
  echo '{"passed":1,"failed":0}' > "$RESULTS/typecheck.json"
else
  echo '{"passed":0,"failed":1}' > "$RESULTS/typecheck.json"
fi

say "Unit tests…"
node_modules/.bin/vitest run --project unit ${CW_TEST_FILTER:-} --passWithNoTests --reporter=default --reporter=json \
  --outputFile.json="$RESULTS/unit.json" || true

say "Building the app…"
if ! node_modules/.bin/react-router build >"$RESULTS/build.log" 2>&1; then
  cat "$RESULTS/build.log"
  echo '{"passed":0,"failed":1}' > "$RESULTS/build.json"
else
  echo '{"passed":1,"failed":0}' > "$RESULTS/build.json"
  # A maildev left by an interrupted run of this suite (the SMTP-outage test restarts its own) goes first.
  if [ -f "$DATA/maildev-$SMTP_PORT.pid" ]; then kill "$(cat "$DATA/maildev-$SMTP_PORT.pid")" 2>/dev/null || true; fi
  start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT"
  port_free "$APP_PORT" || die "Port $APP_PORT is taken (set CHILLWRIGHT_TEST_PORT)."
  # The app as it runs in production: scripts/serve.mjs, one app process per core behind one port.
  DATABASE_URL="$RUNTIME_DATABASE_URL" HOST=127.0.0.1 PORT="$APP_PORT" node scripts/serve.mjs ./build/server/index.js >"$RESULTS/app.log" 2>&1 &
  STARTED_PIDS+=($!)
  # A second server, a single app process: more alert workers share the queue, as in a deployment
  # with two servers.
  port_free "$((APP_PORT + 1))" || die "Port $((APP_PORT + 1)) is taken (set CHILLWRIGHT_TEST_PORT)."
  DATABASE_URL="$RUNTIME_DATABASE_URL" HOST=127.0.0.1 PORT="$((APP_PORT + 1))" WEB_CONCURRENCY=1 node scripts/serve.mjs ./build/server/index.js >"$RESULTS/app-2.log" 2>&1 &
  STARTED_PIDS+=($!)
  wait_for_url "$APP_URL/healthz" 30 || { tail -n 40 "$RESULTS/app.log"; die "the app did not start"; }
  wait_for_url "$SECOND_APP_URL/healthz" 30 || { tail -n 40 "$RESULTS/app-2.log"; die "the second app process did not start"; }

  say "Integration tests…"
  node_modules/.bin/vitest run --project integration ${CW_TEST_FILTER:-} --passWithNoTests --reporter=default --reporter=json \
    --outputFile.json="$RESULTS/integration.json" || true

  if [ -z "${CW_SKIP_E2E:-}" ]; then
    say "End-to-end tests (Chromium)…"
    PLAYWRIGHT_JSON_OUTPUT_NAME="$RESULTS/e2e.json" node_modules/.bin/playwright test ${CW_E2E_FILTER:-} --reporter=list,json || true
  fi
fi

node scripts/test-summary.mjs "$RESULTS" || status=1
exit $status
