#!/usr/bin/env bash
# npm run bench:server / bench:faults: the built app under load on loopback, from a clean clone.
# Sets up PostgreSQL (a scratch database chillwright_bench, recreated each run), builds the app and
# starts maildev; tests/bench/server.ts then starts the app itself (so it can kill and restart it),
# seeds an invented kitchen, runs the phases and prints the figures.
#   bash scripts/bench-server.sh load|faults|all
# Ports (defaults clear of npm test's and the demo's): CHILLWRIGHT_BENCH_PORT (app, 3201),
# CHILLWRIGHT_BENCH_SMTP_PORT (1226), CHILLWRIGHT_BENCH_MAIL_WEB_PORT (1281); CHILLWRIGHT_PG_PORT as usual.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
MODE="${1:-load}"
case "$MODE" in load|faults|all) ;; *) die "Usage: bash scripts/bench-server.sh load|faults|all" ;; esac
APP_PORT="${CHILLWRIGHT_BENCH_PORT:-3201}"
SMTP_PORT="${CHILLWRIGHT_BENCH_SMTP_PORT:-1226}"
MAIL_WEB_PORT="${CHILLWRIGHT_BENCH_MAIL_WEB_PORT:-1281}"
trap 'stop_started' EXIT
trap 'exit 130' INT TERM

ensure_node_modules
ensure_postgres
ensure_auth_secret

say "Recreating the bench database chillwright_bench…"
recreate_database chillwright_bench
export DATABASE_URL="$(pg_url chillwright_bench)"
export AUTH_SECRET
export APP_URL="http://127.0.0.1:$APP_PORT" APP_PORT
export SMTP_HOST=127.0.0.1 SMTP_PORT
export MAILDEV_URL="http://127.0.0.1:$MAIL_WEB_PORT"
export MAIL_FROM="Chillwright bench <no-reply@chillwright.test>"
export TRUST_PROXY=1
export NODE_ENV=production
# The fault phase restarts this cluster: the orchestrator needs its programs and folder.
export PG_BIN PG_DATA PG_LOG
node_modules/.bin/tsx db/migrate.ts
# The app runs as the runtime role, as in the demo and the tests; the scenario is seeded as the owner.
ensure_runtime_login
export APP_DATABASE_URL="$(runtime_url chillwright_bench)"

say "Building the app…"
node_modules/.bin/react-router build >"$DATA/bench-build.log" 2>&1 || { cat "$DATA/bench-build.log"; die "the build failed"; }
start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT"
port_free "$APP_PORT" || die "Port $APP_PORT is taken (set CHILLWRIGHT_BENCH_PORT)."

say "Uptime before: $(uptime)"
node_modules/.bin/tsx tests/bench/server.ts "$MODE"
