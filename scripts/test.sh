#!/usr/bin/env bash
# npm test: the same services on their own ports and a throw-away database, then unit, integration
# and browser tests. Ends with one line over all suites: "N passed, N failed".
set -uo pipefail
cd "$(dirname "$0")/.."
export NEXT_TELEMETRY_DISABLED=1 PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1
source scripts/services.sh

rw_ensure_node_modules || exit 1
rw_ensure_test_packages || exit 1

unset DATABASE_URL S3_ENDPOINT S3_BUCKET SMTP_HOST # tests always run on their own throw-away services
trap 'services_down' EXIT
trap 'exit 143' TERM INT
services_up test || exit 1
REPORTS="$RW_RUN_DIR/reports"; mkdir -p "$REPORTS"

rw_migrate || exit 1
node --conditions=react-server --import tsx db/demo/load.ts >/dev/null || { rw_log "demo data failed to load"; exit 1; }
export NEXTAUTH_SECRET="test-secret-$(date +%s%N)"
export RIMWATCH_DEMO=1
export MAIL_RETRY_LIMIT=2 MAIL_RETRY_DELAY_SECONDS=1 # quick mail retries (the refused-relay test waits for them)

# One build and one server for integration and browser tests; integration tests make their own teams.
export NEXT_DIST_DIR=".next-test"
rw_log "building the app (next build)"
if ! npx next build >"$REPORTS/build.log" 2>&1; then
  tail -60 "$REPORTS/build.log"; rw_log "next build failed"; BUILD_FAILED=1
fi
APP_PORT="$(rw_free_port)"
export RIMWATCH_TEST_URL="http://127.0.0.1:$APP_PORT" NEXTAUTH_URL="http://127.0.0.1:$APP_PORT"
export RIMWATCH_SERVER_LOG="$REPORTS/server.log"
if [ -z "${BUILD_FAILED:-}" ]; then
  setsid npx next start -H 127.0.0.1 -p "$APP_PORT" >"$RIMWATCH_SERVER_LOG" 2>&1 &
  RW_PIDS+=("$!")
  node -e 'const u=process.argv[1];let n=0;(async function w(){try{const r=await fetch(u);if(r.ok)process.exit(0)}catch{}if(++n>150){console.error("app did not start");process.exit(1)}setTimeout(w,200)})()' "$RIMWATCH_TEST_URL/sign-in" \
    || { tail -30 "$RIMWATCH_SERVER_LOG"; BUILD_FAILED=1; }
  rw_log "app under test at $RIMWATCH_TEST_URL"
fi

rw_log "static checks (tsc, eslint)"
STATIC_FAILED=0
npx tsc --noEmit -p . >"$REPORTS/tsc.log" 2>&1 && echo "typecheck: clean" || { STATIC_FAILED=$((STATIC_FAILED+1)); cat "$REPORTS/tsc.log" | head -40; echo "typecheck: errors"; }
npx eslint . >"$REPORTS/eslint.log" 2>&1 && echo "lint: clean" || { STATIC_FAILED=$((STATIC_FAILED+1)); grep -B3 " error " "$REPORTS/eslint.log" | head -40; echo "lint: errors"; }
echo "{\"passed\": $((2-STATIC_FAILED)), \"failed\": $STATIC_FAILED}" >"$REPORTS/static.json"

rw_log "unit and integration tests (vitest)"
npx vitest run --reporter=default --reporter=json --outputFile.json="$REPORTS/vitest.json"
VITEST_RC=$?

rw_log "browser tests (Playwright, Debian's Chromium)"
if [ -z "${BUILD_FAILED:-}" ]; then
  PLAYWRIGHT_JSON_OUTPUT_NAME="$REPORTS/playwright.json" npx playwright test --reporter=list,json
  PW_RC=$?
else
  PW_RC=1
fi

node scripts/summary.mjs "$REPORTS/vitest.json" "$REPORTS/playwright.json" "$REPORTS/static.json"
SUMMARY_RC=$?
[ -n "${KEEP_TEST_DATA:-}" ] && rw_log "reports kept in $REPORTS"
[ $VITEST_RC -eq 0 ] && [ $PW_RC -eq 0 ] && [ $SUMMARY_RC -eq 0 ] && [ $STATIC_FAILED -eq 0 ]
