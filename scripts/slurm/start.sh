#!/usr/bin/env bash
# Starts a one-node Slurm cluster on loopback: a private munged, slurmctld and
# slurmd, with configuration, state, logs, munge key and socket all under
# $SLURM_DIR (default /tmp/tautline-slurm). Ports come from SLURM_CTL_PORT
# and SLURM_D_PORT (default 6817 and 6818). Needs root and the Debian
# packages slurmctld, slurmd, slurm-client and munge. Client commands then
# need SLURM_CONF=$SLURM_DIR/slurm.conf; stop.sh stops the daemons.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
dir=${SLURM_DIR:-/tmp/tautline-slurm}
ctlport=${SLURM_CTL_PORT:-6817}
dport=${SLURM_D_PORT:-6818}
host=$(uname -n | cut -d. -f1) # the short name slurmd finds itself by
cpus=$(nproc)
mem=$(awk '/^MemTotal:/ {print int($2 / 1024)}' /proc/meminfo) # MiB
mkdir -p "$dir"/state "$dir/spool/$host" "$dir"/log "$dir"/out "$dir"/munge
# munged runs as the munge user and checks that the path to its key and
# socket is not writable by others.
chmod 755 "$dir"
chmod 1777 "$dir/out"
sed -e "s|@HOST@|$host|g" -e "s|@DIR@|$dir|g" -e "s|@CPUS@|$cpus|g" -e "s|@MEM@|$mem|g" \
    -e "s|@CTLPORT@|$ctlport|g" -e "s|@DPORT@|$dport|g" \
    "$here/slurm.conf.in" > "$dir/slurm.conf"
export SLURM_CONF="$dir/slurm.conf"

# A private munge key and daemon, so that nothing under /etc or /run changes.
key="$dir/munge/munge.key"
[ -s "$key" ] || mungekey --create --keyfile="$key"
chown -R munge:munge "$dir/munge"
chmod 755 "$dir/munge"; chmod 600 "$key"
runuser -u munge -- /usr/sbin/munged --key-file="$key" --socket="$dir/munge/munge.socket" \
    --pid-file="$dir/munge/munged.pid" --log-file="$dir/munge/munged.log" --seed-file="$dir/munge/munged.seed"

slurmctld
slurmd
for _ in $(seq 1 300); do
  [ "$(sinfo -h -o %T 2>/dev/null)" = idle ] && exit 0
  sleep 0.1
done
echo "start.sh: the slurm node did not become idle within 30 s; see $dir/log" >&2
exit 1
