#!/usr/bin/env bash
# Runs a small sharded sweep on a real single-node Slurm cluster on localhost
# (Debian 12 packages, no systemd, as root) and checks that the merged result
# equals a local run. Steps follow the project's tested notes on Slurm:
# install slurmctld, slurmd, slurm-client and munge; start munged as the munge
# user; write slurm.conf from `slurmd -C` (NodeName=localhost, CR_CPU); start
# slurmctld and slurmd; wait for the node to be idle; `hoplore slurm` writes
# the job-array script; submit it; poll squeue every 0.5 s; read the states
# with scontrol; compare tables (wall_s masked); stop the daemons this script
# started, by PID, in reverse order.
set -euo pipefail
cd "$(dirname "$0")/.."
REPO=$(pwd)
export DEBIAN_FRONTEND=noninteractive
export PATH="$PATH:/usr/local/go/bin"
ms() { echo $(($(date +%s%N) / 1000000)); }   # milliseconds, without needing bc
secs() { local d=$(($(ms) - $1)); printf '%d.%03d' $((d / 1000)) $((d % 1000)); }
T0=$(ms)
ts() { printf '[slurm-test %8ss] %s\n' "$(secs "$T0")" "$*"; }
fail() { echo "slurm-test: FAIL: $*" >&2; exit 1; }

[ "$(id -u)" = 0 ] || fail "must run as root (it installs packages and starts daemons)"

# ---- 1. install (8 packages with --no-install-recommends) ----
if ! apt-get update -qq; then
  echo "slurm-test: SKIPPED: apt is unreachable (apt-get update failed), so Slurm cannot be installed"
  exit 0
fi
apt-get install -y -qq --no-install-recommends slurmctld slurmd slurm-client munge >/dev/null
ts "installed: $(slurmd -V)"

