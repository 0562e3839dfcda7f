#!/usr/bin/env bash
# test-slurm.sh: end-to-end test of compare-array.sbatch on a real one-node
# Slurm cluster. It installs the Debian Slurm and munge packages when they
# are missing, starts a private cluster on loopback in a temporary folder
# (start.sh), builds tautline, submits a `tautline compare` job array and a
# dependent `tautline merge` job (as compare-array.sbatch documents), waits
# for them, runs the same comparison in one process, and requires
# compare.json, compare.csv and every file under models/ to be byte-identical.
# The daemons are always stopped by their pids (stop.sh), however the test
# ends. Prints one PASS or FAIL line; exits non-zero on failure.
#
# Needs root (packages, munge, daemons) and Go. Usage, from anywhere:
#
#   scripts/slurm/test-slurm.sh
#
# TAUTLINE_SLURM_KEEP=1 keeps the temporary folder (logs, outputs).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
repo=$(cd "$here/../.." && pwd)
export PATH="$PATH:/usr/local/go/bin"

tasks=3
# A grid of 4 units (2 models x 2 rung blocks) over 3 tasks, so that one
# task runs units of both models; a few seconds of sampling in all. The
# tasks run with GOMAXPROCS=1, the single process with every CPU: results
# must not depend on it.
opts=(--models smbhb,strings --data demo:smbhb --rungs 12 --rung-blocks 2 --steps 1000 --walkers 16 --seed 11 --log-level warn)
timeout_s=90

fail() { echo "FAIL: slurm job array: $*"; exit 1; }

[ "$(id -u)" = 0 ] || fail "needs root (installs packages, runs munged, slurmctld and slurmd)"
command -v go >/dev/null || fail "go is not on PATH"

if ! command -v sbatch >/dev/null || ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null ||
   ! command -v munged >/dev/null; then
  echo "test-slurm: installing slurmctld slurmd slurm-client munge"
  # Keep the packages' scripts from starting system-wide daemons (Debian's
  # policy-rc.d convention: 101 = action forbidden); ours are started below.
  policy=""
  if [ ! -e /usr/sbin/policy-rc.d ]; then
    policy=/usr/sbin/policy-rc.d
    printf '#!/bin/sh\nexit 101\n' >"$policy" && chmod +x "$policy"
  fi
  log=$(mktemp /tmp/tautline-slurm-apt.XXXXXX)
  ok=1
  { apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends \
      slurmctld slurmd slurm-client munge; } </dev/null >"$log" 2>&1 || ok=0
  [ -z "$policy" ] || rm -f "$policy"
  [ $ok = 1 ] || { tail -20 "$log"; rm -f "$log"; fail "package install failed (log above)"; }
  rm -f "$log"
fi

tmp=$(mktemp -d /tmp/tautline-slurm-test.XXXXXX)
chmod 755 "$tmp" # munged (user munge) must reach its key and socket below
export SLURM_DIR="$tmp/slurm"
export SLURM_CONF="$SLURM_DIR/slurm.conf"
jobs_submitted=()

