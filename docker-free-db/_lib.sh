# shellcheck shell=bash
# Shared by the docker-free-db scripts: configuration, folders and the PostgreSQL helpers.
# A throwaway PostgreSQL 15 cluster of the project's own: 127.0.0.1 only, our port, our folders.

DFDB_HERE="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
REPO_ROOT="$(cd "$DFDB_HERE/.." && pwd)"
# shellcheck source=../scripts/lib/env.sh
source "$REPO_ROOT/scripts/lib/env.sh"
# shellcheck source=../scripts/lib/log.sh
source "$REPO_ROOT/scripts/lib/log.sh"
# shellcheck source=../scripts/lib/apt.sh
source "$REPO_ROOT/scripts/lib/apt.sh"
cp_load_env "$REPO_ROOT"

PG_BIN="${PG_BIN:-/usr/lib/postgresql/15/bin}"
DB_PORT="${DB_PORT:-54329}"
DB_DIR="${DB_DIR:-.data/pg}"
DB_NAME="${DB_NAME:-counterpoise}"
DB_OWNER_USER="${DB_OWNER_USER:-counterpoise_owner}"
DB_OWNER_PASSWORD="${DB_OWNER_PASSWORD:-owner-local-only}"
DB_APP_USER="${DB_APP_USER:-counterpoise_app}"
DB_APP_PASSWORD="${DB_APP_PASSWORD:-app-local-only}"
# The cluster's superuser; it may only sign in over our own Unix socket.
DB_SUPERUSER=postgres

dfdb_is_root() { [[ "$(id -u)" -eq 0 ]]; }

# dfdb_as_pg CMD...: run CMD as the cluster's OS user (postgres when we are root, else ourselves).
# cd / first so that postgres never trips over a root-only working directory.
dfdb_as_pg() {
  if dfdb_is_root; then
    (cd / && runuser -u postgres -- "$@")
  else
    "$@"
  fi
}

# Folders. As root, PostgreSQL runs as "postgres", which must be able to reach DB_DIR; when a
# parent of DB_DIR is closed to it, the cluster lives under /tmp/counterpoise-pg-<port> instead.
dfdb_resolve_dirs() {
  local base parent
  base="$(cp_abs "$REPO_ROOT" "$DB_DIR")"
  base="${base%/}"
  parent="$(dirname "$base")"
  DFDB_FALLBACK=0
  if dfdb_is_root; then
    if [[ "${1:-}" == create ]]; then mkdir -p "$parent"; fi
    if ! id postgres >/dev/null 2>&1 || ! runuser -u postgres -- test -x "$parent" 2>/dev/null; then
      base="/tmp/counterpoise-pg-$DB_PORT"
      DFDB_FALLBACK=1
    fi
  fi
  DFDB_BASE="$base"
  DFDB_DATA="$base/data"
  DFDB_RUN="$base/run"
  DFDB_LOGDIR="$base/log"
  DFDB_LOG="$base/log/postgres.log"
}

dfdb_ensure_binaries() {
  if [[ ! -x "$PG_BIN/postgres" ]]; then
    if [[ -d /usr/lib/postgresql ]]; then
      cp_die "PostgreSQL 15 binaries not found in $PG_BIN (found: $(ls /usr/lib/postgresql | tr '\n' ' ')). Set PG_BIN or install postgresql-15."
    fi
    cp_say "PostgreSQL is not installed; installing Debian's postgresql package"
    cp_apt_install postgresql || cp_die "could not install postgresql"
    [[ -x "$PG_BIN/postgres" ]] || cp_die "postgresql installed but $PG_BIN/postgres is missing"
  fi
}

# The PID recorded in postmaster.pid, if the file exists.
dfdb_recorded_pid() {
  local pid=''
  if [[ -f "$DFDB_DATA/postmaster.pid" ]]; then
    read -r pid <"$DFDB_DATA/postmaster.pid" || true
  fi
  [[ "$pid" =~ ^[0-9]+$ ]] && printf '%s\n' "$pid"
}

# True when PID is a live postmaster of our data folder (not a stranger who reused the PID).
dfdb_pid_is_ours() {
  local pid="$1" cmd
  [[ -r "/proc/$pid/cmdline" ]] || return 1
  cmd="$(tr '\0' ' ' <"/proc/$pid/cmdline" 2>/dev/null)" || return 1
  [[ "$cmd" == *postgres* && "$cmd" == *"$DFDB_DATA"* ]]
}

