#!/usr/bin/env bash
# npm run bench: every benchmark on private, throw-away services (as npm test uses), then a short table
# in bench/results.md with the date and the machine. Each script prints its own figures and its ratio
# to a floor measured in the same run; their full output stays in bench/results/<name>.log.
#
# BENCH_ONLY="queues ingest" runs only those scripts (the table then shows only them).
set -uo pipefail
cd "$(dirname "$0")/.."
export NEXT_TELEMETRY_DISABLED=1 PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1
source scripts/services.sh

rw_ensure_node_modules || exit 1
rw_ensure_test_packages || exit 1
unset DATABASE_URL S3_ENDPOINT S3_BUCKET SMTP_HOST # benchmarks always run on their own services
trap 'services_down' EXIT
trap 'exit 143' TERM INT
services_up test || exit 1
rw_migrate || exit 1
node --conditions=react-server --import tsx db/demo/load.ts >/dev/null || { rw_log "demo data failed to load"; exit 1; }

# The app, built once into its own folder (rebuilt when a source file is newer than the build), started
# with RIMWATCH_BENCH=1 so the bench echo route (a floor for bench/trend-api.ts) answers.
export NEXTAUTH_SECRET="bench-secret-$(date +%s%N)" RIMWATCH_DEMO=1 RIMWATCH_BENCH=1 RIMWATCH_JOBS=off
export NEXT_DIST_DIR=".next-bench"
RESULTS="bench/results"; mkdir -p "$RESULTS"
if [ ! -f "$NEXT_DIST_DIR/BUILD_ID" ] || [ -n "$(find app lib db components measure storage proxy.ts next.config.mjs -type f -newer "$NEXT_DIST_DIR/BUILD_ID" -print -quit)" ]; then
  rw_log "building the app (next build into $NEXT_DIST_DIR)"
  npx next build >"$RESULTS/build.log" 2>&1 || { tail -40 "$RESULTS/build.log"; rw_log "next build failed"; exit 1; }
fi
APP_PORT="$(rw_free_port)"
export RIMWATCH_TEST_URL="http://127.0.0.1:$APP_PORT" RIMWATCH_BENCH_URL="http://127.0.0.1:$APP_PORT" NEXTAUTH_URL="http://127.0.0.1:$APP_PORT"
export RIMWATCH_SERVER_LOG="$RESULTS/server.log"
setsid npx next start -H 127.0.0.1 -p "$APP_PORT" >"$RIMWATCH_SERVER_LOG" 2>&1 &
RW_PIDS+=("$!")
node -e 'const u=process.argv[1];let n=0;(async function w(){try{const r=await fetch(u);if(r.ok)process.exit(0)}catch{}if(++n>150){console.error("app did not start");process.exit(1)}setTimeout(w,200)})()' "$RIMWATCH_TEST_URL/sign-in" \
  || { tail -30 "$RIMWATCH_SERVER_LOG"; exit 1; }
rw_log "app for benchmarks at $RIMWATCH_TEST_URL"

SCRIPTS=(ingest trend-api film-desk queues)
[ -n "${BENCH_ONLY:-}" ] && read -r -a SCRIPTS <<<"$BENCH_ONLY"
STATUS_FILE="$RESULTS/status.txt"; : >"$STATUS_FILE"
for name in "${SCRIPTS[@]}"; do
  file="bench/$name.ts"
  if [ ! -f "$file" ]; then
    echo "$name missing" >>"$STATUS_FILE"; rw_log "$file does not exist yet"; continue
  fi
  rw_log "bench: $name"
  start=$(date +%s)
  node --conditions=react-server --import tsx "$file" 2>&1 | tee "$RESULTS/$name.log"
  rc=${PIPESTATUS[0]}
  echo "$name $rc $(( $(date +%s) - start ))" >>"$STATUS_FILE"
done

node --import tsx bench/report.ts "$STATUS_FILE" >bench/results.md || exit 1
rw_log "wrote bench/results.md"
cat bench/results.md
