#!/usr/bin/env bash
# `npm test`: provision a separate MariaDB instance (port 3408) and maildev, build once,
# run unit and end-to-end tests with Vitest, stop everything, exit non-zero on any failure.
set -euo pipefail
source "$(dirname "$0")/lib.sh"

export CL_TEST_PORT="${CL_TEST_PORT:-3390}"
export NUXT_SMTP_PORT="${NUXT_SMTP_PORT:-1027}"
export CL_MAILDEV_WEB="${CL_MAILDEV_WEB:-1082}"
export NUXT_PUBLIC_URL="http://127.0.0.1:$CL_TEST_PORT"
export CL_PAYMENT_PORT="${CL_PAYMENT_PORT:-12112}"
export NUXT_PAYMENT_PORT="$CL_PAYMENT_PORT"
export NUXT_SESSION_PASSWORD="test-session-password-0123456789abcdef"
export NUXT_STORAGE_DIR="$root/.data-test/files"
# A small upload cap so the size-limit test need not send 200 MiB.
export NUXT_LOGGER_MAX_BYTES=4000000
# Expired resumable uploads are looked for every 2 s, so the clean-up test need not wait an hour.
export NUXT_UPLOAD_CLEANUP_SCHEDULE='*/2 * * * * *'
# Small parts, so that the browser test's file goes up in several.
export NUXT_PUBLIC_UPLOAD_PART_BYTES=65536

bash db/mariadb.sh ensure-installed
ensure_chromium
ensure_node_modules

MAILDEV_PID=""; PAYMENT_FAKE_PID=""
cleanup() {
  trap - INT TERM EXIT
  [[ -n "$MAILDEV_PID" ]] && kill "$MAILDEV_PID" 2>/dev/null || true
  [[ -n "$PAYMENT_FAKE_PID" ]] && kill "$PAYMENT_FAKE_PID" 2>/dev/null || true
  bash db/mariadb.sh stop test || true
}
trap cleanup INT TERM EXIT

bash db/mariadb.sh start test
export NUXT_DATABASE_URL="$(bash db/mariadb.sh url test)"
npx tsx db/cli.ts reset
rm -rf "$NUXT_STORAGE_DIR"

rm -rf "$root/.data-test/maildev"
start_maildev "$NUXT_SMTP_PORT" "$CL_MAILDEV_WEB" "$root/.data-test/maildev"
start_payment_fake "$CL_PAYMENT_PORT" "$NUXT_PUBLIC_URL/api/billing/webhook" "$root/.data-test/payment-fake"

say "type-checking (vue-tsc: pages, components, server, tests)"
npx nuxt typecheck

say "building the app for the end-to-end tests"
npx nuxt build > "$root/.data-test/build.log" 2>&1 || { tail -60 "$root/.data-test/build.log"; exit 1; }

npx vitest run "$@"
