package simulate

import (
	"math"
	"math/rand/v2"
	"reflect"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate"
	"gonum.org/v1/gonum/stat/distuv"
	"tautline/likelihood"

	"tautline/models/gw"
)

const (
	h0  = 2.1843e-18 // 67.4 km/s/Mpc in s^-1 (docs/physics.md section 1)
	fYr = 1 / (365.25 * 86400)
)

// ksCritical001 is the Kolmogorov-Smirnov critical value at the 0.1 % level
// for large n, 1.949/sqrt(n) (standard tables; from memory).
func ksCritical001(n int) float64 { return 1.949 / math.Sqrt(float64(n)) }

// ks returns the KS statistic of the sample s against cdf.
func ks(s []float64, cdf func(float64) float64) float64 {
	s = append([]float64(nil), s...)
	sort.Float64s(s)
	n := float64(len(s))
	d := 0.0
	for i, x := range s {
		c := cdf(x)
		d = math.Max(d, math.Max(math.Abs(c-float64(i)/n), math.Abs(float64(i+1)/n-c)))
	}
	return d
}

func TestChi2Statistic(t *testing.T) {
	for _, k := range []int{2, 10, 60} {
		r := rand.New(rand.NewPCG(uint64(k), 9))
		const n = 20000
		s := make([]float64, n)
		mean := 0.0
		for i := range s {
			s[i] = chi2(r, k)
			mean += s[i] / n
		}
		ref := distuv.ChiSquared{K: float64(k)}
		if d := ks(s, ref.CDF); d > ksCritical001(n) {
			t.Errorf("k=%d: KS distance to gonum's chi-squared %.4f exceeds %.4f", k, d, ksCritical001(n))
		}
		// The sample mean has sd sqrt(2k/n); allow 5 sd.
		if tol := 5 * math.Sqrt(ref.Variance()/n); math.Abs(mean-ref.Mean()) > tol {
			t.Errorf("k=%d: mean %.4f, want %.4f +- %.4f", k, mean, ref.Mean(), tol)
		}
	}
}

func TestGridPosterior(t *testing.T) {
	const pulsars = 7
	const sn2 = 1e-16
	const q = 3e-13
	g, d := GridPosterior(q, pulsars, sn2, -10, -4, 3001)
	// Unit mass under gonum's trapezoid rule (the normalisation used).
	if m := integrate.Trapezoidal(g, d); math.Abs(m-1) > 1e-12 {
		t.Errorf("mass %.15f, want 1", m)
	}
	// Shape: with v = rho^2 + sn2 and Q/v ~ chi2(2P), the likelihood of x is
	// the density of Q, chi2pdf(Q/v)/v (gonum distuv.ChiSquared); the flat
	// prior leaves it unchanged, so ratios between grid points must agree.
	ref := distuv.ChiSquared{K: 2 * pulsars}
	lnL := func(x float64) float64 {
		v := math.Pow(10, 2*x) + sn2
		return ref.LogProb(q/v) - math.Log(v)
	}
	k0 := 1500
	for _, k := range []int{0, 400, 1000, 1400, 1450, 1550, 1600, 2000, 3000} {
		got := math.Log(d[k] / d[k0])
		want := lnL(g[k]) - lnL(g[k0])
		if want < -700 {
			// Beyond float64's range the density underflows to zero.
			if d[k] != 0 && math.Log(d[k]) > -700 {
				t.Errorf("p(%.3f) = %g, want about exp(%.0f)", g[k], d[k], want)
			}
			continue
		}
		// Both sides are rounding-limited: 1e-9 in ln for |ln| up to ~1e3.
		if math.Abs(got-want) > 1e-9*math.Max(1, math.Abs(want)) {
			t.Errorf("ln p(%.3f)/p(%.3f) = %.12g, want %.12g", g[k], g[k0], got, want)
		}
	}
}

func powerLaw(f []float64, log10A, gamma float64) []float64 {
	out := make([]float64, len(f))
	for i, fi := range f {
		hc := math.Pow(10, log10A) * math.Pow(fi/fYr, (3-gamma)/2)
		out[i] = math.Log(2 * math.Pi * math.Pi / (3 * h0 * h0) * fi * fi * hc * hc)
	}
	return out
}

func harmonics(arr Array) []float64 {
	f := make([]float64, arr.Bins)
	for i := range f {
		f[i] = float64(i+1) / arr.Span
	}
	return f
}

