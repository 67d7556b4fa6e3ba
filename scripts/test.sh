#!/usr/bin/env bash
# Every test of Counterpoise, in order, stopping at the first failing stage:
#   setup, typecheck, lint, stats, contracts, api, web (if it has tests), browser.
# Usage: scripts/test.sh   (or npm test; CI runs it through .ci/run)
# TEST_STAGES=lint,api runs only the named stages (setup always runs). KEEP_DB=1 leaves the
# database running. E2E_PORT, E2E_SMTP_PORT and E2E_DB_NAME place the browser-test servers.
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

TEST_STAGES="${TEST_STAGES:-all}"
E2E_PORT="${E2E_PORT:-5490}"
E2E_SMTP_PORT="${E2E_SMTP_PORT:-2535}"
E2E_DB_NAME="${E2E_DB_NAME:-counterpoise_e2e}"
E2E_DIR="$REPO_ROOT/.data/e2e"
LOG_DIR="$REPO_ROOT/.data/logs"
# Test runs never echo service logs to the terminal; they are shown when a stage fails.
CP_ECHO_LOGS=0
export CI="${CI:-}"
T0="$(cp_now_ms)"

SUMMARY=()
PASSED=0
FAILED=0

finish() {
  printf '\n==> summary (%s)\n' "$(cp_elapsed "$T0")"
  local line
  for line in "${SUMMARY[@]}"; do printf '  %s\n' "$line"; done
  printf '%d passed, %d failed\n' "$PASSED" "$FAILED"
  if ((FAILED > 0)); then exit 1; fi
  exit 0
}

wanted() { [[ "$TEST_STAGES" == all || ",$TEST_STAGES," == *",$1,"* ]]; }

# run_stage NAME FUNCTION: run FUNCTION, record and print its result, stop at the first failure.
# Stage functions check each step themselves (`|| return 1`): errexit is off inside `if`.
run_stage() {
  local name="$1" started line
  shift
  wanted "$name" || [[ "$name" == setup ]] || return 0
  cp_step "stage: $name"
  started="$(cp_now_ms)"
  if "$@"; then
    PASSED=$((PASSED + 1))
    line="$(printf 'PASS  %-10s %s' "$name" "$(cp_elapsed "$started")")"
    SUMMARY+=("$line")
    printf '%s\n' "$line"
  else
    FAILED=$((FAILED + 1))
    line="$(printf 'FAIL  %-10s %s' "$name" "$(cp_elapsed "$started")")"
    SUMMARY+=("$line")
    printf '%s\n' "$line"
    finish
  fi
}

DB_STARTED_HERE=0
cleanup() {
  local rc=$?
  trap - EXIT
  trap '' INT TERM
  set +e
  if ((${#CP_SVC_PIDS[@]})); then cp_stop_services; fi
  if [[ "$DB_STARTED_HERE" == 1 && "${KEEP_DB:-0}" != 1 ]]; then bash docker-free-db/stop.sh; fi
  exit "$rc"
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

stage_setup() {
  cp_require_node || return 1
  if wanted browser; then cp_ensure_debian_packages chromium || return 1; else cp_ensure_debian_packages || return 1; fi
  cp_ensure_node_modules || return 1
  if ! bash docker-free-db/status.sh >/dev/null; then DB_STARTED_HERE=1; fi
  bash docker-free-db/start.sh || return 1
}

stage_typecheck() { npm run --silent typecheck; }
stage_lint() { npm run --silent lint; }
stage_stats() { (cd packages/stats && NODE_ENV=test npx vitest run); }
stage_contracts() { (cd packages/contracts && NODE_ENV=test npx vitest run); }
# The API tests build their own template database and clone it per test file.
stage_api() { (cd apps/api && NODE_ENV=test LOG_LEVEL=silent npx vitest run); }
stage_web() { (cd apps/web && NODE_ENV=test npx vitest run); }

web_has_tests() {
  [[ -n "$(find apps/web/src -name '*.test.ts' -o -name '*.test.tsx' 2>/dev/null | head -n 1)" ]]
}

# The built app served by the real API, worker and fake SMTP on a port, database and outbox of
# their own, freshly migrated and seeded; then the browser tests against it.
stage_browser() {
  local url="http://127.0.0.1:$E2E_PORT" rc=0 port
  local -a e2e_env=(
    NODE_ENV=development PORT="$E2E_PORT" APP_ORIGIN="$url" SMTP_PORT="$E2E_SMTP_PORT"
    DB_NAME="$E2E_DB_NAME" OUTBOX_DIR="$E2E_DIR/outbox" UPLOAD_DIR="$E2E_DIR/uploads"
  )
  for port in "$E2E_PORT" "$E2E_SMTP_PORT"; do
    if cp_port_busy "$port"; then
      cp_warn "port $port is in use; set E2E_PORT / E2E_SMTP_PORT to free ports"
      return 1
    fi
  done
  cp_say "building the web app"
  npm run --silent build -w @counterpoise/web || return 1
  rm -rf "$E2E_DIR" test-artifacts/screenshots
  mkdir -p "$E2E_DIR/outbox" "$E2E_DIR/uploads" test-artifacts/screenshots
  bash docker-free-db/create-db.sh --fresh "$E2E_DB_NAME" || return 1
  env "${e2e_env[@]}" npm run --silent migrate -w @counterpoise/api || return 1
  env "${e2e_env[@]}" npm run --silent seed -w @counterpoise/api || return 1

  cp_start_service e2e-fake-smtp "$LOG_DIR/e2e-fake-smtp.log" \
    env "${e2e_env[@]}" node --import tsx apps/api/src/mail/fake-smtp-server.ts
  cp_start_service e2e-api "$LOG_DIR/e2e-api.log" env "${e2e_env[@]}" node --max-old-space-size="${API_HEAP_MB:-256}" --import tsx apps/api/src/server.ts
  cp_start_service e2e-worker "$LOG_DIR/e2e-worker.log" env "${e2e_env[@]}" node --import tsx apps/api/src/worker.ts
  if ! cp_wait_http "$url/api/health" "$(cp_service_pid e2e-api)" 90; then
    cp_show_log_tail api "$LOG_DIR/e2e-api.log"
    cp_stop_services
    return 1
  fi
  cp_say "app under test at $url"

  env "${e2e_env[@]}" E2E_BASE_URL="$url" DEMO_PASSWORD="$DEMO_PASSWORD" \
    npx vitest run --config tests/browser/vitest.config.ts || rc=$?
  if ((rc != 0)); then
    cp_show_log_tail api "$LOG_DIR/e2e-api.log" 30
    cp_show_log_tail worker "$LOG_DIR/e2e-worker.log" 15
  fi
  cp_stop_services
  cp_say "screenshots in test-artifacts/screenshots/"
  return "$rc"
}

run_stage setup stage_setup
run_stage typecheck stage_typecheck
run_stage lint stage_lint
run_stage stats stage_stats
run_stage contracts stage_contracts
run_stage api stage_api
if web_has_tests; then
  run_stage web stage_web
elif wanted web; then
  cp_say "(no web unit tests yet; web stage skipped)"
fi
run_stage browser stage_browser
finish
