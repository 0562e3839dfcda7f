#!/usr/bin/env bash
# Stops the daemons that start.sh started under $SLURM_DIR (default
# /tmp/tautline-slurm), by their pid files: slurmd first, then slurmctld,
# then munged. Waits up to 10 s for each to exit.
dir=${SLURM_DIR:-/tmp/tautline-slurm}
for f in "$dir/slurmd.pid" "$dir/slurmctld.pid" "$dir/munge/munged.pid"; do
  [ -s "$f" ] || continue
  p=$(cat "$f")
  kill "$p" 2>/dev/null || continue
  for _ in $(seq 1 100); do kill -0 "$p" 2>/dev/null || break; sleep 0.1; done
  if kill -0 "$p" 2>/dev/null; then
    echo "stop.sh: pid $p ($f) did not exit; sending SIGKILL" >&2
    kill -9 "$p" 2>/dev/null || true
  fi
done
