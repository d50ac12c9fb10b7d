#!/usr/bin/env bash
# End-to-end test of `tuningfork run --shard` on a real scheduler: installs Debian's Slurm packages
# (idempotent), starts a single-node Slurm (munge + slurmctld + slurmd, no accounting database),
# submits a 4-session batch as a job array with `sbatch --wait` (each task picks its shard from
# SLURM_ARRAY_TASK_ID / SLURM_ARRAY_TASK_COUNT), merges the shards, and checks that the merged and
# per-session outputs equal a single-machine run byte for byte. Daemons started here are stopped
# by the PIDs in their pid files on every exit path; logs are printed when anything fails.
#
# Needs root (apt-get, daemons) and built packages (`npx tsc -b`). Run from anywhere:
#   bash packages/cli/scripts/slurm-array-test.sh
# Environment: TF_SLURM_PIPELINE (a --pipeline value; default: the tuningfork package when it
# exports analyzeSession, else the cli's test double), TF_SLURM_DURATION (seconds per simulated
# session, default 120), TF_SLURM_TIMEOUT (seconds for the array job, default 900),
# TF_SLURM_KEEP=1 keeps the work folder.
set -euo pipefail

say() { printf 'slurm-array-test: %s\n' "$*"; }
REPO=$(cd "$(dirname "${BASH_SOURCE[0]}")/../../.." && pwd)
CLI="$REPO/packages/cli/dist/bin.js"
DURATION=${TF_SLURM_DURATION:-120}
TIMEOUT=${TF_SLURM_TIMEOUT:-900}
TASKS=4

if [ "$(id -u)" != 0 ]; then say 'needs root (it installs packages and starts the Slurm daemons)'; exit 1; fi
if [ ! -f "$CLI" ]; then say "the cli is not built ($CLI missing): run 'npx tsc -b' first"; exit 1; fi

# 1. Packages (skipped when present).
if ! command -v sbatch >/dev/null || ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null || ! command -v munged >/dev/null; then
  say 'installing slurmctld slurmd slurm-client munge'
  export DEBIAN_FRONTEND=noninteractive
  timeout 300 apt-get update -qq
  timeout 600 apt-get install -y -qq --no-install-recommends slurmctld slurmd slurm-client munge >/dev/null
fi
[ -s /etc/munge/munge.key ] || { say 'no /etc/munge/munge.key after installing munge'; exit 1; }

WORK=$(mktemp -d -t tf-slurm-test.XXXXXX)
chmod 755 "$WORK"
S="$WORK/slurm"
STARTED=()          # pid files of the daemons this script started
CONF=/etc/slurm/slurm.conf
CONF_BACKUP=""
STATUS=1

