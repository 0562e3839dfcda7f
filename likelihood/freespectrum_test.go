package likelihood

import (
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"gonum.org/v1/gonum/integrate"
	"gonum.org/v1/gonum/stat/distuv"
)

// normalSamples draws n values of N(mu, sd) restricted to [lo, hi] by
// rejection, from a fixed PCG stream.
func normalSamples(n int, mu, sd, lo, hi float64, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 1))
	s := make([]float64, 0, n)
	for len(s) < n {
		x := mu + sd*r.NormFloat64()
		if x >= lo && x <= hi {
			s = append(s, x)
		}
	}
	return s
}

func oneBin(b Bin, lo, hi float64) *Dataset {
	return &Dataset{Name: "t", Span: 1e8, Freqs: []float64{1e-8}, PriorMin: lo, PriorMax: hi, Bins: []Bin{b}}
}

// bruteKDE is the reflected kernel density estimate summed directly over
// every sample and both mirror images (the definition, e.g. Silverman 1986
// section 2.10 on the reflection method; from memory).
func bruteKDE(x float64, s []float64, h, lo, hi float64) float64 {
	sum := 0.0
	for _, c := range s {
		for _, m := range [3]float64{c, 2*lo - c, 2*hi - c} {
			u := (x - m) / h
			sum += math.Exp(-0.5*u*u) / math.Sqrt(2*math.Pi)
		}
	}
	return sum / (float64(len(s)) * h)
}

func TestKDEAgainstBruteForce(t *testing.T) {
	const lo, hi = -9.0, -5.0
	for _, tc := range []struct {
		name   string
		n      int
		mu, sd float64
		size   int
		method string
		every  int // compare at every k-th node to bound the brute-force cost
	}{
		// Piled against the lower edge: reflection carries much mass.
		{"exact-lower-edge", 500, -8.8, 0.3, 2048, "kde-exact", 1},
		{"exact-upper-edge", 300, -5.2, 0.2, 1024, "kde-exact", 1},
		// Enough samples that the exact sum exceeds its budget.
		{"binned", 100000, -8, 1, 512, "kde-binned", 8},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := normalSamples(tc.n, tc.mu, tc.sd, lo, hi, 3)
			f, err := NewFreeSpectrum(oneBin(Bin{Kind: Samples, Samples: s}, lo, hi), Options{TableSize: tc.size})
			if err != nil {
				t.Fatal(err)
			}
			if m := f.Methods()[0]; m != tc.method {
				t.Fatalf("method %s, want %s", m, tc.method)
			}
			h := f.Bandwidths()[0]
			step := (hi - lo) / float64(tc.size-1)
			peak := 0.0
			var worst float64
			node := func(k int) float64 {
				if k == tc.size-1 {
					return hi // avoid rounding a hair above the range
				}
				return lo + float64(k)*step
			}
			var gots, wants []float64
			gotPeak := 0.0
			for k := 0; k < tc.size; k += tc.every {
				x := node(k)
				wants = append(wants, bruteKDE(x, s, h, lo, hi))
				gots = append(gots, math.Exp(f.LnDensity(0, x)))
				peak = math.Max(peak, wants[len(wants)-1])
				gotPeak = math.Max(gotPeak, gots[len(gots)-1])
			}
			for i, got := range gots {
				// The table is floored at DensityFloor times its peak
				// (documented), so compare with the floored estimate.
				want := math.Max(wants[i], DensityFloor*gotPeak)
				worst = math.Max(worst, math.Abs(got-want))
			}
			// Exact sum: kernels cut at 10 h drop < 2e-22 of the peak per
			// sample, so only rounding remains (1e-12 relative to the peak).
			tol := 1e-12 * peak
			if tc.method == "kde-binned" {
				// Linear binning replaces each kernel by its linear
				// interpolant between nodes: error <= step^2/8 max|K_h''|
				// = step^2 phi(0) / (8 h^3) per image, three images.
				tol = 3 * step * step * 0.3989422804014327 / (8 * h * h * h)
			}
			if worst > tol {
				t.Errorf("max |table - brute force| = %.3g, tolerance %.3g (peak %.3g, h %.4g)", worst, tol, peak, h)
			}
			// Reflection makes the estimate integrate to 1 on [lo, hi]
			// (gonum's trapezoid rule; its error is step^2/12 int|p''|,
			// below 1e-4 for these h).
			xs := make([]float64, tc.size)
			ps := make([]float64, tc.size)
			for k := range xs {
				xs[k] = node(k)
				ps[k] = math.Exp(f.LnDensity(0, xs[k]))
			}
			if m := integrate.Trapezoidal(xs, ps); math.Abs(m-1) > 1e-4 {
				t.Errorf("mass over the prior range = %.8f, want 1", m)
			}
		})
	}
}

