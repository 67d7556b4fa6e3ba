#!/usr/bin/env bash
# Report whether the project's PostgreSQL runs. Exit status: 0 running, 3 stopped.
set -euo pipefail
# shellcheck source=_lib.sh
source "$(dirname "${BASH_SOURCE[0]}")/_lib.sh"

dfdb_resolve_dirs
if dfdb_running; then
  dfdb_print_facts
  if dfdb_as_pg "$PG_BIN/pg_isready" -q -h "$DFDB_RUN" -p "$DB_PORT"; then
    cp_say "  accepting connections"
  else
    cp_say "  running but not accepting connections yet"
  fi
  exit 0
fi
if [[ ! -f "$DFDB_DATA/PG_VERSION" ]]; then
  cp_say "stopped: no cluster in $DFDB_DATA yet (docker-free-db/start.sh creates it)"
elif [[ -f "$DFDB_DATA/postmaster.pid" ]]; then
  cp_say "stopped: stale postmaster.pid in $DFDB_DATA (crashed?); docker-free-db/start.sh recovers it"
else
  cp_say "stopped: cluster in $DFDB_DATA, port $DB_PORT"
fi
exit 3
