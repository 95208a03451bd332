#!/usr/bin/env bash
# A one-node Slurm cluster on this machine, from Debian's packages, for the test that runs the
# README's batch-scheduler recipe (test/slurm-recipe.test.ts). Root, no systemd: the daemons are
# started directly and stopped by process id.
#
#   scripts/slurm-one-node.sh install      apt-get install slurmctld slurmd slurm-client munge
#   scripts/slurm-one-node.sh up [DIR]     start munged, slurmctld and slurmd; wait for the node
#   scripts/slurm-one-node.sh down [DIR]   cancel the cluster's jobs, stop the daemons it started
#
# DIR (default /tmp/pronk-slurm) holds slurm.conf, the spool and state directories, the logs and
# the pid files; nothing under /etc/slurm is written. Clients find the cluster through
# SLURM_CONF=DIR/slurm.conf, which `up` prints as its last line.
#
# Exit codes: 0 done; 3 Slurm cannot run here (not root, or a package missing), with the reason;
# 1 a daemon did not start or stop (the end of its log is printed).
#
# The node declares PRONK_SLURM_CPUS CPUs (default 16) whatever the machine has
# (SlurmdParameters=config_overrides): the README's array tasks ask for 8 CPUs each, so two of them
# run at once even on a 2-core CI machine, their worker threads sharing the real cores.
set -uo pipefail

PACKAGES=(slurmctld slurmd slurm-client munge)
DIR=${2:-/tmp/pronk-slurm}
CPUS=${PRONK_SLURM_CPUS:-16}
MUNGE_SOCKET=/run/munge/munge.socket.2

die() { echo "slurm-one-node: $*" >&2; exit 1; }
cannot() { echo "slurm-one-node: $*" >&2; exit 3; }

need_root() { [ "$(id -u)" -eq 0 ] || cannot "needs root (it starts munged, slurmctld and slurmd); running as $(id -un)"; }

# The process of a pid file, if it is alive and still the program named (pids are reused).
alive() { # alive PIDFILE NAME
  local pid
  [ -s "$1" ] || return 1
  pid=$(cat "$1")
  [ -r "/proc/$pid/comm" ] && [ "$(cat "/proc/$pid/comm")" = "$2" ] && echo "$pid"
}

# Wait for a pid file to name a live process of NAME (a daemon writes it once it has forked).
wait_started() { # wait_started PIDFILE NAME LOG
  for _ in $(seq 100); do
    alive "$1" "$2" > /dev/null && return 0
    sleep 0.1
  done
  [ -f "$3" ] && tail -n 20 "$3" >&2
  die "$2 did not start (no live process in $1; its log is $3)"
}

stop() { # stop PIDFILE NAME: TERM, up to 10 s, then KILL
  local pid
  pid=$(alive "$1" "$2") || { rm -f "$1"; return 0; }
  kill -TERM "$pid" 2> /dev/null
  for _ in $(seq 100); do
    [ -e "/proc/$pid" ] || { rm -f "$1"; echo "stopped $2 (pid $pid)"; return 0; }
    sleep 0.1
  done
  kill -KILL "$pid" 2> /dev/null
  sleep 0.2
  rm -f "$1"
  echo "killed $2 (pid $pid): it did not stop within 10 s"
}

install_packages() {
  need_root
  command -v apt-get > /dev/null || cannot "apt-get not found: install ${PACKAGES[*]} by hand"
  export DEBIAN_FRONTEND=noninteractive
  # Debian's maintainer scripts try to start the services; without systemd they only complain.
  apt-get install -y --no-install-recommends "${PACKAGES[@]}" ||
    { apt-get update && apt-get install -y --no-install-recommends "${PACKAGES[@]}"; } ||
    cannot "apt-get could not install ${PACKAGES[*]}"
}