func TestBandwidthRules(t *testing.T) {
	// A peaked set with outliers: 90 points evenly in [-7.05, -6.95], five at
	// -8 and five at -6. Its sd exceeds IQR/1.34, so Silverman's rule uses
	// the IQR branch.
	var s []float64
	for k := range 90 {
		s = append(s, -7.05+0.1*float64(k)/89)
	}
	for range 5 {
		s = append(s, -8, -6)
	}
	n := float64(len(s))
	mean := 0.0
	for _, x := range s {
		mean += x / n
	}
	ss := 0.0
	for _, x := range s {
		ss += (x - mean) * (x - mean)
	}
	sd := math.Sqrt(ss / (n - 1))
	// The central 90 points hold the quartiles: 25 % of 100 points is the
	// 20th-21st point of the block, 75 % the 70th-71st, so the IQR is
	// 50 block spacings to within one spacing (quantile conventions differ).
	iqr := 50 * 0.1 / 89
	for _, tc := range []struct {
		rule string
		want float64
		tol  float64
		src  string
	}{
		{Scott, math.Pow(4/(3*n), 0.2) * sd, 1e-12, "Scott 1992 normal-reference rule (from memory)"},
		{Silverman, 0.9 * (iqr / 1.34) * math.Pow(n, -0.2), 0.9 * (0.1 / 89 / 1.34) * math.Pow(n, -0.2), "Silverman 1986 eq. 3.31 (from memory); tolerance one block spacing in the IQR"},
	} {
		f, err := NewFreeSpectrum(oneBin(Bin{Kind: Samples, Samples: s}, -9, -5), Options{Bandwidth: tc.rule})
		if err != nil {
			t.Fatal(err)
		}
		if f.BandwidthRule() != tc.rule {
			t.Errorf("rule recorded %q, want %q", f.BandwidthRule(), tc.rule)
		}
		if h := f.Bandwidths()[0]; math.Abs(h-tc.want) > tc.tol {
			t.Errorf("%s: h = %.6g, want %.6g (%s)", tc.rule, h, tc.want, tc.src)
		}
	}
}

func TestBandwidthFloor(t *testing.T) {
	// A spread far below the table spacing is raised to the spacing.
	s := normalSamples(200, -7, 1e-5, -9, -5, 4)
	f, err := NewFreeSpectrum(oneBin(Bin{Kind: Samples, Samples: s}, -9, -5), Options{TableSize: 257})
	if err != nil {
		t.Fatal(err)
	}
	if h, want := f.Bandwidths()[0], 4.0/256; h != want {
		t.Errorf("h = %g, want the spacing %g", h, want)
	}
}

