# shellcheck shell=bash
# Background services: started in their own session (so a terminal Ctrl-C reaches only this
# script, which then stops them in order), logged to a file, optionally echoed with a prefix.

CP_SVC_NAMES=()
CP_SVC_PIDS=()
CP_TAIL_PIDS=()

# cp_start_service NAME LOGFILE CMD...: start CMD in the background; its PID is the command itself.
cp_start_service() {
  local name="$1" log="$2"
  shift 2
  mkdir -p "$(dirname "$log")"
  : >"$log"
  setsid "$@" >>"$log" 2>&1 </dev/null &
  local pid=$!
  CP_SVC_NAMES+=("$name")
  CP_SVC_PIDS+=("$pid")
  if [[ "${CP_ECHO_LOGS:-1}" == 1 ]]; then
    # --pid: the tail ends by itself if this script dies without cleaning up.
    tail -n +1 -F --pid=$$ "$log" 2>/dev/null | sed -u "s/^/[$name] /" &
    CP_TAIL_PIDS+=($!)
  fi
  cp_say "started $name (pid $pid), log $log"
}

cp_alive() { kill -0 "$1" 2>/dev/null; }

# cp_service_pid NAME: PID of a started service.
cp_service_pid() {
  local i
  for i in "${!CP_SVC_NAMES[@]}"; do
    if [[ "${CP_SVC_NAMES[$i]}" == "$1" ]]; then
      printf '%s\n' "${CP_SVC_PIDS[$i]}"
      return 0
    fi
  done
  return 1
}

# cp_http_ok URL: true when URL answers 2xx.
cp_http_ok() {
  if command -v curl >/dev/null 2>&1; then
    curl -fsS -o /dev/null --max-time 2 "$1" 2>/dev/null
  else
    node -e 'fetch(process.argv[1], { signal: AbortSignal.timeout(2000) }).then((r) => process.exit(r.ok ? 0 : 1), () => process.exit(1))' "$1"
  fi
}

# cp_wait_http URL PID SECONDS: wait for URL to answer 2xx; fail early if PID dies.
cp_wait_http() {
  local url="$1" pid="$2" max="$3" waited=0
  until cp_http_ok "$url"; do
    cp_alive "$pid" || return 1
    ((waited < max * 4)) || return 1
    sleep 0.25
    waited=$((waited + 1))
  done
}

# cp_port_busy PORT: true when something accepts connections on 127.0.0.1:PORT.
cp_port_busy() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

# Stop every started service, newest first: SIGTERM to its process group, SIGKILL after a grace time.
cp_stop_services() {
  local i pid name waited started
  for ((i = ${#CP_SVC_PIDS[@]} - 1; i >= 0; i--)); do
    pid="${CP_SVC_PIDS[$i]}"
    name="${CP_SVC_NAMES[$i]}"
    if ! cp_alive "$pid"; then
      wait "$pid" 2>/dev/null || true
      continue
    fi
    started="$(cp_now_ms)"
    kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true
    waited=0
    while cp_alive "$pid" && ((waited < ${CP_STOP_GRACE:-100})); do
      sleep 0.1
      waited=$((waited + 1))
    done
    if cp_alive "$pid"; then
      cp_warn "$name (pid $pid) ignored SIGTERM; killing it"
      kill -KILL -- "-$pid" 2>/dev/null || kill -KILL "$pid" 2>/dev/null || true
    fi
    wait "$pid" 2>/dev/null || true
    cp_say "stopped $name ($(cp_elapsed "$started"))"
  done
  CP_SVC_NAMES=()
  CP_SVC_PIDS=()
  sleep 0.3 # let the tails print the last lines
  for pid in "${CP_TAIL_PIDS[@]}"; do kill "$pid" 2>/dev/null || true; done
  CP_TAIL_PIDS=()
}

# cp_show_log_tail NAME LOGFILE [LINES]: the end of a log, for failure reports.
cp_show_log_tail() {
  printf -- '--- last %s lines of %s (%s) ---\n' "${3:-40}" "$1" "$2" >&2
  tail -n "${3:-40}" "$2" >&2 2>/dev/null || true
}