stop_daemons() {
  local f p i
  for f in "${STARTED[@]}"; do
    [ -s "$f" ] || continue
    p=$(cat "$f"); kill "$p" 2>/dev/null || continue
    for i in $(seq 1 40); do kill -0 "$p" 2>/dev/null || break; sleep 0.25; done
    kill -0 "$p" 2>/dev/null && kill -9 "$p" 2>/dev/null || true
  done
}
cleanup() {
  set +e
  if [ "$STATUS" != 0 ]; then
    say "FAILED; logs follow"
    for f in "$S"/log/*.log "$WORK"/tasks/*.txt "$WORK"/*.log; do
      [ -f "$f" ] || continue
      printf -- '----- %s (last 60 lines)\n' "$f"; tail -n 60 "$f"
    done
  fi
  if [ "$STATUS" != 0 ] && [ -s "$S/run/slurmctld.pid" ]; then timeout 10 scancel --name=tf-array 2>/dev/null; sleep 1; fi
  stop_daemons
  if [ -n "$CONF_BACKUP" ]; then mv -f "$CONF_BACKUP" "$CONF"; else rm -f "$CONF"; fi
  if [ "${TF_SLURM_KEEP:-0}" = 1 ]; then say "kept $WORK"; else rm -rf "$WORK"; fi
}
trap cleanup EXIT
trap 'exit 130' INT TERM

# 2. A 4-session batch of short simulated sessions (written by the demo command, not analysed).
cd "$WORK"
if [ -n "${TF_SLURM_PIPELINE:-}" ]; then PIPE=$TF_SLURM_PIPELINE
elif (cd "$REPO" && node -e "import('tuningfork').then((m) => process.exit(typeof m.analyzeSession === 'function' ? 0 : 1), () => process.exit(1))"); then PIPE=tuningfork
else PIPE="$REPO/packages/cli/test/fixtures/pipeline-double.mjs"
fi
say "pipeline: $PIPE; $TASKS sessions of $DURATION s"
pids=()
for k in 1 2 3 4; do
  node "$CLI" demo --no-analysis --quiet --duration "$DURATION" --sites 2 --units 4 --seed "$k" --out "data/s$k" >"demo-$k.log" 2>&1 & pids+=($!)
done
for p in "${pids[@]}"; do wait "$p"; done
cat > batch.json <<'JSON'
{ "description": "slurm array test", "seed": 11,
  "sessions": [
    { "manifest": "data/s1/input/session.json", "animal": "ratA", "group": "DMS" },
    { "manifest": "data/s2/input/session.json", "animal": "ratA", "group": "DMS" },
    { "manifest": "data/s3/input/session.json", "animal": "ratB", "group": "NAc" },
    { "manifest": "data/s4/input/session.json", "animal": "ratB", "group": "NAc" } ] }
JSON

# 3. The reference: one machine, one process.
say 'single-machine run'
timeout "$TIMEOUT" node "$CLI" run batch.json --out single --pipeline "$PIPE" --jobs 2 --quiet >single.log 2>&1

# 4. Start Slurm (queue only), per the verified recipe in the repository's shared notes.
NODE=$(hostname -s)
mkdir -p "$S"/{ctld,d,log,run} /run/munge
chown munge:munge /run/munge; chown -R slurm:slurm "$S"/ctld "$S"/log
if [ -s /run/munge/munged.pid ] && kill -0 "$(cat /run/munge/munged.pid)" 2>/dev/null; then
  say 'munged already running; using it'
else
  runuser -u munge -- /usr/sbin/munged
  STARTED+=(/run/munge/munged.pid)
fi
if [ -f "$CONF" ]; then CONF_BACKUP="$WORK/slurm.conf.orig"; cp -p "$CONF" "$CONF_BACKUP"; fi
mkdir -p /etc/slurm
cat > "$CONF" <<CONF
# written by packages/cli/scripts/slurm-array-test.sh (removed when it ends)
ClusterName=tftest
SlurmctldHost=localhost
SlurmUser=slurm
AuthType=auth/munge
StateSaveLocation=$S/ctld
SlurmdSpoolDir=$S/d
SlurmctldPidFile=$S/run/slurmctld.pid
SlurmdPidFile=$S/run/slurmd.pid
SlurmctldLogFile=$S/log/slurmctld.log
SlurmdLogFile=$S/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
MpiDefault=none
MailProg=/bin/true
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
ReturnToService=2
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
JobCompType=jobcomp/filetxt
JobCompLoc=$S/log/jobcomp.txt
NodeName=$NODE NodeAddr=127.0.0.1 CPUs=$(nproc) RealMemory=1000 State=UNKNOWN
PartitionName=debug Nodes=$NODE Default=YES MaxTime=INFINITE State=UP
CONF
STARTED+=("$S/run/slurmd.pid" "$S/run/slurmctld.pid")
/usr/sbin/slurmctld
/usr/sbin/slurmd
ready=0
for i in $(seq 1 60); do
  kill -0 "$(cat "$S/run/slurmctld.pid" 2>/dev/null)" 2>/dev/null || { say 'slurmctld died'; exit 1; }
  if timeout 5 sinfo -h -o %T 2>/dev/null | grep -qx idle; then ready=1; break; fi
  sleep 0.5
done
[ "$ready" = 1 ] || { say 'the node did not become idle'; timeout 5 sinfo || true; exit 1; }
say "slurm up: $(timeout 5 sinfo -h -o '%P %D %T %C')"

# 5. The array job: each task runs its own shard (from the array variables) into one folder.
mkdir -p tasks
cat > job.sh <<JOB
#!/bin/bash
#SBATCH --job-name=tf-array
#SBATCH --output=$WORK/tasks/task_%A_%a.txt
#SBATCH --time=00:15:00
#SBATCH --mem=200M
set -euo pipefail
cd "$WORK"
echo "task \${SLURM_ARRAY_TASK_ID} of \${SLURM_ARRAY_TASK_COUNT} (job \${SLURM_ARRAY_JOB_ID})"
node "$CLI" run batch.json --out sharded --pipeline "$PIPE" --jobs 1
JOB
say "sbatch --wait --array=0-$((TASKS - 1))"
timeout "$TIMEOUT" sbatch --wait --array=0-$((TASKS - 1)) job.sh >sbatch.log 2>&1 || { say "array job failed (sbatch exit $?)"; cat sbatch.log; exit 1; }
cat sbatch.log
for i in $(seq 0 $((TASKS - 1))); do
  f=$(ls tasks/task_*_"$i".txt)
  grep -q "shard $i/$TASKS from the Slurm array" "$f" || { say "task $i did not run shard $i/$TASKS"; cat "$f"; exit 1; }
done
n_done=$(ls sharded/sessions | wc -l)
[ "$n_done" = 4 ] || { say "expected 4 session folders after the array job, found $n_done"; exit 1; }
[ ! -e sharded/merged ] || { say 'a shard merged on its own'; exit 1; }

# 6. Merge the shards and compare with the single-machine run, byte for byte.
node "$CLI" merge batch.json --out sharded --pipeline "$PIPE" >merge.log 2>&1
diff -r single sharded >diff.log 2>&1 || { say 'sharded outputs differ from the single-machine run'; head -50 diff.log; exit 1; }
n_files=$(find sharded -type f | wc -l)
say "PASS: $TASKS array tasks, merged outputs equal the single-machine run ($n_files files identical)"
STATUS=0
