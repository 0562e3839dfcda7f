#!/usr/bin/env python3
"""A straightforward vectorized NumPy stretch-move fit, the reference for
tautline's end-to-end speed (scripts/bench, `go run ./scripts/bench`).

It samples the same posterior as `tautline fit --walkers 32` on a demo data
set, from a folder the Go bench program exports (the model's inputs and the
free-spectrum tables at their 2048 nodes, the same tables tautline builds):

- smbhb: log10 rho_i = a_i + log10_A + c_i gamma (the power law, exact);
- strings: log10 rho_i bilinearly interpolated on a 321 x 201 grid in
  (log10 Gmu, log10 alpha) at P = 1, plus slope_i log10 P (P enters as a
  power law; the exporter checks it).

Per step it proposes for each half of the 32 walkers at once (affine
stretch move, Goodman & Weare 2010, a = 2), evaluates all proposals of the
half in one vectorized call (np.interp per bin on the tables, the above-range
penalty as in tautline), and accepts with min(1, z^(d-1) p(y)/p(x)). It keeps
the chain in memory (no chain file is written), discards the first tenth and
prints the median and 68 % interval of every parameter and the smallest
effective sample size, N W / tau with tau the walker-averaged integrated
autocorrelation time by FFT and Sokal's window (c = 5), as tautline
estimates it. Timing runs from process start to that summary.
"""
import argparse
import json
import os
import sys

try:
    import numpy as np
except ImportError:
    print("numpy_fit.py: NumPy is not installed (apt-get install -y python3-numpy); skipping")
    sys.exit(0)


def load(folder):
    with open(os.path.join(folder, "header.json")) as f:
        h = json.load(f)
    h["tables"] = np.load(os.path.join(folder, "tables.npy"))
    if h["model"] == "strings":
        h["grid"] = np.load(os.path.join(folder, "grid.npy")).reshape(h["ng"], h["na"], -1)
    return h


def make_loglike(h):
    tab = h["tables"]
    nb, m = tab.shape
    tlo, thi, pen = h["table_lo"], h["table_hi"], h["penalty"]
    nodes = np.linspace(tlo, thi, m)
    top = tab[:, -1]

    def free_spectrum(rho):  # rho: walkers x bins
        out = np.zeros(rho.shape[0])
        for i in range(nb):
            out += np.interp(rho[:, i], nodes, tab[i])
        above = rho > thi
        if above.any():
            d = np.minimum(rho - thi, 1e6)
            corr = np.where(above, -pen * (1 + d) + top - np.array([np.interp(thi, nodes, tab[i]) for i in range(nb)]), 0.0)
            out += corr.sum(axis=1)
        return out

    if h["model"] == "smbhb":
        a, c = np.array(h["a"]), np.array(h["c"])

        def rho_of(x):
            return a[None, :] + x[:, 0:1] + c[None, :] * x[:, 1:2]
    else:
        g = h["grid"]
        lo, hi = np.array(h["lo"]), np.array(h["hi"])
        ng, na = h["ng"], h["na"]
        slope = np.array(h["slope_log10P"])

        def rho_of(x):
            u = (x[:, 0] - lo[0]) / (hi[0] - lo[0]) * (ng - 1)
            v = (x[:, 1] - lo[1]) / (hi[1] - lo[1]) * (na - 1)
            i = np.clip(u.astype(int), 0, ng - 2)
            j = np.clip(v.astype(int), 0, na - 2)
            fu, fv = (u - i)[:, None], (v - j)[:, None]
            r = ((1 - fu) * (1 - fv) * g[i, j] + fu * (1 - fv) * g[i + 1, j]
                 + (1 - fu) * fv * g[i, j + 1] + fu * fv * g[i + 1, j + 1])
            return r + slope[None, :] * x[:, 2:3]

    lo, hi = np.array(h["lo"]), np.array(h["hi"])

    def logpost(x):
        inside = np.all((x >= lo) & (x <= hi), axis=1)
        lp = np.full(x.shape[0], -np.inf)
        if inside.any():
            xi = x[inside]
            lp[inside] = free_spectrum(rho_of(xi)) - np.log(hi - lo).sum()
        return lp

    return logpost, lo, hi


def stretch(logpost, lo, hi, walkers, steps, seed, a=2.0):
    rng = np.random.default_rng(seed)
    d = len(lo)
    x = lo + (hi - lo) * rng.random((walkers, d))
    lp = logpost(x)
    chain = np.empty((steps, walkers, d))
    half = walkers // 2
    for s in range(steps):
        for first in (True, False):
            act = slice(0, half) if first else slice(half, walkers)
            oth = slice(half, walkers) if first else slice(0, half)
            xa, xo = x[act], x[oth]
            z = ((a - 1) * rng.random(half) + 1) ** 2 / a
            partner = xo[rng.integers(0, half, half)]
            y = partner + z[:, None] * (xa - partner)
            lpy = logpost(y)
            lnA = (d - 1) * np.log(z) + lpy - lp[act]
            acc = np.log(rng.random(half)) < lnA
            xa[acc] = y[acc]
            lp[act] = np.where(acc, lpy, lp[act])
        chain[s] = x
    return chain


def autocorr_time(x):
    """Walker-averaged integrated autocorrelation time, Sokal window c = 5;
    x is steps x walkers."""
    n = x.shape[0]
    f = np.fft.rfft(x - x.mean(axis=0), n=2 * n, axis=0)
    ac = np.fft.irfft(f * np.conj(f), axis=0)[:n]
    ok = ac[0] > 0
    rho = (ac[:, ok] / ac[0, ok]).mean(axis=1)
    taus = 2 * np.cumsum(rho) - 1
    m = np.arange(n)
    w = np.nonzero(m >= 5 * taus)[0]
    return taus[w[0]] if len(w) else taus[-1]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--problem", required=True)
    ap.add_argument("--steps", type=int, default=20000)
    ap.add_argument("--walkers", type=int, default=32)
    ap.add_argument("--seed", type=int, default=1)
    o = ap.parse_args()
    logpost, lo, hi = make_loglike(load(o.problem))
    chain = stretch(logpost, lo, hi, o.walkers, o.steps, o.seed)
    post = chain[o.steps // 10:]
    n = post.shape[0]
    ess = []
    for k in range(len(lo)):
        tau = autocorr_time(post[:, :, k])
        ess.append(n * o.walkers / tau)
        q = np.percentile(post[:, :, k], [16, 50, 84])
        print(f"param {k}: median {q[1]:.4f}  68% [{q[0]:.4f}, {q[2]:.4f}]  tau {tau:.1f}  ESS {ess[-1]:.0f}")
    print(f"min_ess {min(ess):.1f}")


if __name__ == "__main__":
    main()
