#!/usr/bin/env bash
# Stops the cluster that start-slurm.sh started in STATE_DIR: slurmd,
# slurmctld and munged, each by the process id in its pid file.
#
#   stop-slurm.sh STATE_DIR
set -uo pipefail
state=$1
for daemon in slurmd slurmctld munged; do
  pidfile="$state/$daemon.pid"
  [ -f "$pidfile" ] || continue
  pid=$(cat "$pidfile")
  kill "$pid" 2>/dev/null || continue
  # Wait (at most 10 s) for it to go, then insist.
  for _ in $(seq 1 100); do
    kill -0 "$pid" 2>/dev/null || break
    sleep 0.1
  done
  kill -9 "$pid" 2>/dev/null || true
done
exit 0
