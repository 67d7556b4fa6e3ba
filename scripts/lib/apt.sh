# shellcheck shell=bash
# Debian package installation that waits for other apt/dpkg runs instead of failing on their locks.

CP_APT_LOCKS=(/var/lib/dpkg/lock-frontend /var/lib/dpkg/lock /var/lib/apt/lists/lock /var/cache/apt/archives/lock)

cp_apt_busy() {
  if command -v fuser >/dev/null 2>&1; then
    fuser "${CP_APT_LOCKS[@]}" >/dev/null 2>&1 && return 0
  fi
  pgrep -x 'apt|apt-get|dpkg|unattended-upgr' >/dev/null 2>&1
}

# cp_apt_wait [MAX_SECONDS]: wait while another apt/dpkg process holds the locks.
cp_apt_wait() {
  local max="${1:-1200}" waited=0
  if cp_apt_busy; then
    printf 'waiting for another apt/dpkg run to finish'
    while cp_apt_busy && ((waited < max)); do
      sleep 3
      waited=$((waited + 3))
      printf '.'
    done
    printf ' (%d s)\n' "$waited"
  fi
}

# cp_apt_install PKG...: apt-get update then install, as root or through passwordless sudo.
cp_apt_install() {
  (($#)) || return 0
  local -a sudo=()
  if [[ "$(id -u)" -ne 0 ]]; then
    if command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
      sudo=(sudo -n)
    else
      printf 'error: missing Debian packages: %s. Install them as root: apt-get install -y %s\n' "$*" "$*" >&2
      return 1
    fi
  fi
  local attempt
  for attempt in 1 2 3; do
    cp_apt_wait
    if "${sudo[@]}" env DEBIAN_FRONTEND=noninteractive apt-get -o DPkg::Lock::Timeout=600 -qq update &&
      "${sudo[@]}" env DEBIAN_FRONTEND=noninteractive apt-get -o DPkg::Lock::Timeout=600 -y -q install "$@"; then
      return 0
    fi
    printf 'apt-get failed (attempt %d of 3); retrying\n' "$attempt" >&2
    sleep 5
  done
  return 1
}
