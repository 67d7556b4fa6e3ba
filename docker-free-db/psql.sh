#!/usr/bin/env bash
# A superuser psql on the project's PostgreSQL, over our own socket.
# Usage: docker-free-db/psql.sh [psql args]   (database: DB_NAME unless you name another)
set -euo pipefail
# shellcheck source=_lib.sh
source "$(dirname "${BASH_SOURCE[0]}")/_lib.sh"

dfdb_resolve_dirs
dfdb_running || cp_die "PostgreSQL on port $DB_PORT is not running; start it with docker-free-db/start.sh"
PGDATABASE="${PGDATABASE:-$DB_NAME}" dfdb_psql "$@"
