# Rimwatch local services: a private PostgreSQL cluster, the S3-compatible fake and the SMTP fake.
# Source this file, then `services_up dev|test`; `services_down` stops what it started.
# Anything already configured in the environment (DATABASE_URL, S3_ENDPOINT, SMTP_HOST) is used as it is
# and not started here: pointing Rimwatch at real services is only a matter of setting those variables.

RW_ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
RW_PIDS=()
RW_PG_DATA=""
RW_RUN_DIR=""

rw_log() { printf '[rimwatch] %s\n' "$*" >&2; }

rw_free_port() {
  node -e 'const s=require("net").createServer();s.listen(0,"127.0.0.1",()=>{console.log(s.address().port);s.close()})'
}

rw_pg_bin() {
  local d
  for d in /usr/lib/postgresql/*/bin; do
    [ -x "$d/initdb" ] && { echo "$d"; return 0; }
  done
  return 1
}

rw_ensure_postgres_installed() {
  if ! rw_pg_bin >/dev/null; then
    rw_log "PostgreSQL not found: installing Debian's postgresql package"
    if [ "$(id -u)" = 0 ]; then
      apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
    else
      sudo apt-get update -qq && sudo DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
    fi
  fi
  rw_pg_bin >/dev/null || { rw_log "PostgreSQL is still missing; set DATABASE_URL to use another server"; return 1; }
}

# Runs a PostgreSQL binary as the postgres user when we are root (PostgreSQL refuses to run as root).
rw_as_pg() {
  if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi
}

rw_wait_line() { # file, pattern, seconds
  local i
  for ((i = 0; i < $3 * 10; i++)); do
    grep -q "$2" "$1" 2>/dev/null && return 0
    sleep 0.1
  done
  rw_log "timed out waiting for '$2' in $1:"; tail -20 "$1" >&2
  return 1
}

rw_start_postgres() { # mode
  local mode="$1" bin port
  bin="$(rw_pg_bin)"
  if [ "$mode" = test ]; then
    port="$(rw_free_port)"
    RW_PG_DATA="$RW_RUN_DIR/pg"
  else
    port="${RIMWATCH_PG_PORT:-54329}"
    RW_PG_DATA="$RW_ROOT/.data/dev/pg"
  fi
  mkdir -p "$(dirname "$RW_PG_DATA")"
  if [ ! -f "$RW_PG_DATA/PG_VERSION" ]; then
    mkdir -p "$RW_PG_DATA"
    [ "$(id -u)" = 0 ] && chown postgres:postgres "$RW_PG_DATA"
    chmod 700 "$RW_PG_DATA"
    rw_as_pg "$bin/initdb" -D "$RW_PG_DATA" -U postgres -A trust -E UTF8 --locale=C.UTF-8 >"$RW_PG_DATA.initdb.log" 2>&1 \
      || { cat "$RW_PG_DATA.initdb.log" >&2; return 1; }
  fi
  local opts="-c listen_addresses=127.0.0.1 -p $port -k $RW_PG_DATA"
  [ "$mode" = test ] && opts="$opts -c fsync=off -c synchronous_commit=off -c full_page_writes=off"
  if ! rw_as_pg "$bin/pg_ctl" -D "$RW_PG_DATA" status >/dev/null 2>&1; then
    rw_as_pg "$bin/pg_ctl" -D "$RW_PG_DATA" -l "$RW_PG_DATA/server.log" -w -t 30 -o "$opts" start >/dev/null \
      || { tail -20 "$RW_PG_DATA/server.log" >&2; return 1; }
  fi
  RW_PG_STARTED=1
  "$bin/psql" -h 127.0.0.1 -p "$port" -U postgres -tAc "select 1 from pg_database where datname='rimwatch'" | grep -q 1 \
    || "$bin/createdb" -h 127.0.0.1 -p "$port" -U postgres rimwatch
  export DATABASE_URL="postgres://postgres@127.0.0.1:$port/rimwatch"
  export RW_PG_PORT="$port"
  rw_log "PostgreSQL on 127.0.0.1:$port (data in ${RW_PG_DATA#$RW_ROOT/})"
}

rw_stop_postgres() {
  [ -n "${RW_PG_STARTED:-}" ] || return 0
  local bin; bin="$(rw_pg_bin)" || return 0
  rw_as_pg "$bin/pg_ctl" -D "$RW_PG_DATA" -m fast -w stop >/dev/null 2>&1 || true
  RW_PG_STARTED=""
}

rw_start_fake_s3() {
  local mode="$1" port dir log
  if [ "$mode" = test ]; then port="$(rw_free_port)"; dir="$RW_RUN_DIR/s3"; else port="${RIMWATCH_S3_PORT:-54330}"; dir="$RW_ROOT/.data/dev/s3"; fi
  mkdir -p "$dir"
  log="$dir.log"
  export S3_ENDPOINT="http://127.0.0.1:$port" S3_REGION="us-east-1" S3_BUCKET="rimwatch-films"
  export S3_ACCESS_KEY_ID="S3RVER" S3_SECRET_ACCESS_KEY="S3RVER" S3_FORCE_PATH_STYLE="true"
  FAKE_S3_PORT="$port" FAKE_S3_DIR="$dir" setsid node --import tsx "$RW_ROOT/storage/fake-s3.ts" >"$log" 2>&1 &
  RW_PIDS+=("$!")
  export RW_S3_PID="$!"
  rw_wait_line "$log" "listening" 30 || return 1
  rw_log "S3-compatible fake on $S3_ENDPOINT (objects in ${dir#$RW_ROOT/})"
}

rw_start_fake_smtp() {
  local mode="$1" port dir log
  if [ "$mode" = test ]; then port="$(rw_free_port)"; dir="$RW_RUN_DIR/mail"; else port="${RIMWATCH_SMTP_PORT:-54325}"; dir="$RW_ROOT/.data/dev/mail"; fi
  mkdir -p "$dir"
  log="$dir.log"
  export SMTP_HOST="127.0.0.1" SMTP_PORT="$port" SMTP_SECURE="false"
  export MAIL_FROM="${MAIL_FROM:-Rimwatch <rimwatch@larkmoor.example>}"
  FAKE_SMTP_PORT="$port" FAKE_SMTP_DIR="$dir" setsid node --import tsx "$RW_ROOT/scripts/smtp-fake.ts" >"$log" 2>&1 &
  RW_PIDS+=("$!")
  export RW_SMTP_PID="$!"
  export FAKE_SMTP_DIR="$dir"
  rw_wait_line "$log" "listening" 30 || return 1
  rw_log "SMTP fake on 127.0.0.1:$port (messages saved in ${dir#$RW_ROOT/})"
}

services_up() { # dev | test
  local mode="${1:-dev}"
  if [ "$mode" = test ]; then
    RW_RUN_DIR="$(mktemp -d "$RW_ROOT/.data/test-XXXXXX" 2>/dev/null || { mkdir -p "$RW_ROOT/.data"; mktemp -d "$RW_ROOT/.data/test-XXXXXX"; })"
    chmod 755 "$RW_RUN_DIR"
  else
    RW_RUN_DIR="$RW_ROOT/.data/dev"; mkdir -p "$RW_RUN_DIR"
  fi
  export RW_RUN_DIR
  if [ -z "${DATABASE_URL:-}" ]; then
    rw_ensure_postgres_installed && rw_start_postgres "$mode" || return 1
  else
    rw_log "using DATABASE_URL from the environment"
  fi
  if [ -z "${S3_ENDPOINT:-}" ] && [ -z "${S3_BUCKET:-}" ]; then rw_start_fake_s3 "$mode" || return 1; else rw_log "using the S3 bucket from the environment"; fi
  if [ -z "${SMTP_HOST:-}" ]; then rw_start_fake_smtp "$mode" || return 1; else rw_log "using the SMTP relay from the environment"; fi
}

services_down() {
  local pid f
  for pid in "${RW_PIDS[@]}"; do kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true; done
  RW_PIDS=()
  # A service a test stopped and started again (tests/integration/faults.test.ts) leaves its pid here.
  if [ -n "$RW_RUN_DIR" ]; then
    for f in "$RW_RUN_DIR"/restarted-*.pid; do
      [ -f "$f" ] && { pid="$(cat "$f")"; kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true; rm -f "$f"; }
    done
  fi
  rw_stop_postgres
  if [ -n "$RW_RUN_DIR" ] && [[ "$RW_RUN_DIR" == */.data/test-* ]] && [ -z "${KEEP_TEST_DATA:-}" ]; then rm -rf "$RW_RUN_DIR"; fi
}

rw_migrate() {
  (cd "$RW_ROOT" && node --import tsx node_modules/knex/bin/cli.js migrate:latest --knexfile knexfile.ts >/dev/null) \
    || { rw_log "migrations failed"; return 1; }
  rw_log "database migrated"
}

rw_ensure_node_modules() {
  cd "$RW_ROOT" || return 1
  if [ ! -d node_modules ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    rw_log "installing npm dependencies (npm ci)"
    PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1 npm ci --no-audit --no-fund >/dev/null || return 1
  fi
}

# Debian's Chromium (browser tests and the film-desk benchmark) and dcmtk (reference DICOM tools for the
# film tests), installed from Debian's packages when missing; nothing downloads a browser of its own.
rw_ensure_test_packages() {
  local missing=()
  [ -x /usr/bin/chromium ] || missing+=(chromium)
  command -v dcmdump >/dev/null || missing+=(dcmtk)
  if [ ${#missing[@]} -gt 0 ]; then
    rw_log "installing Debian packages: ${missing[*]}"
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${missing[@]}" >/dev/null \
      || { rw_log "could not install ${missing[*]}"; return 1; }
  fi
}
