package main

import (
	"context"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"tautline/likelihood"
	"tautline/likelihood/simulate"
	"tautline/models/binaries"
	"tautline/models/gw"
	"tautline/priors"
	"tautline/rundir"
	"tautline/sampler"
	"tautline/stats"
)

// fitSimulated simulates a 15-bin data set from the SMBHB power law with
// log10 A = -14.6, gamma = 13/3 and returns the posterior samples of
// (log10_A, gamma).
func fitSimulated(t *testing.T, seed uint64) [][]float64 {
	t.Helper()
	h0 := gw.H0SI(67.4)
	m, err := binaries.New(binaries.Options{H0: h0})
	if err != nil {
		t.Fatal(err)
	}
	arr := simulate.Array{Pulsars: 40, Span: 15 * gw.JulianYear, Cadence: 14 * 86400, Sigma: 300e-9, Bins: 15}
	freqs := make([]float64, arr.Bins)
	for i := range freqs {
		freqs[i] = float64(i+1) / arr.Span
	}
	sp, err := m.At(freqs)
	if err != nil {
		t.Fatal(err)
	}
	ln := make([]float64, len(freqs))
	if err := sp.LnOmega([]float64{-14.6, 13.0 / 3}, ln); err != nil {
		t.Fatal(err)
	}
	ds, err := simulate.Run(ln, arr, h0, seed, simulate.GridOptions{})
	if err != nil {
		t.Fatal(err)
	}
	fs, err := likelihood.NewFreeSpectrum(ds, likelihood.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pri := make([]priors.Prior, 0)
	for _, p := range m.Params() {
		pri = append(pri, p.Prior)
	}
	post, err := likelihood.NewPosterior(m, pri, ds, fs, h0)
	if err != nil {
		t.Fatal(err)
	}
	ens, err := sampler.New(post, sampler.Config{Walkers: 16, Seed: seed, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	defer ens.Close()
	res, err := sampler.Run(context.Background(), ens, sampler.RunOptions{MaxSteps: 2000, Burn: 300, Thin: 10})
	if err != nil {
		t.Fatal(err)
	}
	flat, n := rundir.PosteriorSamples(res, 2)
	out := [][]float64{make([]float64, n), make([]float64, n)}
	for i := range n {
		out[0][i], out[1][i] = flat[2*i], flat[2*i+1]
	}
	slices.Sort(out[0])
	slices.Sort(out[1])
	return out
}

// TestRecoveryAndCoverage is the end-to-end check of simulate, likelihood
// and sampler: the injected values lie inside the 95 % intervals, and over
// 20 seeds the number of central 68 % intervals of each parameter that
// cover the truth is consistent with a Binomial(20, 0.68) at the 1 % level (two-sided,
// gonum distuv.Binomial).
func TestRecoveryAndCoverage(t *testing.T) {
	const seeds = 20
	truth := []float64{-14.6, 13.0 / 3}
	names := []string{"log10_A", "gamma"}
	covered := make([]int, 2)
	for s := uint64(1); s <= seeds; s++ {
		post := fitSimulated(t, 100+s)
		for k, name := range names {
			lo, hi := stats.Quantile(post[k], 0.025), stats.Quantile(post[k], 0.975)
			if s == 1 && !(truth[k] > lo && truth[k] < hi) {
				t.Errorf("seed %d: %s = %g outside the 95 %% interval [%g, %g]", s, name, truth[k], lo, hi)
			}
			if lo, hi := stats.Quantile(post[k], 0.16), stats.Quantile(post[k], 0.84); truth[k] > lo && truth[k] < hi {
				covered[k]++
			}
		}
	}
	b := distuv.Binomial{N: seeds, P: 0.68}
	for k, name := range names {
		pLow, pHigh := b.CDF(float64(covered[k])), 1-b.CDF(float64(covered[k])-1)
		p := math.Min(1, 2*math.Min(pLow, pHigh))
		t.Logf("68 %% intervals covering %s: %d of %d (two-sided binomial p = %.3f)", name, covered[k], seeds, p)
		if p < 0.01 {
			t.Errorf("%s: coverage %d/%d is inconsistent with 68 %% (p = %.4f < 0.01)", name, covered[k], seeds, p)
		}
	}
}
