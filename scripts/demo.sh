#!/usr/bin/env bash
# npm run demo: set everything up on this machine and start Chillwright on http://127.0.0.1:3000.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
APP_PORT="${PORT:-3000}"
SMTP_PORT="${CHILLWRIGHT_SMTP_PORT:-1025}"
MAIL_WEB_PORT="${CHILLWRIGHT_MAIL_WEB_PORT:-1080}"

trap 'stop_started' EXIT
trap 'echo; say "Stopping…"; exit 0' INT TERM

ensure_node_modules
ensure_postgres
ensure_database chillwright
ensure_auth_secret

export DATABASE_URL="$(pg_url chillwright)"
export AUTH_SECRET
export APP_URL="http://127.0.0.1:$APP_PORT"
export SMTP_HOST=127.0.0.1 SMTP_PORT
export MAIL_FROM="${MAIL_FROM:-Chillwright <no-reply@chillwright.local>}"
export NODE_ENV=production

say "Applying migrations…"
node_modules/.bin/tsx db/migrate.ts
say "Seeding the demo scenario (skipped when present)…"
node_modules/.bin/tsx db/seed.ts
ensure_runtime_login

port_free "$APP_PORT" || die "Port $APP_PORT is taken: stop what uses it (or set PORT) and run again."
start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT"

if [ ! -f build/server/index.js ] || [ -n "$(find app db -newer build/server/index.js -print -quit)" ]; then
  say "Building the app…"
  node_modules/.bin/react-router build >"$DATA/build.log" 2>&1 || { cat "$DATA/build.log"; die "build failed"; }
fi

DATABASE_URL="$(runtime_url chillwright)" HOST=127.0.0.1 PORT="$APP_PORT" node scripts/serve.mjs ./build/server/index.js >"$DATA/app.log" 2>&1 &
STARTED_PIDS+=($!)
wait_for_url "$APP_URL/healthz" 30 || { tail -n 40 "$DATA/app.log"; die "the app did not start; see .data/app.log"; }

node_modules/.bin/tsx db/demo-batches.ts
node_modules/.bin/tsx db/seed.ts --print
cat <<MSG

  Chillwright is running:  $APP_URL
  Mail inbox (maildev):    http://127.0.0.1:$MAIL_WEB_PORT
  App log:                 .data/app.log

  Press Ctrl-C to stop everything this started.
MSG
wait -n "${STARTED_PIDS[@]}"