func TestCoverage(t *testing.T) {
	// Without white noise v = rho^2 and the flat prior on log10 rho is the
	// 1/v (Jeffreys) prior of a scale parameter, for which Q/v is pivotal
	// and central credible intervals are exact confidence intervals (Lindley
	// 1958 for scale families; from memory). So the injected log10 rho must
	// fall inside the central 68 % interval in 68.27 % of simulations.
	arr := Array{Pulsars: 20, Span: 15 * gw.JulianYear, Cadence: 14 * 86400, Sigma: 0, Bins: 10}
	lnO := powerLaw(harmonics(arr), -14.6, 13.0/3)
	truth := make([]float64, arr.Bins)
	for i, f := range harmonics(arr) {
		truth[i] = 0.5 * math.Log10(h0*h0*math.Exp(lnO[i])/(8*math.Pow(math.Pi, 4)*math.Pow(f, 5)*arr.Span))
	}
	seeds := 300
	if testing.Short() {
		seeds = 60
	}
	in, total, bias := 0, 0, 0.0
	for seed := range seeds {
		ds, err := Run(lnO, arr, h0, uint64(seed), GridOptions{Min: -12, Max: -3, Points: 1500})
		if err != nil {
			t.Fatal(err)
		}
		for i, s := range ds.Summary() {
			if truth[i] >= s.Lo68 && truth[i] <= s.Hi68 {
				in++
			}
			bias += s.Median - truth[i]
			total++
		}
	}
	frac := float64(in) / float64(total)
	t.Logf("coverage %.4f over %d intervals; mean median-truth %.4f dex", frac, total, bias/float64(total))
	// Binomial sd sqrt(p(1-p)/n); 4 sd.
	if tol := 4 * math.Sqrt(0.6827*0.3173/float64(total)); math.Abs(frac-0.6827) > tol {
		t.Errorf("coverage of the central 68 %% interval %.4f over %d intervals, want 0.6827 +- %.4f", frac, total, tol)
	}
	// Median bias: per bin the posterior sd of log10 rho is about
	// sqrt(1/P)/(2 ln 10) = 0.049 dex; the mean over n intervals should be
	// within 5 sd/sqrt(n) of zero, plus 0.004 dex for the small offset
	// between the posterior median and the truth that a chi-squared's
	// skewness leaves (of order 1/(3k) in ln v for k = 2P, about 0.002 dex).
	if tol := 5*0.049/math.Sqrt(float64(total)) + 0.004; math.Abs(bias/float64(total)) > tol {
		t.Errorf("mean median - truth = %.4f dex, want |.| < %.4f", bias/float64(total), tol)
	}
}

func TestRunSamplesFollowGrid(t *testing.T) {
	arr := Array{Pulsars: 10, Span: 4e8, Cadence: 1e6, Sigma: 3e-7, Bins: 3}
	lnO := powerLaw(harmonics(arr), -14.5, 13.0/3)
	const seed = 11
	dg, err := Run(lnO, arr, h0, seed, GridOptions{})
	if err != nil {
		t.Fatal(err)
	}
	ds, err := Run(lnO, arr, h0, seed, GridOptions{Samples: 5000})
	if err != nil {
		t.Fatal(err)
	}
	for i := range ds.Bins {
		if ds.Bins[i].Kind != likelihood.Samples || dg.Bins[i].Kind != likelihood.Grid {
			t.Fatalf("kinds %v / %v", ds.Bins[i].Kind, dg.Bins[i].Kind)
		}
		// Same seed, same statistic: the samples follow the grid posterior.
		g, d := dg.Bins[i].Grid, dg.Bins[i].Density
		cdf := func(x float64) float64 {
			k := sort.SearchFloat64s(g, x)
			if k == 0 {
				return 0
			}
			if k >= len(g) {
				return 1
			}

			xs := append(append([]float64(nil), g[:k]...), x)
			ys := append(append([]float64(nil), d[:k]...), d[k-1]+(d[k]-d[k-1])*(x-g[k-1])/(g[k]-g[k-1]))
			return integrate.Trapezoidal(xs, ys)
		}
		if dd := ks(ds.Bins[i].Samples, cdf); dd > ksCritical001(5000) {
			t.Errorf("bin %d: KS distance of samples to the grid posterior %.4f > %.4f", i+1, dd, ksCritical001(5000))
		}
	}
}

