#!/usr/bin/env bash
# npm start: install what is missing, start PostgreSQL and the local fakes, migrate, load the demo, build and serve.
set -euo pipefail
cd "$(dirname "$0")/.."
export NEXT_TELEMETRY_DISABLED=1
source scripts/services.sh

rw_ensure_node_modules
trap 'services_down' EXIT
trap 'exit 130' INT TERM
services_up dev
rw_migrate
node --conditions=react-server --import tsx db/demo/load.ts

export PORT="${PORT:-3000}" RIMWATCH_DEMO="${RIMWATCH_DEMO:-1}"
export NEXTAUTH_URL="${NEXTAUTH_URL:-http://127.0.0.1:$PORT}"
if [ -z "${NEXTAUTH_SECRET:-}" ]; then
  [ -f .data/dev/auth-secret ] || node -e 'console.log(require("crypto").randomBytes(32).toString("base64url"))' > .data/dev/auth-secret
  NEXTAUTH_SECRET="$(cat .data/dev/auth-secret)"; export NEXTAUTH_SECRET
fi

if [ -z "${SKIP_BUILD:-}" ]; then
  rw_log "building the app (next build)"
  npx next build >.data/dev/build.log 2>&1 || { tail -40 .data/dev/build.log; exit 1; }
fi

cat <<MSG

  Rimwatch is at $NEXTAUTH_URL
  Demo sign-ins (password for all: $(node --import tsx -e 'import("./db/demo/users.ts").then(m=>console.log(m.DEMO_PASSWORD))')):
$(node --import tsx -e 'import("./db/demo/users.ts").then(m=>m.DEMO_USERS.forEach(u=>console.log("    "+u.role.padEnd(11)+" "+u.email)))')
  Mail sent by the app is saved in .data/dev/mail/. Ctrl-C stops everything.

MSG
npx next start -H 127.0.0.1 -p "$PORT" &
APP_PID=$!
wait "$APP_PID"
