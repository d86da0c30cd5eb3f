#!/usr/bin/env bash
# `npm run test:cluster`: the scale-out faults on a three-node Galera cluster (db/galera.sh), an
# S3-compatible store (s3rver, started by the tests) and two app instances. Separate from
# `npm test`, which keeps its single database; .ci/run calls this one after it.
set -euo pipefail
source "$(dirname "$0")/lib.sh"

export CL_GALERA_DIR="${CL_GALERA_DIR:-$root/.data-test/galera}"
export CL_DB_NAME="${CL_DB_NAME:-crankledger_cluster}"
export CL_S3_PORT="${CL_S3_PORT:-4591}"
export CL_CLUSTER_APP_A="${CL_CLUSTER_APP_A:-3466}" CL_CLUSTER_APP_B="${CL_CLUSTER_APP_B:-3467}"
export NUXT_SMTP_PORT="${CL_CLUSTER_SMTP_PORT:-1047}"
export CL_CLUSTER_MAILDEV_WEB="${CL_CLUSTER_MAILDEV_WEB:-1048}"
export NUXT_SESSION_PASSWORD="test-session-password-0123456789abcdef"
export NUXT_LOGGER_MAX_BYTES=4000000

bash db/galera.sh ensure-installed
ensure_node_modules

MAILDEV_PID=""
cleanup() {
  trap - INT TERM EXIT
  [[ -n "$MAILDEV_PID" ]] && kill "$MAILDEV_PID" 2>/dev/null || true
  bash db/galera.sh stop || true
}
trap cleanup INT TERM EXIT

# A fresh cluster every run: three empty nodes, the demo data through node 1.
bash db/galera.sh stop >/dev/null 2>&1 || true
rm -rf "$CL_GALERA_DIR" "$root/.data-test/s3"
bash db/galera.sh start
NUXT_DATABASE_URL="$(bash db/galera.sh urls | head -1)" npx tsx db/cli.ts reset

rm -rf "$root/.data-test/maildev-cluster"
start_maildev "$NUXT_SMTP_PORT" "$CL_CLUSTER_MAILDEV_WEB" "$root/.data-test/maildev-cluster"

# `npm test` has just built the app on CI; a stand-alone run builds when the sources are newer.
if [[ ! -f .output/server/index.mjs ]] || [[ -n "$(find server shared tasks db pages components composables nuxt.config.ts \( -name "*.ts" -o -name "*.vue" \) -newer .output/server/index.mjs -type f -print -quit)" ]]; then
  say "building the app for the cluster suite"
  mkdir -p "$root/.data-test"
  npx nuxt build > "$root/.data-test/build-cluster.log" 2>&1 || { tail -60 "$root/.data-test/build-cluster.log"; exit 1; }
fi

npx vitest run --config vitest.cluster.config.ts "$@"