func TestGridInterpolation(t *testing.T) {
	// Grid of the N(-7, 0.4) density at 0.1-dex spacing over the prior.
	const lo, hi, mu, sd, dx = -9.0, -5.0, -7.0, 0.4, 0.1
	var g, d []float64
	for k := 0; k <= 40; k++ {
		x := lo + dx*float64(k)
		g = append(g, x)
		d = append(d, 3.7*math.Exp(-0.5*(x-mu)*(x-mu)/(sd*sd))) // unnormalised on purpose
	}
	f, err := NewFreeSpectrum(oneBin(Bin{Kind: Grid, Grid: g, Density: d}, lo, hi), Options{})
	if err != nil {
		t.Fatal(err)
	}
	nd := distuv.Normal{Mu: mu, Sigma: sd}
	lnZ := math.Log(nd.CDF(hi) - nd.CDF(lo))
	// ln p is quadratic, so linear interpolation of it errs by at most
	// dx^2/8 |(ln p)''| = dx^2/(8 sd^2); renormalising shifts by no more.
	tol := 2 * dx * dx / (8 * sd * sd)
	for x := lo; x <= hi; x += 0.0137 {
		want := nd.LogProb(x) - lnZ
		if got := f.LnDensity(0, x); math.Abs(got-want) > tol {
			t.Errorf("ln p(%.4f) = %.6f, want %.6f (distuv.Normal truncated)", x, got, want)
		}
	}

	// Zero densities are floored relative to the peak and stay finite; a
	// grid narrower than the prior extends at constant density.
	z := Bin{Kind: Grid, Grid: []float64{-8, -7, -6}, Density: []float64{0, 1, 0}}
	f, err = NewFreeSpectrum(oneBin(z, lo, hi), Options{})
	if err != nil {
		t.Fatal(err)
	}
	floor := f.LnDensity(0, lo)
	for _, x := range []float64{-8.5, -5.5, hi} {
		if got := f.LnDensity(0, x); math.Abs(got-floor) > 1e-12 {
			t.Errorf("ln p(%g) = %g, want the floor %g as at lo", x, got, floor)
		}
	}
	// Between the floor at -8 and the peak at -7 ln p rises linearly by
	// -ln DensityFloor; the table resolves it to slope * spacing.
	slack := -math.Log(DensityFloor) * (hi - lo) / (DefaultTableSize - 1)
	for _, tc := range []struct{ x, frac float64 }{{-7, 1}, {-7.5, 0.5}, {-6.25, 0.25}} {
		want := floor - tc.frac*math.Log(DensityFloor)
		if got := f.LnDensity(0, tc.x); math.Abs(got-want) > slack {
			t.Errorf("ln p(%g) = %g, want %g within %g", tc.x, got, want, slack)
		}
	}
	// Zero densities must not reach the table as -Inf.
	if math.IsInf(floor, 0) || math.IsNaN(floor) {
		t.Errorf("floor %g not finite", floor)
	}
}

func TestGaussianBins(t *testing.T) {
	const lo, hi = -9.0, -5.0
	const size = 2048
	step := (hi - lo) / (size - 1)
	for _, b := range []Bin{
		{Kind: Gaussian, Mean: -7, SD: 0.3},
		{Kind: Gaussian, Mean: -8.9, SD: 0.5}, // heavily truncated at lo
	} {
		f, err := NewFreeSpectrum(oneBin(b, lo, hi), Options{TableSize: size})
		if err != nil {
			t.Fatal(err)
		}
		nd := distuv.Normal{Mu: b.Mean, Sigma: b.SD}
		lnZ := math.Log(nd.CDF(hi) - nd.CDF(lo))
		for k := 0; k < size; k += 7 {
			x := lo + float64(k)*step
			// At nodes the table is the exact value: rounding only.
			if got, want := f.LnDensity(0, x), nd.LogProb(x)-lnZ; math.Abs(got-want) > 1e-9 {
				t.Errorf("N(%g,%g): ln p(%g) = %.12g, want %.12g", b.Mean, b.SD, x, got, want)
			}
			// Midway between nodes linear interpolation of a quadratic errs
			// by step^2/(8 sd^2).
			xm := x + step/2
			if got, want := f.LnDensity(0, xm), nd.LogProb(xm)-lnZ; xm < hi && math.Abs(got-want) > step*step/(8*b.SD*b.SD)*1.0001 {
				t.Errorf("N(%g,%g): ln p(%g) = %.12g, want %.12g", b.Mean, b.SD, xm, got, want)
			}
		}
	}
}

