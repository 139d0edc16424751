#!/usr/bin/env bash
# Starts a private single-node Slurm cluster on this host for the cluster
# test: its own munge daemon and key, a minimal slurm.conf (one node with
# 2 CPUs, no cgroup plugins, no accounting), slurmctld and slurmd, all with
# their state, logs and sockets in STATE_DIR. Waits until the node is idle.
#
#   start-slurm.sh STATE_DIR CONTROLLER_PORT NODE_PORT
#
# Run as root (SlurmUser=root). Client commands find the cluster with
# SLURM_CONF=STATE_DIR/slurm.conf. Stop it with stop-slurm.sh STATE_DIR.
# On failure it prints the daemons' logs and exits 1.
set -euo pipefail

if [ $# -ne 3 ]; then
  echo "usage: $0 STATE_DIR CONTROLLER_PORT NODE_PORT" >&2
  exit 2
fi
state=$(realpath "$1")
controller_port=$2
node_port=$3

for tool in munged slurmctld slurmd sinfo; do
  if ! command -v "$tool" >/dev/null; then
    echo "start-slurm: '$tool' not found: install the Debian packages slurm-wlm and munge" >&2
    exit 1
  fi
done

show_logs() {
  for log in "$state"/munged.log "$state"/slurmctld.log "$state"/slurmd.log; do
    echo "----- $log" >&2
    if [ -f "$log" ]; then tail -n 60 "$log" >&2; else echo "(not written)" >&2; fi
  done
}
fail() {
  echo "start-slurm: $*" >&2
  show_logs
  exit 1
}

mkdir -p "$state/ctld" "$state/spool"
chmod 700 "$state"

# munge: a key of our own (created once), a daemon on a socket of our own.
key="$state/munge.key"
if [ ! -f "$key" ]; then
  dd if=/dev/urandom of="$key" bs=1024 count=1 status=none
  chmod 400 "$key"
fi
socket="$state/munge.socket"
munged --force --socket="$socket" --key-file="$key" --pid-file="$state/munged.pid" \
  --log-file="$state/munged.log" --seed-file="$state/munged.seed" || fail "munged did not start"

node=$(hostname -s)
conf="$state/slurm.conf"
cat >"$conf" <<CONF
# A private single-node cluster for Intradyne's cluster test.
ClusterName=intradyne-test
SlurmctldHost=$node(127.0.0.1)
SlurmUser=root
SlurmdUser=root
SlurmctldPort=$controller_port
SlurmdPort=$node_port
AuthType=auth/munge
AuthInfo=socket=$socket
CredType=cred/munge
StateSaveLocation=$state/ctld
SlurmdSpoolDir=$state/spool
SlurmctldPidFile=$state/slurmctld.pid
SlurmdPidFile=$state/slurmd.pid
SlurmctldLogFile=$state/slurmctld.log
SlurmdLogFile=$state/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
# No cgroups: processes are tracked through /proc, tasks are not bound.
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
MpiDefault=none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/builtin
# The node as configured here, whatever slurmd detects (CI machines differ).
SlurmdParameters=config_overrides
ReturnToService=2
MinJobAge=600
NodeName=$node NodeAddr=127.0.0.1 CPUs=2 State=UNKNOWN
PartitionName=test Nodes=$node Default=YES MaxTime=INFINITE State=UP
CONF

export SLURM_CONF="$conf"
slurmctld -i || fail "slurmctld did not start"
slurmd -N "$node" || fail "slurmd did not start"

# Wait (at most 30 s of wall time) until the node is idle; a daemon that
# exits meanwhile fails at once. Each sinfo is bounded too: it waits for a
# controller that does not answer.
alive() {
  local pidfile="$state/$1.pid"
  [ ! -f "$pidfile" ] || kill -0 "$(cat "$pidfile")" 2>/dev/null
}
deadline=$((SECONDS + 30))
while [ "$SECONDS" -lt "$deadline" ]; do
  for daemon in munged slurmctld slurmd; do
    alive "$daemon" || fail "$daemon exited"
  done
  if [ "$(timeout 5 sinfo -h -n "$node" -o '%T' 2>/dev/null)" = "idle" ]; then
    echo "SLURM_CONF=$conf"
    exit 0
  fi
  sleep 0.5
done
fail "node $node did not become idle within 30 s (sinfo: $(timeout 5 sinfo -h -o '%N %T' 2>&1 || true))"
