// Package simulate makes synthetic free-spectrum data sets from a model
// spectrum and an invented timing array, with exact per-bin posteriors.
//
// # Physics
//
// An array of Pulsars pulsars observed for a span T has frequency bins
// f_i = i/T. In each bin and pulsar the residuals' sine and cosine Fourier
// amplitudes are Gaussian with zero mean and variance
//
//	v_i = rho_i^2 + sigma_n^2,  rho_i^2 = H0^2 Omega_GW(f_i) / (8 pi^4 f_i^5 T),
//
// where the white measurement noise, of one-sided power spectral density
// S_n = 2 Sigma^2 Cadence (rms Sigma per observation, one observation every
// Cadence seconds), contributes sigma_n^2 = S_n / T in the same
// normalisation as rho^2 = S/T. We give every pulsar the same noise and
// ignore the inter-pulsar correlations of the background (the
// Hellings-Downs pattern), so the 2*Pulsars amplitudes of a bin are
// independent N(0, v_i) variables. Their sum of squares Q_i is then v_i times
// a chi-squared variable with 2*Pulsars degrees of freedom (a sum of k
// squared independent standard normals is chi-squared with k degrees of
// freedom), and Q_i is a sufficient statistic for v_i: the likelihood is
//
//	L(rho_i) = v_i^(-Pulsars) exp(-Q_i / (2 v_i))   (up to a constant).
//
// Run draws each Q_i from a seeded PCG stream (as the sum of 2*Pulsars
// squared standard normals), then evaluates the exact posterior of
// x = log10 rho_i on a uniform grid under a uniform prior on x in
// [Min, Max], normalises it to unit trapezoid-rule mass and stores it as the
// bin's grid representation. Optionally it stores posterior samples drawn by
// exact inversion of that piecewise-linear density instead. At low rho the
// posterior flattens (rho^2 << sigma_n^2): the noise floor that the
// likelihood package clamps to.
package simulate

import (
	"fmt"
	"math"
	"math/rand/v2"

	"tautline/likelihood"
	"tautline/models/gw"
)

// An Array is an invented timing array.
type Array struct {
	// Pulsars is the number of pulsars.
	Pulsars int
	// Span is the observing span T in s.
	Span float64
	// Cadence is the time between observations in s.
	Cadence float64
	// Sigma is the white-noise rms per observation in s.
	Sigma float64
	// Bins is the number of frequency bins, f_i = i/Span, i = 1..Bins.
	Bins int
}

// NoiseVariance returns sigma_n^2 = 2 Sigma^2 Cadence / Span (s^2), the
// white-noise variance of one Fourier amplitude.
func (a Array) NoiseVariance() float64 { return 2 * a.Sigma * a.Sigma * a.Cadence / a.Span }

// GridOptions set the posterior grid and representation.
type GridOptions struct {
	// Min and Max bound the uniform prior on log10 rho; defaults -10 and -4.
	Min, Max float64
	// Points is the number of grid points; default 400.
	Points int
	// Samples, when > 0, stores that many posterior samples per bin
	// (representation samples) instead of the grid.
	Samples int
}

// Run simulates a free-spectrum data set for the spectrum lnOmega
// (ln Omega_GW at f_i = i/arr.Span, i = 1..arr.Bins) observed by arr, with
// H0 h0 in s^-1. The result depends only on its arguments.
func Run(lnOmega []float64, arr Array, h0 float64, seed uint64, grid GridOptions) (*likelihood.Dataset, error) {
	if err := check(lnOmega, arr, h0, &grid); err != nil {
		return nil, err
	}
	// Two streams from the seed: one for the statistics, one for posterior
	// samples, so that a data set's statistics do not depend on whether
	// samples are drawn.
	r := rand.New(rand.NewPCG(seed, 0x7a75746c696e65))
	rs := rand.New(rand.NewPCG(seed, 0x73616d706c6573))
	sn2 := arr.NoiseVariance()
	ds := &likelihood.Dataset{
		Name: fmt.Sprintf("simulated-%d", seed),
		Provenance: fmt.Sprintf("simulated data: invented array of %d pulsars, span %g s, cadence %g s, white noise %g s rms per observation, %d bins, H0 %g s^-1, seed %d; inter-pulsar correlations ignored",
			arr.Pulsars, arr.Span, arr.Cadence, arr.Sigma, arr.Bins, h0, seed),
		Span:     arr.Span,
		Freqs:    make([]float64, arr.Bins),
		PriorMin: grid.Min,
		PriorMax: grid.Max,
		Bins:     make([]likelihood.Bin, arr.Bins),
	}
	for i := range ds.Freqs {
		f := float64(i+1) / arr.Span
		ds.Freqs[i] = f
		rho2 := gw.Rho2FromOmega(f, math.Exp(lnOmega[i]), h0, arr.Span)
		q := (rho2 + sn2) * chi2(r, 2*arr.Pulsars)
		g, d := GridPosterior(q, arr.Pulsars, sn2, grid.Min, grid.Max, grid.Points)
		b := likelihood.Bin{Kind: likelihood.Grid, Grid: g, Density: d}
		if grid.Samples > 0 {
			ps := make([]float64, grid.Samples)
			for k := range ps {
				ps[k] = rs.Float64()
			}
			s := b.Quantiles(grid.Min, grid.Max, ps, nil)
			b = likelihood.Bin{Kind: likelihood.Samples, Samples: s}
		}
		ds.Bins[i] = b
	}
	if err := ds.Validate(); err != nil {
		return nil, fmt.Errorf("simulate: %w", err)
	}
	return ds, nil
}