# dfdb_running: 0 when our postmaster is alive; sets DFDB_PID.
dfdb_running() {
  DFDB_PID="$(dfdb_recorded_pid || true)"
  [[ -n "$DFDB_PID" ]] && dfdb_pid_is_ours "$DFDB_PID"
}

# Server processes left behind by a postmaster that died (kill -9, OOM): their working folder
# is our data folder. They hold the shared memory a new postmaster needs.
dfdb_orphans() {
  local dir pid
  for dir in /proc/[0-9]*; do
    pid="${dir#/proc/}"
    [[ "$(readlink "$dir/cwd" 2>/dev/null)" == "$DFDB_DATA" ]] || continue
    [[ "$(cat "$dir/comm" 2>/dev/null)" == postgres* ]] || continue
    printf '%s\n' "$pid"
  done
}

# Clear what a crashed instance left: orphaned server processes, postmaster.pid, socket lock.
dfdb_recover_stale() {
  local pid orphans waited=0
  pid="$(dfdb_recorded_pid || true)"
  cp_say "recovering a stale instance (postmaster.pid names pid ${pid:-?}, which is not a live server of this cluster)"
  orphans="$(dfdb_orphans)"
  while [[ -n "$orphans" ]] && ((waited < 50)); do
    # They exit by themselves once they notice the postmaster died; give them a moment first.
    if ((waited == 20)); then
      # shellcheck disable=SC2086
      kill -KILL $orphans 2>/dev/null || true
    fi
    sleep 0.1
    waited=$((waited + 1))
    orphans="$(dfdb_orphans)"
  done
  [[ -z "$orphans" ]] || cp_die "old server processes still hold the data folder: $orphans"
  rm -f "$DFDB_DATA/postmaster.pid" "$DFDB_RUN/.s.PGSQL.$DB_PORT.lock" "$DFDB_RUN/.s.PGSQL.$DB_PORT"
}

