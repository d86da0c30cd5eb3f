#!/usr/bin/env bash
# `npm run bench:cluster`: bench/cluster.ts on a fresh three-node Galera cluster with the demo data.
set -euo pipefail
source "$(dirname "$0")/lib.sh"

export CL_GALERA_DIR="${CL_GALERA_DIR:-$root/.data-test/galera}"
export CL_DB_NAME="${CL_DB_NAME:-crankledger_cluster}"
export CL_S3_PORT="${CL_S3_PORT:-4591}"
export CL_CLUSTER_APP_A="${CL_CLUSTER_APP_A:-3466}" CL_CLUSTER_APP_B="${CL_CLUSTER_APP_B:-3467}"
export NUXT_SESSION_PASSWORD="bench-session-password-0123456789abcdef"

bash db/galera.sh ensure-installed
ensure_node_modules
trap 'bash db/galera.sh stop || true' INT TERM EXIT
bash db/galera.sh stop >/dev/null 2>&1 || true
rm -rf "$CL_GALERA_DIR" "$root/.data-test/s3"
bash db/galera.sh start
NUXT_DATABASE_URL="$(bash db/galera.sh urls | head -1)" npx tsx db/cli.ts reset
[[ -f .output/server/index.mjs ]] || npx nuxt build
npx tsx bench/cluster.ts