# Stop what this script started, by PID, in reverse order (slurmd, slurmctld, munged).
STARTED=()   # pid files of the daemons this script started
stop_pid() {  # $1 = pid file
  [ -s "$1" ] || return 0
  local p; p=$(cat "$1")
  kill -TERM "$p" 2>/dev/null || return 0
  for _ in $(seq 1 40); do kill -0 "$p" 2>/dev/null || return 0; sleep 0.25; done
  echo "pid $p ($1) did not exit after 10s; sending KILL" >&2; kill -KILL "$p" 2>/dev/null || true
}
cleanup() {
  local rc=$?
  for ((i = ${#STARTED[@]} - 1; i >= 0; i--)); do stop_pid "${STARTED[$i]}"; done
  [ ${#STARTED[@]} -gt 0 ] && ts "daemons stopped"
  [ -n "${WORK:-}" ] && [ $rc = 0 ] && rm -rf "$WORK"
  return $rc
}
trap cleanup EXIT
alive() { [ -s "$1" ] && kill -0 "$(cat "$1")" 2>/dev/null; }

# ---- 2. munge ----
# Debian's munge postinst already creates /etc/munge/munge.key; create one only if missing.
[ -s /etc/munge/munge.key ] || runuser -u munge -- mungekey --create
chown munge:munge /etc/munge/munge.key && chmod 0400 /etc/munge/munge.key
install -d -o munge -g munge -m 0755 /run/munge      # systemd's RuntimeDirectory= normally makes this
if alive /run/munge/munged.pid; then
  ts "munged already running (pid $(cat /run/munge/munged.pid)); using it"
else
  runuser -u munge -- /usr/sbin/munged                 # forks; writes /run/munge/munged.pid
  STARTED+=(/run/munge/munged.pid)
fi
munge -n | unmunge >/dev/null                          # fails the script if munge auth is broken
ts "munged up (pid $(cat /run/munge/munged.pid))"

# ---- 3. slurm.conf ----
CPUS=$(slurmd -C | sed -n '1s/.* CPUs=\([0-9]*\).*/\1/p')
MEM=$(slurmd -C | sed -n '1s/.* RealMemory=\([0-9]*\).*/\1/p')
install -d -m 0755 /etc/slurm /var/spool/slurmctld /var/spool/slurmd /var/log/slurm
cat > /etc/slurm/slurm.conf <<CONF
ClusterName=ci
SlurmctldHost=localhost
SlurmUser=root
AuthType=auth/munge
CryptoType=crypto/munge
MpiDefault=none
MailProg=/bin/true
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
ReturnToService=2
StateSaveLocation=/var/spool/slurmctld
SlurmdSpoolDir=/var/spool/slurmd
SlurmctldPidFile=/run/slurmctld.pid
SlurmdPidFile=/run/slurmd.pid
SlurmctldLogFile=/var/log/slurm/slurmctld.log
SlurmdLogFile=/var/log/slurm/slurmd.log
NodeName=localhost CPUs=${CPUS} RealMemory=${MEM} State=UNKNOWN
PartitionName=debug Nodes=ALL Default=YES MaxTime=INFINITE State=UP
CONF

# ---- 4. start slurmctld + slurmd (both fork into the background and write their pid files) ----
alive /run/slurmctld.pid && fail "a slurmctld is already running (pid $(cat /run/slurmctld.pid)); not touching it"
alive /run/slurmd.pid && fail "a slurmd is already running (pid $(cat /run/slurmd.pid)); not touching it"
slurmctld; STARTED+=(/run/slurmctld.pid)
slurmd; STARTED+=(/run/slurmd.pid)
for _ in $(seq 1 120); do                      # wait up to 30 s for the node to register
  [ "$(sinfo -h -N -o %t 2>/dev/null)" = idle ] && break; sleep 0.25
done
sinfo
[ "$(sinfo -h -N -o %t)" = idle ] || { tail -20 /var/log/slurm/*.log; fail "node not idle"; }
ts "slurm up: ctld pid $(cat /run/slurmctld.pid), slurmd pid $(cat /run/slurmd.pid), ${CPUS} CPUs"

# ---- 5. hoplore: a local reference and the same sweep as a job array ----
WORK=$(mktemp -d /tmp/hoplore-slurm-test.XXXXXX)
HL=$WORK/hoplore
go build -o "$HL" ./cmd/hoplore
EXP=$REPO/testdata/tiny.yaml
ts "built hoplore; local reference run"
"$HL" run "$EXP" --out "$WORK/local" --workers "$CPUS" --quiet

TASKS=3
"$HL" slurm "$EXP" --tasks $TASKS --partition debug --time 10:00 --cpus-per-task 1 --out "$WORK/cluster" | tee "$WORK/slurm.txt"
SCRIPT=$(sed -n 's/^wrote //p' "$WORK/slurm.txt")
[ -f "$SCRIPT" ] || fail "hoplore slurm printed no script path"
bash "$SCRIPT" | tee "$WORK/submit.txt"
ARRAY=$(sed -n 's/^submitted array job \([0-9]*\) .*/\1/p' "$WORK/submit.txt")
MERGE=$(sed -n 's/.* and merge job \([0-9]*\);.*/\1/p' "$WORK/submit.txt")
[ -n "$ARRAY" ] && [ -n "$MERGE" ] || fail "could not read the job ids from the submission"
S0=$(ms)
for _ in $(seq 1 1200); do                     # poll every 0.5 s, at most 10 minutes
  [ -z "$(squeue -h -j "$ARRAY,$MERGE" 2>/dev/null)" ] && break; sleep 0.5
done
[ -z "$(squeue -h -j "$ARRAY,$MERGE" 2>/dev/null)" ] || { squeue; fail "jobs still queued after 10 minutes"; }
ts "array $ARRAY and merge $MERGE finished in $(secs "$S0")s"

# ---- 6. states, logs and tables ----
states() {  # one line per job: its id, array task, state and exit code
  scontrol -o show job "$1" | while read -r line; do
    echo "$line" | grep -oE '(^| )(JobId|ArrayJobId|ArrayTaskId|JobName|JobState|ExitCode)=[^ ]+' | tr -d '\n'; echo
  done
}
states "$ARRAY"; states "$MERGE"
N=$(scontrol -o show job "$ARRAY" | grep -c 'JobState=COMPLETED' || true)
[ "$N" = $TASKS ] || { cat "$WORK"/cluster/slurm/logs/*; fail "$N of $TASKS array tasks COMPLETED"; }
scontrol -o show job "$MERGE" | grep -q 'JobState=COMPLETED' || { cat "$WORK"/cluster/slurm/logs/*; fail "merge job did not complete"; }
for ((i = 0; i < TASKS; i++)); do
  LOG=$WORK/cluster/slurm/logs/${ARRAY}_$i.out
  [ -s "$LOG" ] || fail "no log $LOG (output named by %A_%a)"
  echo "--- ${ARRAY}_$i.out:"; tail -n 2 "$LOG"
  [ -f "$WORK/cluster/shards/$i/runs.parquet" ] && fail "shard $i finalized tables though it holds only its share"
done
echo "--- merge log:"; head -n 3 "$WORK"/cluster/slurm/logs/merge-"$MERGE".out
[ -f "$WORK/cluster/optimum.parquet" ] || fail "the merge job wrote no optimum.parquet"
go test ./sweep -run '^TestCompareDirs$' -count=1 -v -args "$WORK/local" "$WORK/cluster"
ts "PASS: merged job-array result equals the local run (wall_s masked)"