# True when something accepts TCP connections on 127.0.0.1:PORT.
dfdb_port_busy() {
  (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null
}

# dfdb_write_owned FILE: stdin to FILE, owned by the cluster's OS user.
dfdb_write_owned() {
  cat >"$1"
  if dfdb_is_root; then chown postgres:postgres "$1"; fi
  chmod 600 "$1"
}

dfdb_write_config() {
  dfdb_write_owned "$DFDB_DATA/counterpoise.conf" <<CONF
# Written by docker-free-db/start.sh on every start; edit the script, not this file.
listen_addresses = '127.0.0.1'
port = $DB_PORT
unix_socket_directories = '$DFDB_RUN'
unix_socket_permissions = 0700
password_encryption = 'scram-sha-256'
max_connections = 200
# A throwaway cluster: durability against power loss is traded for speed.
fsync = off
synchronous_commit = off
full_page_writes = off
log_line_prefix = '%m [%p] %q%u@%d '
log_timezone = 'UTC'
timezone = 'UTC'
CONF
  dfdb_write_owned "$DFDB_DATA/pg_hba.conf" <<'HBA'
# Written by docker-free-db/start.sh on every start.
# TYPE  DATABASE  USER      ADDRESS        METHOD
# The superuser without a password, only over our own socket (folder mode 0700).
local   all       postgres                 trust
local   all       all                      scram-sha-256
host    all       all       127.0.0.1/32   scram-sha-256
HBA
}

dfdb_initdb() {
  local started
  started="$(cp_now_ms)"
  if [[ -n "$(ls -A "$DFDB_DATA" 2>/dev/null)" ]]; then
    cp_say "data folder $DFDB_DATA holds no cluster (interrupted initdb?); clearing it"
    find "$DFDB_DATA" -mindepth 1 -delete
  fi
  dfdb_as_pg "$PG_BIN/initdb" -D "$DFDB_DATA" -U "$DB_SUPERUSER" --auth=trust \
    --encoding=UTF8 --locale=C.UTF-8 --no-sync --no-instructions >"$DFDB_LOGDIR/initdb.log" 2>&1 ||
    {
      cat "$DFDB_LOGDIR/initdb.log" >&2
      cp_die "initdb failed"
    }
  printf "\ninclude_if_exists = 'counterpoise.conf'\n" >>"$DFDB_DATA/postgresql.conf"
  cp_say "initialised a new cluster in $DFDB_DATA ($(cp_elapsed "$started"))"
}

# dfdb_psql ARGS...: superuser psql over our socket; database from PGDATABASE (default postgres).
dfdb_psql() {
  dfdb_as_pg env PGDATABASE="${PGDATABASE:-postgres}" PGPORT="$DB_PORT" PGHOST="$DFDB_RUN" \
    PGUSER="$DB_SUPERUSER" PGAPPNAME=docker-free-db "$PG_BIN/psql" -X "$@"
}

# dfdb_ensure_roles: the owner and application roles, with their passwords, exist.
dfdb_ensure_roles() {
  dfdb_as_pg env DFDB_OWNER="$DB_OWNER_USER" DFDB_OWNER_PW="$DB_OWNER_PASSWORD" \
    DFDB_APP="$DB_APP_USER" DFDB_APP_PW="$DB_APP_PASSWORD" \
    PGHOST="$DFDB_RUN" PGPORT="$DB_PORT" PGUSER="$DB_SUPERUSER" PGDATABASE=postgres \
    PGOPTIONS='-c client_min_messages=warning' "$PG_BIN/psql" -X -q -v ON_ERROR_STOP=1 <<'SQL' >/dev/null
\getenv owner DFDB_OWNER
\getenv owner_pw DFDB_OWNER_PW
\getenv app DFDB_APP
\getenv app_pw DFDB_APP_PW
SELECT format('CREATE ROLE %I', :'owner') WHERE NOT EXISTS (SELECT FROM pg_roles WHERE rolname = :'owner') \gexec
SELECT format('ALTER ROLE %I WITH LOGIN CREATEDB NOSUPERUSER NOCREATEROLE PASSWORD %L', :'owner', :'owner_pw') \gexec
SELECT format('CREATE ROLE %I', :'app') WHERE NOT EXISTS (SELECT FROM pg_roles WHERE rolname = :'app') \gexec
SELECT format('ALTER ROLE %I WITH LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE PASSWORD %L', :'app', :'app_pw') \gexec
SQL
}

# dfdb_ensure_database NAME [fresh]: NAME exists, owned by the owner role; the app role may
# connect and create schemas in it (pg-boss keeps its own). "fresh" drops it first.
dfdb_ensure_database() {
  dfdb_as_pg env DFDB_DB="$1" DFDB_FRESH="${2:-}" DFDB_OWNER="$DB_OWNER_USER" DFDB_APP="$DB_APP_USER" \
    PGHOST="$DFDB_RUN" PGPORT="$DB_PORT" PGUSER="$DB_SUPERUSER" PGDATABASE=postgres \
    PGOPTIONS='-c client_min_messages=warning' "$PG_BIN/psql" -X -q -v ON_ERROR_STOP=1 <<'SQL' >/dev/null
\getenv db DFDB_DB
\getenv fresh DFDB_FRESH
\getenv owner DFDB_OWNER
\getenv app DFDB_APP
SELECT format('DROP DATABASE IF EXISTS %I WITH (FORCE)', :'db') WHERE :'fresh' = 'fresh' \gexec
SELECT format('CREATE DATABASE %I OWNER %I', :'db', :'owner') WHERE NOT EXISTS (SELECT FROM pg_database WHERE datname = :'db') \gexec
SELECT format('GRANT CONNECT, TEMPORARY, CREATE ON DATABASE %I TO %I', :'db', :'app') \gexec
SQL
}

dfdb_print_facts() {
  cp_say "PostgreSQL $("$PG_BIN/postgres" --version | awk '{print $3}') on 127.0.0.1:$DB_PORT (pid ${DFDB_PID:-?})"
  if [[ "$DFDB_FALLBACK" == 1 ]]; then
    cp_say "  note      the postgres user cannot reach $(cp_abs "$REPO_ROOT" "$DB_DIR"); using $DFDB_BASE"
  fi
  cp_say "  data      $DFDB_DATA"
  cp_say "  socket    $DFDB_RUN"
  cp_say "  log       $DFDB_LOG"
  cp_say "  database  $DB_NAME (owner $DB_OWNER_USER)"
  cp_say "  app URL   postgres://$DB_APP_USER@127.0.0.1:$DB_PORT/$DB_NAME  (password: DB_APP_PASSWORD)"
  cp_say "  owner URL postgres://$DB_OWNER_USER@127.0.0.1:$DB_PORT/$DB_NAME  (password: DB_OWNER_PASSWORD)"
  cp_say "  superuser docker-free-db/psql.sh [psql args]"
}
