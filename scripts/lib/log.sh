# shellcheck shell=bash
# Small output helpers: one style for every script.

cp_say() { printf '%s\n' "$*"; }
cp_step() { printf '\n==> %s\n' "$*"; }
cp_warn() { printf 'warning: %s\n' "$*" >&2; }
cp_die() {
  printf 'error: %s\n' "$*" >&2
  exit 1
}

# cp_now_ms: wall clock in milliseconds, for stage timings.
cp_now_ms() { date +%s%3N; }

# cp_elapsed START_MS: "1.2 s" since START_MS.
cp_elapsed() {
  local ms=$(($(cp_now_ms) - $1))
  printf '%d.%d s' $((ms / 1000)) $(((ms % 1000) / 100))
}
