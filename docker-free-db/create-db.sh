#!/usr/bin/env bash
# Make sure a database exists on the running cluster, owned by DB_OWNER_USER and usable by
# DB_APP_USER. With --fresh it is dropped and created again (used for the browser-test database).
# Usage: docker-free-db/create-db.sh [--fresh] NAME
set -euo pipefail
# shellcheck source=_lib.sh
source "$(dirname "${BASH_SOURCE[0]}")/_lib.sh"

fresh=''
if [[ "${1:-}" == --fresh ]]; then
  fresh=fresh
  shift
fi
[[ $# -eq 1 && -n "$1" ]] || cp_die "usage: docker-free-db/create-db.sh [--fresh] NAME"
dfdb_resolve_dirs
dfdb_running || cp_die "PostgreSQL on port $DB_PORT is not running; start it with docker-free-db/start.sh"
dfdb_ensure_roles
dfdb_ensure_database "$1" "$fresh"
cp_say "database $1 ready${fresh:+ (fresh)} on 127.0.0.1:$DB_PORT"
