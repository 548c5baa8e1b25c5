#!/usr/bin/env bash
# A real test of the Slurm job-array recipe of notebooks-free-docs/scaling.md on a one-node
# cluster: installs Debian's slurm-wlm and munge (if missing), writes a slurm.conf for this
# host, starts munged, slurmctld and slurmd on private sockets and ports, submits the shard
# array and the dependent merge exactly as the docs' scripts do (extracted from scaling.md),
# waits (bounded), and checks that the merged tables equal a single-process run.
# Exit 0: passed, or skipped with a printed reason because the packages cannot be installed.
# Exit non-zero: a real failure.
set -euo pipefail
ROOT=$(cd "$(dirname "$0")/../.." && pwd)
SHARDS=4
WAIT_S=${SEINE_CLUSTER_WAIT_S:-300}

skip() {
  echo "SKIPPED tests/cluster/run.sh: $* (the Slurm recipe was NOT tested)"
  exit 0
}
fail() {
  echo "FAILED tests/cluster/run.sh: $*" >&2
  exit 1
}

install_packages() {
  if command -v slurmctld >/dev/null && command -v slurmd >/dev/null && command -v munged >/dev/null; then
    return
  fi
  [ "$(id -u)" = 0 ] || skip "slurm-wlm and munge are not installed and this is not root"
  command -v apt-get >/dev/null || skip "no apt-get to install slurm-wlm and munge"
  echo "== installing slurm-wlm and munge"
  apt-get update -qq >/dev/null 2>&1 || skip "apt-get update failed"
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends slurm-wlm munge >/dev/null 2>&1 ||
    skip "apt-get install slurm-wlm munge failed"
}

# The daemons started here, stopped by their pid files on exit (nothing else is touched).
W=""
cleanup() {
  [ -n "$W" ] || return 0
  local pids=""
  for pidfile in "$W/slurmd.pid" "$W/slurmctld.pid" "$W/munge/munged.pid"; do
    if [ -s "$pidfile" ]; then pids="$pids $(cat "$pidfile")"; fi
  done
  for pid in $pids; do kill "$pid" 2>/dev/null || true; done
  # Wait (bounded) until they are gone, so that a rerun finds the ports free.
  for _ in $(seq 1 20); do
    local alive=""
    for pid in $pids; do if kill -0 "$pid" 2>/dev/null; then alive=1; fi; done
    [ -n "$alive" ] || break
    sleep 0.5
  done
  if [ -z "${SEINE_CLUSTER_KEEP:-}" ]; then rm -rf "$W"; else echo "kept $W"; fi
}

start_munge() {
  mkdir -p "$W/munge"
  dd if=/dev/urandom of="$W/munge/munge.key" bs=1024 count=1 status=none
  chmod 0400 "$W/munge/munge.key"
  chmod 0700 "$W/munge"
  # munged refuses to run as root without --force; it is ours alone, on its own socket.
  munged --force --key-file="$W/munge/munge.key" --socket="$W/munge/munge.sock" \
    --pid-file="$W/munge/munged.pid" --log-file="$W/munge/munged.log" --seed-file="$W/munge/seed" ||
    fail "munged did not start: $(cat "$W/munge/munged.log" 2>/dev/null)"
}

write_slurm_conf() {
  local host mem
  host=$(hostname -s)
  mem=$(awk '/MemTotal/ { print int($2 / 1024 * 0.5) }' /proc/meminfo)
  mkdir -p "$W/state" "$W/spool"
  cat >"$W/slurm.conf" <<EOF
ClusterName=seinetest
SlurmctldHost=$host
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$W/munge/munge.sock
CredType=cred/munge
StateSaveLocation=$W/state
SlurmdSpoolDir=$W/spool
SlurmctldPidFile=$W/slurmctld.pid
SlurmdPidFile=$W/slurmd.pid
SlurmctldLogFile=$W/slurmctld.log
SlurmdLogFile=$W/slurmd.log
SlurmctldPort=17817
SlurmdPort=17818
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core_Memory
ReturnToService=2
MpiDefault=none
MinJobAge=600
NodeName=$host CPUs=$(nproc) RealMemory=$mem State=UNKNOWN
PartitionName=test Nodes=$host Default=YES MaxTime=INFINITE State=UP
EOF
  export SLURM_CONF="$W/slurm.conf"
}

