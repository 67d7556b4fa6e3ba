#!/usr/bin/env bash
# Start (or recover) the project's throwaway PostgreSQL 15 and make sure its roles and database exist.
# Harmless when it is already running. Usage: docker-free-db/start.sh
set -euo pipefail
# shellcheck source=_lib.sh
source "$(dirname "${BASH_SOURCE[0]}")/_lib.sh"

started="$(cp_now_ms)"
dfdb_ensure_binaries
dfdb_resolve_dirs create

umask 077
mkdir -p "$DFDB_BASE" "$DFDB_DATA" "$DFDB_RUN" "$DFDB_LOGDIR"
chmod 700 "$DFDB_BASE" "$DFDB_DATA" "$DFDB_RUN" "$DFDB_LOGDIR"
if dfdb_is_root; then chown postgres:postgres "$DFDB_BASE" "$DFDB_DATA" "$DFDB_RUN" "$DFDB_LOGDIR"; fi

if [[ -f "$DFDB_DATA/PG_VERSION" ]]; then
  version="$(cat "$DFDB_DATA/PG_VERSION")"
  [[ "$version" == 15 ]] || cp_die "$DFDB_DATA holds a PostgreSQL $version cluster; run docker-free-db/reset.sh to replace it"
else
  dfdb_initdb
fi
dfdb_write_config

if dfdb_running; then
  cp_say "already running (pid $DFDB_PID)"
else
  if [[ -f "$DFDB_DATA/postmaster.pid" ]]; then dfdb_recover_stale; fi
  if dfdb_port_busy "$DB_PORT"; then
    cp_die "127.0.0.1:$DB_PORT is taken by another program; set DB_PORT to a free port"
  fi
  if ! dfdb_as_pg "$PG_BIN/pg_ctl" -D "$DFDB_DATA" -l "$DFDB_LOG" -w -t 60 -s start; then
    tail -n 30 "$DFDB_LOG" >&2 || true
    cp_die "PostgreSQL did not start; the log above is $DFDB_LOG"
  fi
  dfdb_running || cp_die "PostgreSQL started but postmaster.pid does not name it"
fi

dfdb_ensure_roles
dfdb_ensure_database "$DB_NAME"
dfdb_print_facts
cp_say "  ready in $(cp_elapsed "$started")"