func TestRunDeterministic(t *testing.T) {
	arr := Array{Pulsars: 5, Span: 3e8, Cadence: 2e6, Sigma: 1e-7, Bins: 4}
	lnO := powerLaw(harmonics(arr), -14.7, 13.0/3)
	a, err := Run(lnO, arr, h0, 42, GridOptions{Samples: 100})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Run(lnO, arr, h0, 42, GridOptions{Samples: 100})
	c, _ := Run(lnO, arr, h0, 43, GridOptions{Samples: 100})
	if !reflect.DeepEqual(a, b) {
		t.Error("same seed gave different data sets")
	}
	if reflect.DeepEqual(a.Bins, c.Bins) {
		t.Error("different seeds gave identical data sets")
	}
	for _, w := range []string{"simulated", "invented array of 5 pulsars", "span 3e+08 s", "cadence 2e+06 s", "white noise 1e-07 s rms", "4 bins", "seed 42"} {
		if !strings.Contains(a.Provenance, w) {
			t.Errorf("provenance %q lacks %q", a.Provenance, w)
		}
	}
}

func TestRunErrors(t *testing.T) {
	ok := Array{Pulsars: 5, Span: 3e8, Cadence: 2e6, Sigma: 1e-7, Bins: 2}
	lnO := []float64{-20, -21}
	for _, tc := range []struct {
		arr  Array
		lnO  []float64
		h0   float64
		g    GridOptions
		want string
	}{
		{Array{Pulsars: 0, Span: 1, Cadence: 1, Bins: 2}, lnO, h0, GridOptions{}, "simulate: array: pulsars must be >= 1, got 0"},
		{Array{Pulsars: 1, Span: -1, Cadence: 1, Bins: 2}, lnO, h0, GridOptions{}, "simulate: array: span must be > 0 s, got -1"},
		{ok, lnO[:1], h0, GridOptions{}, "simulate: 1 ln Omega values for 2 bins"},
		{ok, []float64{math.NaN(), 0}, h0, GridOptions{}, "simulate: ln Omega of bin 1: must be finite or -Inf, got NaN"},
		{ok, lnO, 0, GridOptions{}, "simulate: H0 must be > 0 s^-1, got 0"},
		{ok, lnO, h0, GridOptions{Min: -4, Max: -10}, "simulate: grid: need finite min < max, got [-4, -10]"},
		{ok, lnO, h0, GridOptions{Samples: 3}, "simulate: grid: samples must be 0 or at least 50, got 3"},
	} {
		if _, err := Run(tc.lnO, tc.arr, tc.h0, 1, tc.g); err == nil || err.Error() != tc.want {
			t.Errorf("error %v, want %s", err, tc.want)
		}
	}
}

