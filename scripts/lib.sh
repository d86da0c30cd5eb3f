# Shared by scripts/start.sh and scripts/test.sh: install what is missing, start services.
root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$root"

say() { echo "[crankledger] $*"; }

ensure_node_modules() {
  # A symlinked node_modules belongs to another checkout (a worktree): never reinstall through it.
  [[ -L node_modules && -x node_modules/.bin/nuxt ]] && return 0
  if [[ ! -x node_modules/.bin/nuxt || package-lock.json -nt node_modules/.package-lock.json ]]; then
    say "installing node modules (npm ci)"
    npm ci --no-audit --no-fund
  fi
}

# The browser tests drive Debian's Chromium (never a downloaded browser); a fresh machine lacks it.
ensure_chromium() {
  [[ -x /usr/bin/chromium ]] && return 0
  say "chromium is missing: installing Debian's package (apt-get) for the browser tests"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq >/dev/null
  apt-get install -y -qq chromium >/dev/null
}

# A secret that survives restarts, so that sessions do too; never committed.
ensure_session_secret() {
  local file="$root/.data/session-secret"
  mkdir -p "$root/.data"
  if [[ ! -s "$file" ]]; then node -e "process.stdout.write(require('crypto').randomBytes(32).toString('hex'))" > "$file"; chmod 600 "$file"; fi
  export NUXT_SESSION_PASSWORD="${NUXT_SESSION_PASSWORD:-$(cat "$file")}"
}

wait_for_port() { # host port seconds
  local host=$1 port=$2 deadline=$((SECONDS + ${3:-30}))
  until (exec 3<>"/dev/tcp/$host/$port") 2>/dev/null; do
    if (( SECONDS > deadline )); then say "nothing listens on $host:$port"; return 1; fi
    sleep 0.2
  done
}

start_maildev() { # smtp-port web-port dir
  mkdir -p "$3"
  node_modules/.bin/maildev --smtp "$1" --web "$2" --ip 127.0.0.1 --web-ip 127.0.0.1 --mail-directory "$3" --silent > "$3/maildev.log" 2>&1 &
  MAILDEV_PID=$!
  wait_for_port 127.0.0.1 "$1" 30
}

# The local stand-in for the payment service (invoices): port, webhook URL, log dir.
start_payment_fake() {
  mkdir -p "$3"
  CL_PAYMENT_PORT="$1" CL_PAYMENT_WEBHOOK_URL="$2" node_modules/.bin/tsx scripts/payment-fake.ts > "$3/payment-fake.log" 2>&1 &
  PAYMENT_FAKE_PID=$!
  wait_for_port 127.0.0.1 "$1" 30
}
