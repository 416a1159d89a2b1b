#!/usr/bin/env bash
# A real-scheduler test of the README's cluster recipe: a one-node Slurm cluster on
# 127.0.0.1, the shipped tolerance study in 4 shards, merge, render from the merged
# results, compared byte for byte with an unsharded render; then a cancelled element, the
# merge naming the missing shard, and the element's re-run.
#
# Needs root and the operating system's packages (slurm-wlm and munge, installed here with
# apt-get if missing). Not part of .ci/run. Stops exactly the daemons it started.
# Exit 0 when every step passed, 1 otherwise.
#
#   sudo tests/cluster/slurm-single-node.sh
set -uo pipefail

root=$(cd "$(dirname "$0")/../.." && pwd)
bin="$root/target/release/statebook"
study="$root/demo-scripts/camera-head-tolerance.sbook"
work=$(mktemp -d /tmp/statebook-slurm.XXXXXX)
pids=()
failed=0

say() { printf '%s\n' "$*"; }
fail() { say "FAIL: $*"; failed=1; }
cleanup() {
    for p in "${pids[@]}"; do kill "$p" 2>/dev/null; done
    for p in "${pids[@]}"; do wait "$p" 2>/dev/null; done
}
trap cleanup EXIT

[ "$(id -u)" = 0 ] || { say "needs root (installs packages, runs the Slurm daemons)"; exit 1; }
if ! command -v slurmctld >/dev/null || ! command -v munged >/dev/null; then
    say "installing slurm-wlm and munge from the operating system's packages"
    apt-get update -qq >/dev/null && DEBIAN_FRONTEND=noninteractive \
        apt-get install -y -qq slurm-wlm munge >/dev/null || { say "cannot install"; exit 1; }
fi
[ -x "$bin" ] || (cd "$root" && cargo build --release --quiet) || exit 1
# The jobs call `statebook` by name, as the README's recipe does.
mkdir -p "$work/bin" && ln -sf "$bin" "$work/bin/statebook"
export PATH="$work/bin:$PATH"

# --- munge, with its own key, socket and files under $work -------------------------------
mkdir -p "$work/munge" && chmod 700 "$work/munge"
dd if=/dev/urandom of="$work/munge/munge.key" bs=1024 count=1 status=none
chmod 400 "$work/munge/munge.key"
munged --force --key-file="$work/munge/munge.key" --socket="$work/munge/socket" \
    --pid-file="$work/munge/munged.pid" --log-file="$work/munge/munged.log" \
    --seed-file="$work/munge/seed" || { say "munged did not start"; exit 1; }
pids+=("$(cat "$work/munge/munged.pid")")

# --- a one-node cluster on 127.0.0.1 ------------------------------------------------------
host=$(hostname -s)
cpus=$(nproc)
mkdir -p "$work/spool/d" "$work/spool/ctld" "$work/log"
cat > "$work/slurm.conf" <<EOF
ClusterName=statebook-test
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=6917
SlurmdPort=6918
AuthType=auth/munge
AuthInfo=socket=$work/munge/socket
CredType=cred/munge
SlurmUser=root
SlurmdUser=root
StateSaveLocation=$work/spool/ctld
SlurmdSpoolDir=$work/spool/d
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/log/slurmctld.log
SlurmdLogFile=$work/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
MpiDefault=none
ReturnToService=2
NodeName=$host NodeAddr=127.0.0.1 CPUs=$cpus State=UNKNOWN
PartitionName=test Nodes=$host Default=YES MaxTime=INFINITE State=UP
EOF
export SLURM_CONF="$work/slurm.conf"
slurmctld -D -f "$SLURM_CONF" >"$work/log/slurmctld.out" 2>&1 &
pids+=("$!")
slurmd -D -f "$SLURM_CONF" >"$work/log/slurmd.out" 2>&1 &
pids+=("$!")
for _ in $(seq 1 60); do
    sinfo -h -o '%T' 2>/dev/null | grep -qE 'idle|mixed' && break
    sleep 1
done
sinfo -h -o '%T' 2>/dev/null | grep -qE 'idle|mixed' || {
    say "the node did not come up"; tail -5 "$work/log/"*.log; exit 1; }
say "cluster up: $(sinfo -h -o '%P %D %T')"

# --- the README recipe, 4 shards ----------------------------------------------------------
cp "$study" "$work/study.sbook"
cd "$work"
cat > study.slurm <<'EOF'
#!/bin/bash
#SBATCH --job-name=tolerance-study
#SBATCH --array=1-4
#SBATCH --cpus-per-task=1
#SBATCH --output=log/shard-%a.out
statebook run study.sbook --shard "${SLURM_ARRAY_TASK_ID}/4" \
    --sweep-results "shards/study.shard-${SLURM_ARRAY_TASK_ID}-of-4.json"
EOF
wait_for() { # job id: waits until it has left the queue
    for _ in $(seq 1 600); do
        [ -z "$(squeue -h -j "$1" 2>/dev/null)" ] && return 0
        sleep 1
    done
    return 1
}
jobid=$(sbatch --parsable study.slurm | cut -d';' -f1)
merge=$(sbatch --parsable --dependency="afterany:${jobid}" --output=log/merge.out \
    --wrap "statebook merge shards/study.shard-*-of-4.json -o all.json" | cut -d';' -f1)
wait_for "$merge" || fail "the merge job did not finish"
[ -f all.json ] || { fail "no all.json"; cat log/merge.out; }
say "merge: $(tail -1 log/merge.out)"

statebook render study.sbook --sweeps-from all.json -o report.html >/dev/null \
    || fail "render --sweeps-from failed"
cp study.results.json merged.results.json
cp report.html merged.html
statebook render study.sbook -o report.html >/dev/null || fail "unsharded render failed"
cmp -s report.html merged.html && say "report: same bytes as an unsharded render" \
    || fail "the reports differ"
cmp -s study.results.json merged.results.json && say "records: same bytes" \
    || fail "the records differ"

# --- a cancelled element, the merge naming it, its re-run ---------------------------------
rm -rf shards all.json
hold=$(sbatch --parsable --hold study.slurm | cut -d';' -f1)
scancel "${hold}_2"
scontrol release "$hold" >/dev/null 2>&1
merge=$(sbatch --parsable --dependency="afterany:${hold}" --output=log/merge2.out \
    --wrap "statebook merge shards/study.shard-*-of-4.json -o all.json" | cut -d';' -f1)
wait_for "$merge" || fail "the second merge did not finish"
if grep -q "missing shard 2 of 4" log/merge2.out; then
    say "merge after a cancelled element: $(grep -o 'missing shard 2 of 4' log/merge2.out)"
else
    fail "the merge did not name the missing shard"; cat log/merge2.out
fi
rerun=$(sbatch --parsable --array=2 study.slurm | cut -d';' -f1)
merge=$(sbatch --parsable --dependency="afterany:${rerun}" --output=log/merge3.out \
    --wrap "statebook merge shards/study.shard-*-of-4.json -o all.json" | cut -d';' -f1)
wait_for "$merge" || fail "the third merge did not finish"
statebook render study.sbook --sweeps-from all.json -o report.html >/dev/null \
    && cmp -s report.html merged.html && say "after the re-run of element 2: same report" \
    || fail "the report after the re-run differs"

if [ "$failed" = 0 ]; then say "PASS"; else say "work folder kept: $work"; fi
exit "$failed"