// TestWhiteNoiseNormalisation checks the white-noise level of Run against
// its closed form, computed here from the array rather than taken from
// Array.NoiseVariance: a white noise of rms sigma per observation, one
// observation every cadence, has one-sided PSD S_n = 2 sigma^2 cadence
// (docs/physics.md section 19), so one Fourier amplitude has variance
// sigma_n^2 = S_n / T = 2 sigma^2 cadence / T. Both places that use it are
// checked: the posterior written per bin must have exactly the shape
// ln p(x) = C - P ln v - Q/(2v) with v = 10^(2x) + sigma_n^2 (the closed
// form's sigma_n^2), and the statistic Q recovered from that shape must be
// (rho_true^2 + sigma_n^2) times a chi-squared variable with 2P degrees of
// freedom (gonum distuv.ChiSquared).
func TestWhiteNoiseNormalisation(t *testing.T) {
	arr := Array{Pulsars: 5, Span: 10 * gw.JulianYear, Cadence: 7 * 86400, Sigma: 200e-9, Bins: 12}
	sn2 := 2 * arr.Sigma * arr.Sigma * arr.Cadence / arr.Span
	f := harmonics(arr)
	noSignal := make([]float64, arr.Bins)
	for i := range noSignal {
		noSignal[i] = math.Inf(-1)
	}
	// A power law whose lowest bin is well above the noise (rho^2/sigma_n^2
	// about 3000) and whose highest is below it (about 0.06), so that the
	// sum rho^2 + sigma_n^2 is tested on both sides.
	signal := powerLaw(f, -14.3, 13.0/3)
	for _, tc := range []struct {
		name string
		lnO  []float64
	}{
		{"noise only", noSignal},
		{"signal plus noise", signal},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rho2 := make([]float64, arr.Bins)
			for i := range rho2 {
				rho2[i] = h0 * h0 * math.Exp(tc.lnO[i]) / (8 * math.Pow(math.Pi, 4) * math.Pow(f[i], 5) * arr.Span)
			}
			if tc.lnO[0] > math.Inf(-1) && !(rho2[0] > 1000*sn2 && rho2[arr.Bins-1] < 0.1*sn2) {
				t.Fatalf("signal does not straddle the noise: rho^2/sigma_n^2 = %g .. %g", rho2[0]/sn2, rho2[arr.Bins-1]/sn2)
			}
			seeds := 150
			if testing.Short() {
				seeds = 40
			}
			var scaled []float64 // Q_i / (rho_i^2 + sigma_n^2)
			worst := 0.0
			for seed := range seeds {
				ds, err := Run(tc.lnO, arr, h0, uint64(seed), GridOptions{})
				if err != nil {
					t.Fatal(err)
				}
				for i, b := range ds.Bins {
					q, res := fitStatistic(b.Grid, b.Density, arr.Pulsars, sn2)
					worst = math.Max(worst, res)
					scaled = append(scaled, q/(rho2[i]+sn2))
				}
			}
			// The grid densities are exp of the same expression evaluated in
			// float64 and divided by one normalisation, so with the right
			// sigma_n^2 the fit is exact to rounding of terms up to ~700 in
			// size (1e-12 relative); 1e-8 leaves room and is still 1e8
			// times smaller than the misfit a noise level off by even 1 %
			// leaves (about Q/(2v) x 0.01, of order 0.05).
			if worst > 1e-8 {
				// The recovered Q means nothing then (it can be negative).
				t.Fatalf("posterior shape does not follow sigma_n^2 = 2 sigma^2 cadence / T = %g s^2: worst residual %.3g in ln p", sn2, worst)
			}
			ref := distuv.ChiSquared{K: float64(2 * arr.Pulsars)}
			if d := ks(scaled, ref.CDF); d > ksCritical001(len(scaled)) {
				t.Errorf("Q/(rho^2 + sigma_n^2) over %d bins: KS distance %.4f to chi-squared(%d) exceeds %.4f",
					len(scaled), d, 2*arr.Pulsars, ksCritical001(len(scaled)))
			}
			mean := 0.0
			for _, s := range scaled {
				mean += s / float64(len(scaled))
			}
			// The mean of n chi-squared(k) values has sd sqrt(2k/n); 5 sd.
			if tol := 5 * math.Sqrt(ref.Variance()/float64(len(scaled))); math.Abs(mean-ref.Mean()) > tol {
				t.Errorf("mean Q/(rho^2 + sigma_n^2) = %.4f, want %g +- %.4f", mean, ref.Mean(), tol)
			}
		})
	}
}

// fitStatistic fits ln d(x) = C - P ln v(x) - Q/(2 v(x)), v = 10^(2x) + sn2,
// to a grid posterior by linear least squares in (C, Q) over the points
// whose density is representable, and returns Q and the largest absolute
// residual in ln d.
func fitStatistic(g, d []float64, pulsars int, sn2 float64) (q, worst float64) {
	// Basis 1 and u = sn2/v (in (0, 1], well scaled); y = ln d + P ln v.
	var n, su, suu, sy, suy float64
	type pt struct{ u, y float64 }
	var pts []pt
	for k, x := range g {
		if !(d[k] > 1e-250) {
			continue
		}
		v := math.Pow(10, 2*x) + sn2
		p := pt{u: sn2 / v, y: math.Log(d[k]) + float64(pulsars)*math.Log(v)}
		pts = append(pts, p)
		n++
		su += p.u
		suu += p.u * p.u
		sy += p.y
		suy += p.u * p.y
	}
	det := n*suu - su*su
	b := (n*suy - su*sy) / det // slope in u: -Q/(2 sn2)
	c := (sy - b*su) / n
	for _, p := range pts {
		worst = math.Max(worst, math.Abs(c+b*p.u-p.y))
	}
	return -2 * sn2 * b, worst
}
