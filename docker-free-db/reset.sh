#!/usr/bin/env bash
# Throw the cluster away and start a brand-new one (all databases in it are lost).
set -euo pipefail
# shellcheck source=_lib.sh
source "$(dirname "${BASH_SOURCE[0]}")/_lib.sh"

bash "$DFDB_HERE/stop.sh"
dfdb_resolve_dirs
# Only our own sub-folders are removed, never DB_DIR's surroundings.
rm -rf -- "$DFDB_DATA" "$DFDB_RUN" "$DFDB_LOGDIR"
cp_say "removed the cluster in $DFDB_BASE"
exec bash "$DFDB_HERE/start.sh"
