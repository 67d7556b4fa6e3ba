# shellcheck shell=bash
# Configuration loading shared by scripts/ and docker-free-db/.
# Precedence: variables already in the environment, then .env, then .env.example.
# Files are parsed, never sourced, so a value cannot run code.

# cp_load_env_file FILE: export every KEY=VALUE of FILE whose KEY is not yet set.
cp_load_env_file() {
  local file="$1" line key value
  while IFS= read -r line || [[ -n "$line" ]]; do
    line="${line%$'\r'}"
    [[ "$line" =~ ^[[:space:]]*(#|$) ]] && continue
    line="${line#export }"
    [[ "$line" =~ ^[[:space:]]*([A-Za-z_][A-Za-z0-9_]*)=(.*)$ ]] || continue
    key="${BASH_REMATCH[1]}"
    value="${BASH_REMATCH[2]}"
    if [[ "$value" =~ ^\"(.*)\"[[:space:]]*$ ]] || [[ "$value" =~ ^\'(.*)\'[[:space:]]*$ ]]; then
      value="${BASH_REMATCH[1]}"
    else
      # Unquoted: drop an inline " # comment" and trailing blanks.
      value="${value%%[[:space:]]#*}"
      value="${value%"${value##*[![:space:]]}"}"
    fi
    [[ -n "${!key+x}" ]] || export "$key=$value"
  done <"$file"
}

# cp_load_env ROOT: load ROOT/.env (if present) then ROOT/.env.example defaults.
cp_load_env() {
  local root="$1" file
  for file in "$root/.env" "$root/.env.example"; do
    if [[ -f "$file" ]]; then cp_load_env_file "$file"; fi
  done
}

# cp_abs ROOT PATH: PATH made absolute relative to ROOT.
cp_abs() {
  case "$2" in
    /*) printf '%s\n' "$2" ;;
    *) printf '%s\n' "$1/$2" ;;
  esac
}
