# shellcheck shell=bash
# Set-up shared by scripts/start.sh and scripts/test.sh: tools, Debian packages, npm packages.
# Expects REPO_ROOT and the log.sh/apt.sh helpers.

cp_require_node() {
  command -v node >/dev/null 2>&1 || cp_die "Node.js 20.19+ is required (node not found)"
  command -v npm >/dev/null 2>&1 || cp_die "npm is required (npm not found)"
  local version major minor
  version="$(node -p 'process.versions.node')"
  IFS=. read -r major minor _ <<<"$version"
  if ((major < 20 || (major == 20 && minor < 19))); then
    cp_die "Node.js 20.19+ is required, found $version"
  fi
}

# cp_ensure_debian_packages [chromium]: install postgresql (and chromium if asked) where missing,
# in one apt-get run.
cp_ensure_debian_packages() {
  local -a missing=()
  [[ -d /usr/lib/postgresql ]] || missing+=(postgresql)
  if [[ "${1:-}" == chromium ]]; then
    # Another apt run may be installing it right now: let it finish before judging.
    cp_apt_wait
    [[ -x /usr/bin/chromium ]] || missing+=(chromium)
  fi
  if ((${#missing[@]})); then
    cp_step "installing Debian packages: ${missing[*]}"
    cp_apt_install "${missing[@]}" || cp_die "could not install ${missing[*]}"
  fi
}

# npm ci when node_modules is missing or older than package-lock.json (and really out of date).
cp_ensure_node_modules() {
  local reason=''
  if [[ ! -d "$REPO_ROOT/node_modules" || ! -f "$REPO_ROOT/node_modules/.package-lock.json" ]]; then
    reason='node_modules is missing'
  elif [[ "$REPO_ROOT/package-lock.json" -nt "$REPO_ROOT/node_modules/.package-lock.json" ]] &&
    ! (cd "$REPO_ROOT" && node scripts/lib/lockfile-in-sync.mjs); then
    reason='package-lock.json changed'
  fi
  if [[ -n "$reason" ]]; then
    cp_step "npm ci ($reason)"
    local started
    started="$(cp_now_ms)"
    (cd "$REPO_ROOT" && npm ci --no-audit --no-fund) || cp_die "npm ci failed"
    cp_say "npm ci done ($(cp_elapsed "$started"))"
  fi
}
