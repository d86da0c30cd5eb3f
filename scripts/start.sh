#!/usr/bin/env bash
# `npm start`: set up everything on a fresh machine and run the app on the demo data.
# Ctrl-C stops what it started; a second run reuses the data in .data/.
set -euo pipefail
source "$(dirname "$0")/lib.sh"

export PORT="${PORT:-3000}"
export NUXT_SMTP_PORT="${NUXT_SMTP_PORT:-1026}"
MAILDEV_WEB="${MAILDEV_WEB:-1081}"
export NUXT_PUBLIC_URL="${NUXT_PUBLIC_URL:-http://localhost:$PORT}"
export CL_PAYMENT_PORT="${CL_PAYMENT_PORT:-12111}"
export NUXT_PAYMENT_PORT="$CL_PAYMENT_PORT"

bash db/mariadb.sh ensure-installed
ensure_node_modules
ensure_session_secret

SERVER_PID=""; MAILDEV_PID=""; PAYMENT_FAKE_PID=""
cleanup() {
  trap - INT TERM EXIT
  say "stopping"
  [[ -n "$SERVER_PID" ]] && kill "$SERVER_PID" 2>/dev/null && wait "$SERVER_PID" 2>/dev/null || true
  [[ -n "$MAILDEV_PID" ]] && kill "$MAILDEV_PID" 2>/dev/null || true
  [[ -n "$PAYMENT_FAKE_PID" ]] && kill "$PAYMENT_FAKE_PID" 2>/dev/null || true
  bash db/mariadb.sh stop dev || true
}
trap cleanup INT TERM EXIT

bash db/mariadb.sh start dev
export NUXT_DATABASE_URL="${NUXT_DATABASE_URL:-$(bash db/mariadb.sh url dev)}"
npx tsx db/cli.ts migrate
npx tsx db/cli.ts seed

start_maildev "$NUXT_SMTP_PORT" "$MAILDEV_WEB" "$root/.data/maildev"
start_payment_fake "$CL_PAYMENT_PORT" "http://127.0.0.1:$PORT/api/billing/webhook" "$root/.data/payment-fake"

say "building the app"
npx nuxt build > "$root/.data/build.log" 2>&1 || { tail -40 "$root/.data/build.log"; exit 1; }

NITRO_HOST="${NITRO_HOST:-127.0.0.1}" node .output/server/index.mjs &
SERVER_PID=$!
wait_for_port 127.0.0.1 "$PORT" 60

cat <<INFO

  Crankledger is running at http://localhost:$PORT
  Mail caught by maildev:    http://127.0.0.1:$MAILDEV_WEB
  Payment service (fake):    http://127.0.0.1:$CL_PAYMENT_PORT (invoices; state at /_fake/state)

  Demo sign-ins (password for all: $(npx tsx -e "import('./db/seeds/demo.ts').then(m => process.stdout.write(m.DEMO_PASSWORD))")):
    admin@keelbrook.test      admin
    engineer@keelbrook.test   supplier engineer
    workshop@keelbrook.test   mechanic (supplier workshop)
    manager@marlowe.test      team manager, Marlowe Vane Racing
    race@marlowe.test         race engineer, Marlowe Vane Racing
    mechanic@marlowe.test     mechanic, Marlowe Vane Racing
    manager@tidewater.test    team manager, Tidewater Apex Motorsport

  Ctrl-C stops the app, maildev, the payment fake and MariaDB.
INFO
wait "$SERVER_PID"
