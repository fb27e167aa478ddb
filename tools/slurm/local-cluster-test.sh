#!/usr/bin/env bash
# Proves the shard array on a real Slurm: installs Debian's slurm-wlm and munge (as root), starts
# munged, slurmctld and slurmd for a one-node cluster on this machine (their own key, socket, state
# and logs in a temp folder; nothing under /etc is changed), builds PathBench, submits
# tools/slurm/submit.sh for a small scene as a 4-task array and its merge job, waits for the merge,
# renders the same samples in one process, compares the two images byte for byte, and stops the
# daemons it started (by their process ids). Prints "slurm array: PASS" and exits 0 on success.
# Exits 3 ("slurm array: CANNOT RUN: reason") when this machine cannot host the cluster: the
# packages do not install, or the daemons do not bring the node up. Exits 1 ("slurm array: FAIL")
# on everything after the node is up (a job that fails, a missing or different merged image),
# with the daemons' log tails; 2 when not root.
#   tools/slurm/local-cluster-test.sh [SHARDS] [SPP]
set -uo pipefail
cd "$(dirname "$0")/../.."
repo=$(pwd)
shards=${1:-4}
spp=${2:-16}
scene="$repo/scenes/validation/white-furnace.yaml"

if [ "$(id -u)" != 0 ]; then
  echo "$0: needs root (it installs packages and runs slurmd, which starts jobs as their users)" >&2
  exit 2
fi
source tools/require-debian.sh
require_debian_packages "$0" slurm-wlm munge || { echo "slurm array: CANNOT RUN: slurm-wlm and munge did not install"; exit 3; }

work=$(mktemp -d /tmp/pathbench-slurm.XXXXXX)
pids=()
logs() {
  for log in "$work"/munged.log "$work"/slurmctld.log "$work"/slurmd.log "$work"/out/*.log; do
    [ -f "$log" ] && { echo "--- $log"; tail -n 15 "$log"; }
  done
}
fail() {
  echo "slurm array: FAIL: $*"
  logs
  exit 1
}
# The machine cannot host a one-node cluster (as opposed to a wrong result once it runs).
cannot() {
  echo "slurm array: CANNOT RUN: $*"
  logs
  exit 3
}
stop() {
  local p
  for p in "${pids[@]}"; do kill "$p" 2>/dev/null; done
  for p in "${pids[@]}"; do
    for _ in $(seq 50); do kill -0 "$p" 2>/dev/null || break; sleep 0.1; done
    kill -9 "$p" 2>/dev/null
  done
  rm -rf "$work"
}
trap stop EXIT

# PathBench, built once; every task runs the same executable.
# Release, which tools/test.sh has just built, so this build is incremental there.
dotnet build src/PathBench.Cli -c Release -v q -nologo >"$work/build.log" 2>&1 || { cat "$work/build.log"; fail "build failed"; }
export PATHBENCH="$repo/src/PathBench.Cli/bin/Release/net10.0/pathbench"
[ -x "$PATHBENCH" ] || fail "no executable at $PATHBENCH"

# munge with its own key and socket.
mungekey --create --keyfile="$work/munge.key" >/dev/null 2>&1 || cannot "mungekey failed"
munged --force --foreground --key-file="$work/munge.key" --socket="$work/munge.socket" \
  --pid-file="$work/munged.pid" --log-file="$work/munged.log" --seed-file="$work/munged.seed" >>"$work/munged.log" 2>&1 &
pids+=($!)
for _ in $(seq 50); do [ -S "$work/munge.socket" ] && break; sleep 0.1; done
[ -S "$work/munge.socket" ] || cannot "munged did not open its socket"

host=$(hostname -s)
mkdir -p "$work/state" "$work/spool" "$work/out"
cat >"$work/slurm.conf" <<CONF
ClusterName=pathbench-local
SlurmctldHost=$host(127.0.0.1)
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$work/munge.socket
SlurmctldPort=16817
SlurmdPort=16818
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/slurmctld.log
SlurmdLogFile=$work/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
MpiDefault=none
ReturnToService=2
SchedulerType=sched/builtin
SlurmctldTimeout=30
SlurmdTimeout=30
NodeName=$host NodeAddr=127.0.0.1 CPUs=$(nproc) State=UNKNOWN
PartitionName=local Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
export SLURM_CONF="$work/slurm.conf"

slurmctld -D -i -f "$SLURM_CONF" >>"$work/slurmctld.log" 2>&1 &
pids+=($!)
slurmd -D -f "$SLURM_CONF" >>"$work/slurmd.log" 2>&1 &
pids+=($!)
state=""
for _ in $(seq 100); do
  state=$(sinfo -h -n "$host" -o %T 2>/dev/null | head -n 1)
  [ "$state" = idle ] && break
  sleep 0.2
done
[ "$state" = idle ] || cannot "the node did not become idle within 20 s (state '$state')"

start=$(date +%s%N)
MERGE_WAIT=1 tools/slurm/submit.sh "$shards" "$scene" "$work/out" --spp "$spp" --seed 3 >"$work/submit.log" 2>&1 \
  || { cat "$work/submit.log"; fail "the merge job did not succeed"; }
took=$(( ($(date +%s%N) - start) / 1000000 ))
[ -f "$work/out/merged.exr" ] || fail "no merged image"
grep -q "$shards parts" "$work/out/merge.log" || fail "the merge log does not report $shards parts"

"$PATHBENCH" render "$scene" --spp "$spp" --seed 3 --quiet --out "$work/single.exr" >"$work/single.log" 2>&1 || fail "single render failed"
# cmp's status alone is not trusted: it must also have printed nothing, and differ on a known-different pair.
if ! out=$(cmp "$work/single.exr" "$work/out/merged.exr" 2>&1) || [ -n "$out" ]; then
  fail "merged image differs from the single render: $out"
fi
cmp -s "$work/single.exr" "$work/out/shard-0.exr" && fail "cmp reports a shard equal to the whole image: the comparison tests nothing"
echo "slurm array: $shards shards of $spp spp, submit to merged in ${took} ms; merged.exr equals the single render byte for byte"
echo "slurm array: PASS"
