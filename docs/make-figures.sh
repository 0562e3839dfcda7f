#!/bin/sh
# Regenerates the example figures committed under docs/ from a fresh run on
# the embedded demo data set (simulated: an invented array of invented
# pulsars with an injected SMBHB power law, log10 A = -14.6, gamma = 13/3).
#
# Run from the repository root:   sh docs/make-figures.sh
# It takes about a minute on one core. The run folder is temporary; only
# docs/corner-demo.png is written into the repository.
set -eu

root=$(cd "$(dirname "$0")/.." && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

cd "$root"
go build -o "$work/tautline" ./cmd/tautline

# 4000 steps x 32 walkers with a fixed seed: the same chain every time. The
# burn-in is set by hand: with this seed one walker needs about 300 steps to
# join the others, longer than the automatic five autocorrelation times.
"$work/tautline" fit --data demo:smbhb --model smbhb --steps 4000 --walkers 32 \
    --burn 1000 --seed 1 --out "$work/fit" --log-level warn

"$work/tautline" report "$work/fit" --out "$work/report" --formats png \
    --truth log10_A=-14.6 --truth gamma=13/3 --log-level warn

cp "$work/report/smbhb/corner.png" docs/corner-demo.png
echo "wrote docs/corner-demo.png"
