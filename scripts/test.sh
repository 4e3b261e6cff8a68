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
trap 'stop_started' EXIT
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
node_modules/.bin/tsx db/migrate.ts
node_modules/.bin/tsx db/seed.ts

status=0
say "Typecheck…"
if node_modules/.bin/react-router typegen && node_modules/.bin/tsc; then
  echo '{"passed":1,"failed":0}' > "$RESULTS/typecheck.json"
else
  echo '{"passed":0,"failed":1}' > "$RESULTS/typecheck.json"
fi

say "Unit tests…"
node_modules/.bin/vitest run --project unit ${CW_TEST_FILTER:-} --reporter=default --reporter=json \
  --outputFile.json="$RESULTS/unit.json" || true

say "Building the app…"
if ! node_modules/.bin/react-router build >"$RESULTS/build.log" 2>&1; then
  cat "$RESULTS/build.log"
  echo '{"passed":0,"failed":1}' > "$RESULTS/build.json"
else
  echo '{"passed":1,"failed":0}' > "$RESULTS/build.json"
  start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT"
  port_free "$APP_PORT" || die "Port $APP_PORT is taken (set CHILLWRIGHT_TEST_PORT)."
  HOST=127.0.0.1 PORT="$APP_PORT" node_modules/.bin/react-router-serve ./build/server/index.js >"$RESULTS/app.log" 2>&1 &
  STARTED_PIDS+=($!)
  wait_for_url "$APP_URL/healthz" 30 || { tail -n 40 "$RESULTS/app.log"; die "the app did not start"; }

  say "Integration tests…"
  node_modules/.bin/vitest run --project integration ${CW_TEST_FILTER:-} --reporter=default --reporter=json \
    --outputFile.json="$RESULTS/integration.json" || true

  if [ -z "${CW_SKIP_E2E:-}" ]; then
    say "End-to-end tests (Chromium)…"
    PLAYWRIGHT_JSON_OUTPUT_NAME="$RESULTS/e2e.json" node_modules/.bin/playwright test ${CW_E2E_FILTER:-} --reporter=list,json || true
  fi
fi

node scripts/test-summary.mjs "$RESULTS" || status=1
exit $status
