#!/usr/bin/env bash
# Counterpoise, locally: install what is missing, start the database, migrate, seed the demo,
# build the web app, then run the fake SMTP server, the API (which also serves the web app)
# and the job worker until Ctrl-C. Usage: scripts/start.sh   (or npm start)
# KEEP_DB=1 leaves the database running on exit.
set -euo pipefail

REPO_ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$REPO_ROOT"
# shellcheck source=lib/env.sh
source scripts/lib/env.sh
# shellcheck source=lib/log.sh
source scripts/lib/log.sh
# shellcheck source=lib/apt.sh
source scripts/lib/apt.sh
# shellcheck source=lib/setup.sh
source scripts/lib/setup.sh
# shellcheck source=lib/services.sh
source scripts/lib/services.sh
cp_load_env "$REPO_ROOT"

LOG_DIR="$REPO_ROOT/.data/logs"
SMTP_ENTRY=apps/api/src/mail/fake-smtp-server.ts
API_ENTRY=apps/api/src/server.ts
WORKER_ENTRY=apps/api/src/worker.ts
DEMO_ACCOUNTS=(admin coordinator statistician sponsor auditor)
T0="$(cp_now_ms)"

cp_step "checking tools and packages"
cp_require_node
cp_ensure_debian_packages
cp_ensure_node_modules

cp_port_busy "$PORT" && cp_die "port $PORT is in use (is Counterpoise already running?); set PORT to a free port"
cp_port_busy "$SMTP_PORT" && cp_die "port $SMTP_PORT (SMTP_PORT) is in use; set SMTP_PORT to a free port"

DB_STARTED_HERE=0
cleanup() {
  local rc=$?
  trap - EXIT
  trap '' INT TERM
  set +e
  cp_step "stopping"
  cp_stop_services
  if [[ "$DB_STARTED_HERE" == 1 && "${KEEP_DB:-0}" != 1 ]]; then
    bash docker-free-db/stop.sh
  elif [[ "$DB_STARTED_HERE" == 1 ]]; then
    cp_say "database left running (KEEP_DB=1); stop it with docker-free-db/stop.sh"
  fi
  exit "$rc"
}
trap cleanup EXIT
# A requested stop that completes cleanly is a success.
trap 'exit 0' INT
trap 'exit 0' TERM

cp_step "database"
if ! bash docker-free-db/status.sh >/dev/null; then DB_STARTED_HERE=1; fi
bash docker-free-db/start.sh
if [[ "$DB_STARTED_HERE" == 0 ]]; then cp_say "  (it was already running, so it is left running on exit)"; fi

cp_step "migrations"
npm run --silent migrate -w @counterpoise/api

cp_step "demo data"
npm run --silent seed -w @counterpoise/api

cp_step "building the web app"
npm run --silent build -w @counterpoise/web

for entry in "$SMTP_ENTRY" "$API_ENTRY" "$WORKER_ENTRY"; do
  [[ -f "$entry" ]] || cp_die "missing $entry"
done

cp_step "starting services"
cp_start_service fake-smtp "$LOG_DIR/fake-smtp.log" node --import tsx "$SMTP_ENTRY"
cp_start_service api "$LOG_DIR/api.log" node --max-old-space-size="${API_HEAP_MB:-256}" --import tsx "$API_ENTRY"
cp_start_service worker "$LOG_DIR/worker.log" node --import tsx "$WORKER_ENTRY"

URL="http://127.0.0.1:$PORT"
if ! cp_wait_http "$URL/api/health" "$(cp_service_pid api)" 90; then
  cp_show_log_tail api "$LOG_DIR/api.log"
  cp_die "the API did not answer $URL/api/health"
fi

{
  printf '\n'
  printf '  Counterpoise is running at %s   (ready in %s)\n\n' "$URL" "$(cp_elapsed "$T0")"
  printf '  Demo accounts, all with the password %s\n' "$DEMO_PASSWORD"
  for role in "${DEMO_ACCOUNTS[@]}"; do printf '    %-36s %s\n' "$role@counterpoise.example" "$role"; done
  printf '\n  Mail the app sends is kept by the local fake SMTP server (127.0.0.1:%s);\n' "$SMTP_PORT"
  printf '  an admin reads it on the Outbox page.\n'
  printf '  Logs: .data/logs/{api,worker,fake-smtp}.log. Press Ctrl-C to stop everything.\n\n'
}

# Run until a signal arrives or a service dies.
while true; do
  finished=''
  rc=0
  wait -n -p finished "${CP_SVC_PIDS[@]}" || rc=$?
  if [[ -n "$finished" ]]; then
    for i in "${!CP_SVC_PIDS[@]}"; do
      if [[ "${CP_SVC_PIDS[$i]}" == "$finished" ]]; then
        cp_warn "${CP_SVC_NAMES[$i]} exited with status $rc; stopping the rest"
      fi
    done
    exit 1
  fi
done