// TestOutOfRange checks the rules outside the prior range (docs/physics.md
// section 5): below it the density is clamped to its value at lo; above it
// the likelihood is exactly zero (ln p = -Inf), or, only when a penalty is
// asked for, ln p(hi) - Penalty (1 + min(x - hi, 1e6)); LogLikeExact is the
// exact rule whatever the penalty.
func TestOutOfRange(t *testing.T) {
	const lo, hi = -9.0, -5.0
	ds := &Dataset{Name: "t", Span: 1e8, Freqs: []float64{1e-8, 2e-8}, PriorMin: lo, PriorMax: hi,
		Bins: []Bin{{Kind: Gaussian, Mean: -7, SD: 0.5}, {Kind: Gaussian, Mean: -6, SD: 1}}}
	inf := math.Inf(-1)
	for _, P := range []float64{0, 50} {
		f, err := NewFreeSpectrum(ds, Options{Penalty: P})
		if err != nil {
			t.Fatal(err)
		}
		if f.Penalty() != P {
			t.Errorf("Penalty() = %g, want %g", f.Penalty(), P)
		}
		atLo, atHi := f.LnDensity(0, lo), f.LnDensity(0, hi)
		above := func(d float64) float64 {
			if P == 0 {
				return inf
			}
			return atHi - P*(1+d)
		}
		for _, tc := range []struct {
			x, want float64
			why     string
		}{
			{lo - 1e-9, atLo, "just below: clamp to the noise floor"},
			{lo - 30, atLo, "far below: clamp"},
			{math.Inf(-1), atLo, "-Inf: clamp"},
			{hi + 1e-12, above(1e-12), "just above"},
			{hi + 0.5, above(0.5), "half a dex above"},
			{hi + 2, above(2), "two dex above"},
			{math.Inf(1), above(1e6), "+Inf: capped distance"},
			{math.NaN(), above(1e6), "NaN: treated as the largest distance"},
		} {
			if got := f.LnDensity(0, tc.x); got != tc.want && math.Abs(got-tc.want) > 1e-9 {
				t.Errorf("penalty %g: ln p(%g) = %g, want %g (%s)", P, tc.x, got, tc.want, tc.why)
			}
		}
		// LogLike is the sum over bins, never NaN; LogLikeExact is -Inf as
		// soon as one bin is above the range.
		for _, tc := range []struct {
			x     []float64
			above bool
		}{
			{[]float64{-7, -6}, false}, {[]float64{-20, -30}, false}, {[]float64{-20, 3}, true},
			{[]float64{math.NaN(), -6}, true}, {[]float64{-7, math.Inf(1)}, true},
		} {
			got := f.LogLike(tc.x)
			want := f.LnDensity(0, tc.x[0]) + f.LnDensity(1, tc.x[1])
			if got != want || math.IsNaN(got) {
				t.Errorf("penalty %g: LogLike(%v) = %g, want %g", P, tc.x, got, want)
			}
			exact := f.LogLikeExact(tc.x)
			switch {
			case tc.above && exact != inf:
				t.Errorf("LogLikeExact(%v) = %g, want -Inf", tc.x, exact)
			case !tc.above && exact != got:
				t.Errorf("LogLikeExact(%v) = %g, want LogLike's %g in range", tc.x, exact, got)
			}
		}
		if f.LogLike([]float64{-7}) != inf || f.LogLikeExact([]float64{-7}) != inf {
			t.Error("LogLike with the wrong length should be -Inf")
		}
	}
}

func TestNewFreeSpectrumOptions(t *testing.T) {
	ds := oneBin(Bin{Kind: Gaussian, Mean: -7, SD: 0.5}, -9, -5)
	for _, tc := range []struct {
		opt  Options
		want string
	}{
		{Options{Bandwidth: "wide"}, `likelihood: bandwidth rule "wide": must be "scott" or "silverman"`},
		{Options{TableSize: 3}, `likelihood: table size: must be in [16, 4194304], got 3`},
		{Options{Penalty: -1}, `likelihood: penalty: must be finite and >= 0 (0: exact), got -1`},
	} {
		if _, err := NewFreeSpectrum(ds, tc.opt); err == nil || err.Error() != tc.want {
			t.Errorf("%+v: error %v, want %s", tc.opt, err, tc.want)
		}
	}
	bad := oneBin(Bin{Kind: Samples, Samples: []float64{-7, -6}}, -9, -5)
	if _, err := NewFreeSpectrum(bad, Options{}); err == nil {
		t.Error("accepted a bin with 2 samples")
	}
}

