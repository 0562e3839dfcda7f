#!/bin/sh
# Regenerates the example figures committed under docs/ from fresh runs on
# the embedded demo data sets (simulated: invented arrays of invented
# pulsars with an injected SMBHB power law, log10 A = -14.6, gamma = 13/3,
# and an injected string network, Gmu = 2e-11, alpha = 0.1, P = 1).
#
# Run from the repository root:   sh docs/make-figures.sh
# It takes about a minute on one core. The run folder is temporary; only
# docs/corner-demo.png and docs/spectrum-demo.png are written into the
# repository.
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

# The main job: the three models on the simulated string demo, and the
# spectrum figure (each bin's posterior with every model's predictive band).
"$work/tautline" compare --out "$work/compare" --log-level warn > /dev/null
"$work/tautline" report "$work/compare" --out "$work/creport" --formats png --log-level warn > /dev/null
cp "$work/creport/spectrum.png" docs/spectrum-demo.png
echo "wrote docs/spectrum-demo.png"
