#!/usr/bin/env bash
# npm test: the same services on their own ports and a throw-away database, then unit, integration
# and browser tests. Ends with one line over all suites: "N passed, N failed".
set -uo pipefail
cd "$(dirname "$0")/.."
export NEXT_TELEMETRY_DISABLED=1 PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1
source scripts/services.sh

rw_ensure_node_modules || exit 1
missing=()
[ -x /usr/bin/chromium ] || missing+=(chromium)
command -v dcmdump >/dev/null || missing+=(dcmtk)
if [ ${#missing[@]} -gt 0 ]; then
  rw_log "installing Debian packages: ${missing[*]}"
  apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${missing[@]}" >/dev/null || { rw_log "could not install ${missing[*]}"; exit 1; }
fi

unset DATABASE_URL S3_ENDPOINT S3_BUCKET SMTP_HOST # tests always run on their own throw-away services
trap 'services_down' EXIT
services_up test || exit 1
REPORTS="$RW_RUN_DIR/reports"; mkdir -p "$REPORTS"

# Two databases: one for integration tests, one with the demo data for the browser tests.
"$(rw_pg_bin)/createdb" -h 127.0.0.1 -p "$RW_PG_PORT" -U postgres rimwatch_int
E2E_DATABASE_URL="$DATABASE_URL"
export DATABASE_URL="postgres://postgres@127.0.0.1:$RW_PG_PORT/rimwatch_int"
rw_migrate || exit 1
DATABASE_URL="$E2E_DATABASE_URL" rw_migrate || exit 1
export NEXTAUTH_SECRET="test-secret-$(date +%s%N)"

rw_log "unit and integration tests (vitest)"
npx vitest run --reporter=default --reporter=json --outputFile.json="$REPORTS/vitest.json"
VITEST_RC=$?

rw_log "browser tests (Playwright, Debian's Chromium)"
export E2E_DIST_DIR=".next-test"
DATABASE_URL="$E2E_DATABASE_URL" node --conditions=react-server --import tsx db/demo/load.ts >/dev/null || rw_log "demo data failed to load"
if DATABASE_URL="$E2E_DATABASE_URL" NEXT_DIST_DIR="$E2E_DIST_DIR" npx next build >"$REPORTS/build.log" 2>&1; then
  DATABASE_URL="$E2E_DATABASE_URL" PLAYWRIGHT_JSON_OUTPUT_NAME="$REPORTS/playwright.json" \
    npx playwright test --reporter=list,json
  PW_RC=$?
else
  tail -40 "$REPORTS/build.log"
  rw_log "next build failed: browser tests not run"
  PW_RC=1
fi

node scripts/summary.mjs "$REPORTS/vitest.json" "$REPORTS/playwright.json"
SUMMARY_RC=$?
[ $VITEST_RC -eq 0 ] && [ $PW_RC -eq 0 ] && [ $SUMMARY_RC -eq 0 ]