// thirtyBins is a 30-bin data set with ten bins of each representation.
func thirtyBins() *Dataset {
	const lo, hi = -10.0, -4.0
	ds := &Dataset{Name: "b", Span: 5e8, PriorMin: lo, PriorMax: hi}
	for i := range 30 {
		ds.Freqs = append(ds.Freqs, float64(i+1)/ds.Span)
		mu := -6 - 0.1*float64(i)
		var b Bin
		switch i % 3 {
		case 0:
			b = Bin{Kind: Samples, Samples: normalSamples(1000, mu, 0.3, lo, hi, uint64(i))}
		case 1:
			b = Bin{Kind: Grid}
			for x := lo; x <= hi; x += 0.05 {
				b.Grid = append(b.Grid, x)
				b.Density = append(b.Density, math.Exp(-0.5*(x-mu)*(x-mu)/0.09))
			}
		case 2:
			b = Bin{Kind: Gaussian, Mean: mu, SD: 0.3}
		}
		ds.Bins = append(ds.Bins, b)
	}
	return ds
}

func TestLogLikeAllocs(t *testing.T) {
	f, err := NewFreeSpectrum(thirtyBins(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, 30)
	for i := range x {
		x[i] = -6.5
	}
	if a := testing.AllocsPerRun(100, func() { f.LogLike(x) }); a != 0 {
		t.Errorf("LogLike allocates %g times per call, want 0", a)
	}
}

func BenchmarkLogLike30Bins(b *testing.B) {
	f, err := NewFreeSpectrum(thirtyBins(), Options{})
	if err != nil {
		b.Fatal(err)
	}
	x := make([]float64, 30)
	r := rand.New(rand.NewPCG(1, 2))
	for i := range x {
		x[i] = -9 + 4*r.Float64()
	}
	b.ReportAllocs()
	s := 0.0
	for b.Loop() {
		s += f.LogLike(x)
	}
	if math.IsNaN(s) {
		b.Fatal("NaN")
	}
}

// BenchmarkKDETables builds the tables of 30 bins of 2000 samples each
// with the default 2048-point tables: posteriors from 0.05 dex wide
// (a detected signal) to 0.9 dex piled against the lower prior edge (a
// noise-dominated bin), as in the simulated demos.
func BenchmarkKDETables(b *testing.B) {
	const lo, hi = -10.0, -4.0
	ds := &Dataset{Name: "b", Span: 5e8, PriorMin: lo, PriorMax: hi}
	for i := range 30 {
		ds.Freqs = append(ds.Freqs, float64(i+1)/ds.Span)
		ds.Bins = append(ds.Bins, Bin{Kind: Samples, Samples: normalSamples(2000, -6.5-0.12*float64(i), 0.05+0.03*float64(i), lo, hi, uint64(i))})
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := NewFreeSpectrum(ds, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestTablesIndependentOfProcs: the bins' tables are built side by side;
// with one processor and with four they are the same bits.
func TestTablesIndependentOfProcs(t *testing.T) {
	const lo, hi = -10.0, -4.0
	ds := &Dataset{Name: "p", Span: 5e8, PriorMin: lo, PriorMax: hi}
	for i := range 7 {
		ds.Freqs = append(ds.Freqs, float64(i+1)/ds.Span)
		ds.Bins = append(ds.Bins, Bin{Kind: Samples, Samples: normalSamples(500, -6.5-0.2*float64(i), 0.05+0.1*float64(i), lo, hi, uint64(i))})
	}
	ds.Bins[3] = Bin{Kind: Gaussian, Mean: -7, SD: 0.3}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	var tabs [2]*FreeSpectrum
	for k, p := range []int{1, 4} {
		runtime.GOMAXPROCS(p)
		f, err := NewFreeSpectrum(ds, Options{})
		if err != nil {
			t.Fatal(err)
		}
		tabs[k] = f
	}
	if !slices.Equal(tabs[0].table, tabs[1].table) || !slices.Equal(tabs[0].bw, tabs[1].bw) || !slices.Equal(tabs[0].method, tabs[1].method) {
		t.Error("tables, bandwidths or methods differ between GOMAXPROCS 1 and 4")
	}
}
