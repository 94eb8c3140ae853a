#!/usr/bin/env bash
# Stops the control plane that start.sh STATE_DIR started: exactly the pids it recorded, newest
# first (controller manager, apiserver, etcd), each with TERM and, after 10 s, KILL.
set -euo pipefail

die() { echo "stop.sh: $*" >&2; exit 1; }

[[ $# -eq 1 ]] || die "usage: stop.sh STATE_DIR"
[[ -d "$1" ]] || die "no such folder: $1"
state="$(cd "$1" && pwd)"
[[ -f "$state/pids" ]] || { echo "stop.sh: nothing recorded in $state/pids" >&2; exit 0; }

# ours PID: alive and started for this state folder. Every process start.sh launches names
# STATE_DIR in its arguments, so a pid the kernel has since reused for something else is skipped.
ours() {
  local cmdline
  cmdline="$(tr '\0' ' ' 2>/dev/null <"/proc/$1/cmdline")" || return 1
  [[ "$cmdline" == *"$state/"* ]]
}

mapfile -t pids < <(tac "$state/pids")
for pid in "${pids[@]}"; do
  ours "$pid" || continue
  kill -TERM "$pid" 2>/dev/null || continue
  for _ in $(seq 100); do
    ours "$pid" || break
    sleep 0.1
  done
  if ours "$pid"; then
    echo "stop.sh: pid $pid ignored TERM for 10 s; sending KILL" >&2
    kill -KILL "$pid" 2>/dev/null || true
    sleep 0.5
  fi
done

for pid in "${pids[@]}"; do
  ours "$pid" && die "pid $pid is still running"
done
rm -f "$state/pids"
echo "stop.sh: control plane in $state stopped" >&2