func check(lnOmega []float64, arr Array, h0 float64, g *GridOptions) error {
	pos := func(x float64) bool { return x > 0 && !math.IsInf(x, 0) }
	switch {
	case arr.Pulsars < 1:
		return fmt.Errorf("simulate: array: pulsars must be >= 1, got %d", arr.Pulsars)
	case !pos(arr.Span):
		return fmt.Errorf("simulate: array: span must be > 0 s, got %g", arr.Span)
	case !pos(arr.Cadence):
		return fmt.Errorf("simulate: array: cadence must be > 0 s, got %g", arr.Cadence)
	case !(arr.Sigma >= 0) || math.IsInf(arr.Sigma, 0):
		return fmt.Errorf("simulate: array: sigma must be >= 0 s, got %g", arr.Sigma)
	case arr.Bins < 1:
		return fmt.Errorf("simulate: array: bins must be >= 1, got %d", arr.Bins)
	case len(lnOmega) != arr.Bins:
		return fmt.Errorf("simulate: %d ln Omega values for %d bins", len(lnOmega), arr.Bins)
	case !pos(h0):
		return fmt.Errorf("simulate: H0 must be > 0 s^-1, got %g", h0)
	}
	for i, v := range lnOmega {
		if math.IsNaN(v) || math.IsInf(v, 1) {
			return fmt.Errorf("simulate: ln Omega of bin %d: must be finite or -Inf, got %g", i+1, v)
		}
	}
	if g.Min == 0 && g.Max == 0 {
		g.Min, g.Max = -10, -4
	}
	if g.Points == 0 {
		g.Points = 400
	}
	if math.IsNaN(g.Min) || math.IsNaN(g.Max) || math.IsInf(g.Min, 0) || math.IsInf(g.Max, 0) || g.Min >= g.Max {
		return fmt.Errorf("simulate: grid: need finite min < max, got [%g, %g]", g.Min, g.Max)
	}
	if g.Points < 2 {
		return fmt.Errorf("simulate: grid: need at least 2 points, got %d", g.Points)
	}
	if g.Samples < 0 || (g.Samples > 0 && g.Samples < likelihood.MinSamples) {
		return fmt.Errorf("simulate: grid: samples must be 0 or at least %d, got %d", likelihood.MinSamples, g.Samples)
	}
	return nil
}

// chi2 draws a chi-squared variable with k degrees of freedom as the sum of
// k squared standard normals, the definition.
func chi2(r *rand.Rand, k int) float64 {
	s := 0.0
	for range k {
		z := r.NormFloat64()
		s += z * z
	}
	return s
}

// GridPosterior returns a uniform grid of n points on [lo, hi] in x = log10 rho
// and the posterior density of x given the statistic q (s^2) from pulsars
// pulsars with noise variance sn2 (s^2), under a uniform prior on x,
// normalised to unit trapezoid-rule mass:
//
//	p(x) ∝ v^(-pulsars) exp(-q / (2 v)),  v = 10^(2x) + sn2.
func GridPosterior(q float64, pulsars int, sn2, lo, hi float64, n int) (grid, dens []float64) {
	grid = make([]float64, n)
	dens = make([]float64, n)
	top := math.Inf(-1)
	for k := range grid {
		x := lo + (hi-lo)*float64(k)/float64(n-1)
		if k == n-1 {
			x = hi
		}
		grid[k] = x
		v := math.Pow(10, 2*x) + sn2
		dens[k] = -float64(pulsars)*math.Log(v) - q/(2*v)
		top = math.Max(top, dens[k])
	}
	mass := 0.0
	for k := range dens {
		dens[k] = math.Exp(dens[k] - top)
		if k > 0 {
			mass += 0.5 * (dens[k] + dens[k-1]) * (grid[k] - grid[k-1])
		}
	}
	for k := range dens {
		dens[k] /= mass
	}
	return grid, dens
}