up() {
  need_root
  local missing=()
  for program in munged slurmctld slurmd sbatch scontrol sinfo squeue; do
    command -v "$program" > /dev/null || missing+=("$program")
  done
  [ ${#missing[@]} -eq 0 ] || cannot "not installed: ${missing[*]} (scripts/slurm-one-node.sh install, or apt-get install ${PACKAGES[*]})"
  [ -r /etc/munge/munge.key ] || cannot "no /etc/munge/munge.key (the munge package writes it when installed)"
  if alive "$DIR/slurmctld.pid" slurmctld > /dev/null; then die "already up in $DIR (run: $0 down $DIR)"; fi
  # The default ports; a cluster left running elsewhere (another DIR) holds them.
  for port in 6817 6818; do
    if (exec 3<> "/dev/tcp/127.0.0.1/$port") 2> /dev/null; then
      die "port $port is in use (a Slurm daemon already running? stop it first, e.g. $0 down OTHER_DIR)"
    fi
  done

  local node
  node=$(hostname -s)
  # Each daemon creates only the last component of its directories: make the parents.
  mkdir -p "$DIR/spool" "$DIR/log"
  cat > "$DIR/slurm.conf" <<EOF
# One-node cluster for Pronk's tests (scripts/slurm-one-node.sh).
ClusterName=pronk
SlurmctldHost=$node(127.0.0.1)
SlurmUser=root
AuthType=auth/munge
CredType=cred/munge
StateSaveLocation=$DIR/spool/ctld
SlurmdSpoolDir=$DIR/spool/d
SlurmctldPidFile=$DIR/slurmctld.pid
SlurmdPidFile=$DIR/slurmd.pid
SlurmctldLogFile=$DIR/log/slurmctld.log
SlurmdLogFile=$DIR/log/slurmd.log
# No cgroups, no accounting, no mail: nothing beyond the four packages.
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
MailProg=/bin/true
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SlurmdParameters=config_overrides
ReturnToService=2
# Finished jobs stay visible to scontrol for an hour (default 300 s), however slow the machine.
MinJobAge=3600
NodeName=$node NodeAddr=127.0.0.1 CPUs=$CPUS State=UNKNOWN
PartitionName=main Nodes=$node Default=YES MaxTime=INFINITE State=UP
EOF

  # munged: reuse one that answers (then `down` leaves it alone), else start it as the munge user.
  if munge -n < /dev/null 2> /dev/null | unmunge > /dev/null 2>&1; then
    echo "munged is already running; using it"
  else
    install -d -o munge -g munge -m 0755 /run/munge
    runuser -u munge -- munged || die "munged did not start (see /var/log/munge/munged.log)"
    wait_started /run/munge/munged.pid munged /var/log/munge/munged.log
    cp /run/munge/munged.pid "$DIR/munged.pid"
    munge -n < /dev/null | unmunge > /dev/null || die "munged does not answer on $MUNGE_SOCKET"
  fi

  slurmctld -f "$DIR/slurm.conf" -c || die "slurmctld did not start"
  wait_started "$DIR/slurmctld.pid" slurmctld "$DIR/log/slurmctld.log"
  slurmd -f "$DIR/slurm.conf" -N "$node" || die "slurmd did not start"
  wait_started "$DIR/slurmd.pid" slurmd "$DIR/log/slurmd.log"

  export SLURM_CONF=$DIR/slurm.conf
  local state=''
  for _ in $(seq 300); do
    state=$(sinfo -h -n "$node" -o %T 2> /dev/null)
    [ "$state" = idle ] && break
    sleep 0.1
  done
  if [ "$state" != idle ]; then
    tail -n 20 "$DIR/log/slurmctld.log" "$DIR/log/slurmd.log" >&2
    die "node $node is '${state:-not reported}' after 30 s, not idle"
  fi
  echo "one-node Slurm up: node $node, $CPUS CPUs, logs in $DIR/log"
  echo "SLURM_CONF=$DIR/slurm.conf"
}

down() {
  [ -f "$DIR/slurm.conf" ] || { echo "nothing to stop in $DIR"; return 0; }
  export SLURM_CONF=$DIR/slurm.conf
  if alive "$DIR/slurmctld.pid" slurmctld > /dev/null; then
    # Every job on this private cluster is ours: cancel them and let slurmd end their steps.
    local jobs
    jobs=$(squeue -h -o %A 2> /dev/null | sort -u)
    if [ -n "$jobs" ]; then
      # shellcheck disable=SC2086
      scancel $jobs 2> /dev/null
      for _ in $(seq 100); do
        [ -z "$(squeue -h -o %A 2> /dev/null)" ] && break
        sleep 0.1
      done
    fi
  fi
  stop "$DIR/slurmd.pid" slurmd
  stop "$DIR/slurmctld.pid" slurmctld
  stop "$DIR/munged.pid" munged
}

case "${1:-}" in
  install) install_packages ;;
  up) up ;;
  down) down ;;
  *) echo "usage: $0 install | up [DIR] | down [DIR]" >&2; exit 2 ;;
esac
