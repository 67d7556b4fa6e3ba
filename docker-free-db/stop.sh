#!/usr/bin/env bash
# Stop the project's PostgreSQL (fast shutdown: open sessions are ended). Harmless when stopped.
set -euo pipefail
# shellcheck source=_lib.sh
source "$(dirname "${BASH_SOURCE[0]}")/_lib.sh"

dfdb_resolve_dirs
if ! dfdb_running; then
  if [[ -f "$DFDB_DATA/postmaster.pid" ]]; then
    dfdb_recover_stale
  fi
  cp_say "PostgreSQL on port $DB_PORT is not running"
  exit 0
fi
started="$(cp_now_ms)"
if ! dfdb_as_pg "$PG_BIN/pg_ctl" -D "$DFDB_DATA" -m fast -w -t 30 -s stop; then
  cp_warn "fast shutdown timed out; using immediate shutdown"
  dfdb_as_pg "$PG_BIN/pg_ctl" -D "$DFDB_DATA" -m immediate -w -t 30 -s stop
fi
cp_say "PostgreSQL on port $DB_PORT stopped ($(cp_elapsed "$started"))"