cleanup() {
  rc=$?
  set +e
  if [ ${#jobs_submitted[@]} -gt 0 ] && [ -s "$SLURM_DIR/slurmctld.pid" ]; then
    scancel "${jobs_submitted[@]}" 2>/dev/null
    for _ in $(seq 1 50); do [ -z "$(squeue -h 2>/dev/null)" ] && break; sleep 0.1; done
  fi
  "$here/stop.sh"
  if [ $rc -ne 0 ]; then
    for f in "$SLURM_DIR"/log/slurmctld.log "$SLURM_DIR"/log/slurmd.log "$SLURM_DIR"/munge/munged.log; do
      [ -s "$f" ] && { echo "--- last lines of $f"; tail -15 "$f"; }
    done
    for f in "$SLURM_DIR"/out/*; do
      [ -s "$f" ] && { echo "--- $f"; tail -20 "$f"; }
    done
  fi
  if [ "${TAUTLINE_SLURM_KEEP:-}" = 1 ]; then
    echo "test-slurm: kept $tmp"
  else
    rm -rf "$tmp"
  fi
  exit $rc
}
trap cleanup EXIT
trap 'echo "FAIL: slurm job array: interrupted"; exit 130' INT TERM

# Free ports for this cluster (another one may be running on the defaults).
port_free() { ! (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }
ctl=6817
while ! port_free $ctl || ! port_free $((ctl + 1)); do
  ctl=$((ctl + 2))
  [ $ctl -lt 6917 ] || fail "no free port pair in 6817-6916"
done
export SLURM_CTL_PORT=$ctl SLURM_D_PORT=$((ctl + 1))

bin="$tmp/bin/tautline"
(cd "$repo" && go build -o "$bin" ./cmd/tautline) || fail "go build failed"
"$here/start.sh" || fail "could not start the cluster"

# Tasks and merge run in $work, with the one binary built above.
work="$tmp/work"
mkdir -p "$work"
cd "$work"
jid=$(sbatch --parsable --array=0-$((tasks - 1)) --chdir="$work" --export=ALL,TAUTLINE="$bin" \
  -o "$SLURM_DIR/out/compare-%A_%a.out" "$here/compare-array.sbatch" split "${opts[@]}") ||
  fail "sbatch of the array failed"
jobs_submitted+=("$jid")
mid=$(sbatch --parsable --dependency=afterok:"$jid" --chdir="$work" -o "$SLURM_DIR/out/merge-%j.out" \
  --wrap "'$bin' merge --out merged split") || fail "sbatch of the merge failed"
jobs_submitted+=("$mid")
echo "test-slurm: array job $jid ($tasks tasks), merge job $mid"

# Wait for every job to end. Accounting is off (no sacct): scontrol keeps
# finished jobs for MinJobAge seconds, enough to read their states.
states() { scontrol show job "$1" -o 2>/dev/null | grep -o 'JobState=[A-Z_]*' | cut -d= -f2 | sort | uniq -c | tr '\n' ' '; }
deadline=$((SECONDS + timeout_s))
while :; do
  a=$(states "$jid"); m=$(states "$mid")
  case "$a $m" in
    *FAILED*|*CANCELLED*|*TIMEOUT*|*NODE_FAIL*|*OUT_OF_MEMORY*|*BOOT_FAIL*|*DEADLINE*|*PREEMPTED*)
      fail "a job did not succeed: array [$a], merge [$m]" ;;
  esac
  if scontrol show job "$mid" -o 2>/dev/null | grep -q 'Reason=DependencyNeverSatisfied'; then
    fail "merge dependency can never be satisfied: array [$a]"
  fi
  if [ -z "$(squeue -h -j "$jid,$mid" 2>/dev/null)" ]; then
    # Read the states again: a job may have ended between the reading above
    # and the queue check.
    a=$(states "$jid"); m=$(states "$mid")
    [[ "$a" != *PENDING* && "$a" != *RUNNING* && "$m" == *COMPLETED* ]] || fail "jobs left the queue in states array [$a], merge [$m]"
    break
  fi
  [ $SECONDS -lt $deadline ] || fail "jobs still queued after ${timeout_s} s: array [$a], merge [$m]"
  sleep 0.2
done
n=$(scontrol show job "$jid" -o | grep -c 'JobState=COMPLETED')
[ "$n" = "$tasks" ] || fail "$n of $tasks array tasks completed"
for i in $(seq 0 $((tasks - 1))); do
  grep -q "^task $i of $tasks done" "$SLURM_DIR"/out/compare-"${jid}_$i".out ||
    fail "array task $i did not report its slice done"
done

# The same comparison in one process, same binary and folder.
env -u SLURM_ARRAY_TASK_ID -u SLURM_ARRAY_TASK_COUNT "$bin" compare "${opts[@]}" --out single >single.log 2>&1 ||
  { cat single.log; fail "single-process compare failed"; }

files=(compare.json compare.csv)
while IFS= read -r f; do files+=("$f"); done < <(cd single && find models -type f | sort)
[ ${#files[@]} -gt 2 ] || fail "single-process run wrote no models/ files"
extra=$(diff <(cd single && find models -type f | sort) <(cd merged && find models -type f | sort)) ||
  fail "merged models/ holds other files than the single run's: $extra"
for f in "${files[@]}"; do
  cmp -s "single/$f" "merged/$f" || fail "$f differs between the merged array job and the single process"
done
echo "PASS: slurm job array: $tasks tasks + dependent merge are byte-identical to one process (${#files[@]} files: ${files[*]})"