start_slurm() {
  slurmctld -f "$SLURM_CONF" || fail "slurmctld did not start: $(tail -5 "$W/slurmctld.log")"
  slurmd -f "$SLURM_CONF" || fail "slurmd did not start: $(tail -5 "$W/slurmd.log")"
  for _ in $(seq 1 30); do
    if sinfo -h -o %t 2>/dev/null | grep -qE '^(idle|mix|alloc)'; then return; fi
    sleep 1
  done
  fail "the node did not come up: $(sinfo 2>&1); $(tail -5 "$W/slurmctld.log")"
}

# The blocks of scaling.md marked `<!-- file: NAME -->`, written to $W/job/NAME.
extract_scripts() {
  mkdir -p "$W/job"
  awk -v dir="$W/job" '
    /^<!-- file: .* -->$/ { name = $3; next }
    name != "" && /^```/ { if (open) { close(dir "/" name); name = ""; open = 0 } else { open = 1 }; next }
    open { print > (dir "/" name) }
  ' "$ROOT/notebooks-free-docs/scaling.md"
  for f in seine-shard.sbatch seine-merge.sbatch submit.sh; do
    [ -s "$W/job/$f" ] || fail "scaling.md has no block for $f"
  done
  chmod +x "$W/job"/*
}

# A small scenario: a one-month plan of the wide example survey, and 2 000 drawn objects.
make_scenario() {
  cd "$W/job"
  sed -e 's/^last_night = .*/last_night = 61420/' "$ROOT/survey-configs/wide-plan.toml" >plan.toml
  "$SEINE" plan --plan plan.toml --out visits.csv >/dev/null 2>&1 || fail "seine plan failed"
  "$SEINE" draw --spec "$ROOT/survey-configs/populations/scattered-disk.toml" --count 2000 --seed 5 \
    --out objects.parquet --quiet || fail "seine draw failed"
}

# Wait for every job to leave the queue; then each must have completed.
wait_jobs() {
  local t0=$SECONDS
  while [ -n "$(squeue -h -o %i 2>/dev/null)" ]; do
    [ $((SECONDS - t0)) -lt "$WAIT_S" ] || fail "jobs still queued after ${WAIT_S} s: $(squeue 2>&1)"
    sleep 2
  done
  local states
  states=$(scontrol show job 2>/dev/null | grep -o 'JobState=[A-Z_]*' | sort | uniq -c)
  echo "job states: $(echo $states)"
  if echo "$states" | grep -v 'JobState=COMPLETED' | grep -q JobState; then
    cat "$W"/job/seine-*.log >&2 || true
    fail "a job did not complete"
  fi
}

# The merged tables must equal one process's run: CSV bytes (provenance is in sidecars) and
# the summary counts (timings aside).
compare() {
  cd "$W/job"
  "$SEINE" observe --survey visits.survey.toml --objects objects.parquet --seed 1 --out single \
    --format csv --quiet || fail "the single-process run failed"
  "$SEINE" merge run/shard-* --out merged-csv --format csv --quiet || fail "merge --format csv failed"
  [ -s run/merged/objects.parquet ] || fail "the merge job wrote no run/merged/objects.parquet"
  for t in objects.csv detections.csv; do
    cmp -s "single/$t" "merged-csv/$t" || fail "$t of the merged shards differs from the single run"
  done
  local counts='elapsed_s|objects_per_second'
  diff <(grep -vE "$counts" single/summary.json) <(grep -vE "$counts" run/merged/summary.json) >/dev/null ||
    fail "summary.json of the merge differs from the single run"
  echo "merged $SHARDS shards: $(($(wc -l <single/objects.csv) - 1)) objects and" \
    "$(($(wc -l <single/detections.csv) - 1)) detections, identical to one process"
}

install_packages
cd "$ROOT"
cargo build --release --quiet
SEINE="$ROOT/target/release/seine"
export SEINE
W=$(mktemp -d /tmp/seine-cluster.XXXXXX)
trap cleanup EXIT
start_munge
write_slurm_conf
start_slurm
extract_scripts
make_scenario
echo "== submitting $SHARDS shard tasks and the merge (scaling.md's submit.sh)"
(cd "$W/job" && SEINE_SHARDS=$SHARDS SEINE_SURVEY=visits.survey.toml SEINE_OBJECTS=objects.parquet \
  SEINE_OUT=run SEINE_SEED=1 ./submit.sh) || fail "submission failed"
wait_jobs
compare
echo "PASSED tests/cluster/run.sh"
