package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// dist is the part of a gonum distribution the tests use.
type dist interface {
	Rand() float64
	Quantile(p float64) float64
	Prob(x float64) float64
	CDF(x float64) float64
}

func drawN(d dist, n int) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = d.Rand()
	}
	return x
}

// quantileSE is the large-sample standard error of the sample p-quantile,
// sqrt(p(1-p)/n)/f(x_p): the binomial standard error of the count below x_p
// mapped through the density (e.g. Stuart & Ord, Kendall's Advanced Theory
// of Statistics, vol. 1, sec. 10.10).
func quantileSE(d dist, p float64, n int) float64 {
	return math.Sqrt(p*(1-p)/float64(n)) / d.Prob(d.Quantile(p))
}

func TestQuantilesAgainstDistuv(t *testing.T) {
	const n = 100000
	src := rand.New(rand.NewPCG(1, 2))
	cases := []struct {
		name string
		d    dist
	}{
		// References: gonum distuv Quantile (closed forms / inverse
		// regularised incomplete beta).
		{"normal(1,2)", distuv.Normal{Mu: 1, Sigma: 2, Src: src}},
		{"lognormal(0,0.5)", distuv.LogNormal{Mu: 0, Sigma: 0.5, Src: src}},
		{"beta(2,5)", distuv.Beta{Alpha: 2, Beta: 5, Src: src}},
	}
	for _, c := range cases {
		s := sortedFinite(drawN(c.d, n))
		for _, p := range []float64{0.025, 0.16, 0.5, 0.84, 0.975} {
			got, want := Quantile(s, p), c.d.Quantile(p)
			// 4 standard errors: a false alarm rate of 6e-5 per check.
			if tol := 4 * quantileSE(c.d, p, n); math.Abs(got-want) > tol {
				t.Errorf("%s: Q(%g) = %.5g, want %.5g ± %.2g", c.name, p, got, want, tol)
			}
		}
		for _, mass := range []float64{0.68, 0.95} {
			iv, err := EqualTailed(s, mass)
			if err != nil {
				t.Fatal(err)
			}
			a := (1 - mass) / 2
			tl, th := 4*quantileSE(c.d, a, n), 4*quantileSE(c.d, 1-a, n)
			if math.Abs(iv.Lo-c.d.Quantile(a)) > tl || math.Abs(iv.Hi-c.d.Quantile(1-a)) > th {
				t.Errorf("%s: ET%g = %+v, want [%.5g, %.5g]", c.name, mass, iv, c.d.Quantile(a), c.d.Quantile(1-a))
			}
		}
	}
}

func TestQuantileExact(t *testing.T) {
	// Hyndman & Fan (1996) definition 7 on 1..5: Q(p) = 1 + 4p.
	s := []float64{1, 2, 3, 4, 5}
	for _, p := range []float64{0, 0.1, 0.25, 0.5, 0.9, 1} {
		if got, want := Quantile(s, p), 1+4*p; math.Abs(got-want) > 1e-12 {
			t.Errorf("Q(%g) = %g, want %g", p, got, want)
		}
	}
	if !math.IsNaN(Quantile(nil, 0.5)) || !math.IsNaN(Quantile(s, 1.5)) {
		t.Error("Quantile of empty input or p > 1 is not NaN")
	}
	if _, err := HDI(nil, 0.68); err == nil {
		t.Error("HDI(nil) did not fail")
	}
	if _, err := EqualTailed(s, 1); err == nil {
		t.Error("EqualTailed with mass 1 did not fail")
	}
}

// solveHDI returns the interval [a, b] of mass p with f(a) = f(b) for a
// unimodal density with mode m, by bisection on a in [lo, m].
func solveHDI(d dist, p, lo, m float64) Interval {
	g := func(a float64) float64 { return d.Prob(a) - d.Prob(d.Quantile(d.CDF(a)+p)) }
	hi := math.Min(m, d.Quantile(1-p)*(1-1e-12))
	for range 200 {
		mid := (lo + hi) / 2
		if g(mid) < 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	a := (lo + hi) / 2
	return Interval{a, d.Quantile(d.CDF(a) + p)}
}

func TestHDISkewed(t *testing.T) {
	const n = 200000
	src := rand.New(rand.NewPCG(3, 4))
	cases := []struct {
		name    string
		d       dist
		lo, mod float64
	}{
		// Reference: equal-density interval solved with distuv and bisection.
		{"gamma(2,1)", distuv.Gamma{Alpha: 2, Beta: 1, Src: src}, 0, 1},
		{"lognormal(0,0.6)", distuv.LogNormal{Mu: 0, Sigma: 0.6, Src: src}, 1e-9, math.Exp(-0.36)},
	}
	for _, c := range cases {
		for _, mass := range []float64{0.68, 0.95} {
			want := solveHDI(c.d, mass, c.lo, c.mod)
			if r := c.d.Prob(want.Lo) / c.d.Prob(want.Hi); math.Abs(r-1) > 1e-6 {
				t.Fatalf("%s: reference HDI not solved: density ratio %g", c.name, r)
			}
			got, err := HDI(sortedFinite(drawN(c.d, n)), mass)
			if err != nil {
				t.Fatal(err)
			}
			// The width L(a) = Q(F(a)+p) - a is flat at the optimum a*, so
			// the sample argmin wanders by delta with L''delta^2/2 up to the
			// noise in two sample widths, each 4 standard errors sigma_L:
			// delta = sqrt(16 sigma_L / L'').
			L := func(a float64) float64 { return c.d.Quantile(c.d.CDF(a)+mass) - a }
			e := 1e-3 * want.Width()
			l2 := (L(want.Lo+e) - 2*L(want.Lo) + L(want.Lo-e)) / (e * e)
			pa := c.d.CDF(want.Lo)
			sl := math.Hypot(quantileSE(c.d, pa, n), quantileSE(c.d, pa+mass, n))
			tol := math.Sqrt(16 * sl / l2)
			if math.Abs(got.Lo-want.Lo) > tol || math.Abs(got.Hi-want.Hi) > tol*c.d.Prob(want.Lo)/c.d.Prob(want.Hi)+tol {
				t.Errorf("%s: HDI%g = [%.4f, %.4f], want [%.4f, %.4f] ± %.3f", c.name, mass, got.Lo, got.Hi, want.Lo, want.Hi, tol)
			}
			// The true mass inside the sample HDI: binomial error, 4 sigma.
			m := c.d.CDF(got.Hi) - c.d.CDF(got.Lo)
			if tm := 4 * math.Sqrt(mass*(1-mass)/n); math.Abs(m-mass) > tm {
				t.Errorf("%s: HDI%g holds mass %.4f, want %.4f ± %.4f", c.name, mass, m, mass, tm)
			}
		}
	}
}

func TestUpperLimitHalfNormal(t *testing.T) {
	const n, sigma = 100000, 2.0
	src := rand.New(rand.NewPCG(5, 6))
	norm := distuv.Normal{Mu: 0, Sigma: sigma, Src: src}
	x := make([]float64, n)
	for i := range x {
		x[i] = math.Abs(norm.Rand())
	}
	m, err := Marginalize("x", x, [2]float64{0, 10}, Options1D{})
	if err != nil {
		t.Fatal(err)
	}
	s := m.Summary
	if s.Rails != EdgeLower {
		t.Fatalf("half-normal rails = %v (edge ratios %v), want lower", s.Rails, s.EdgeRatio)
	}
	// Closed form: the 95 % quantile of |N(0, sigma)| is sigma Phi^-1(0.975).
	want := sigma * distuv.UnitNormal.Quantile(0.975)
	f := 2 * norm.Prob(want)
	if tol := 4 * math.Sqrt(0.95*0.05/n) / f; math.Abs(s.Limit-want) > tol {
		t.Errorf("95%% upper limit = %.4f, want %.4f ± %.4f", s.Limit, want, tol)
	}
	// The reflected density at the edge estimates 2 phi(0)/sigma; a
	// kernel estimate at n = 1e5 has a relative standard error near 1 %,
	// so 5 % is a 4-5 sigma bound.
	if got, want := m.Density.P[0], 2*norm.Prob(0); math.Abs(got/want-1) > 0.05 {
		t.Errorf("edge density = %.4f, want %.4f (reflection)", got, want)
	}
}

func TestRails(t *testing.T) {
	src := rand.New(rand.NewPCG(7, 8))
	cases := []struct {
		name   string
		d      dist
		bounds [2]float64
		want   Edge
	}{
		// Expected edges follow from the densities' shapes (closed form).
		{"centred normal", distuv.Normal{Mu: 5, Sigma: 1, Src: src}, [2]float64{0, 10}, EdgeNone},
		{"uniform", distuv.Uniform{Min: 0, Max: 1, Src: src}, [2]float64{0, 1}, EdgeBoth},
		{"rising to upper edge", distuv.Beta{Alpha: 3, Beta: 1, Src: src}, [2]float64{0, 1}, EdgeUpper},
		{"open support", distuv.Normal{Mu: 0, Sigma: 1, Src: src}, [2]float64{math.Inf(-1), math.Inf(1)}, EdgeNone},
	}
	for _, c := range cases {
		m, err := Marginalize(c.name, drawN(c.d, 20000), c.bounds, Options1D{})
		if err != nil {
			t.Fatal(err)
		}
		if m.Summary.Rails != c.want {
			t.Errorf("%s: rails %v, want %v (ratios %v)", c.name, m.Summary.Rails, c.want, m.Summary.EdgeRatio)
		}
		if c.want == EdgeUpper {
			// Closed form: Beta(3,1) has CDF x^3, so the 5 % quantile is
			// 0.05^(1/3); 4 binomial standard errors.
			got, want := m.Summary.Limit, math.Cbrt(0.05)
			if tol := 4 * quantileSE(c.d, 0.05, 20000); math.Abs(got-want) > tol {
				t.Errorf("%s: lower limit %.4f, want %.4f", c.name, got, want)
			}
		}
	}
	if _, err := Marginalize("bad", []float64{1, 2}, [2]float64{3, 4}, Options1D{}); err == nil {
		t.Error("samples outside the bounds did not fail")
	}
	if _, err := Marginalize("bad", []float64{1, 2}, [2]float64{4, 3}, Options1D{}); err == nil {
		t.Error("reversed bounds did not fail")
	}
}

func TestKDE1DAgainstNormal(t *testing.T) {
	// Reference: the normal density (gonum distuv). At n = 1e5 Silverman's
	// bandwidth is h = 0.09, so the smoothing bias h^2 f''/2 is below
	// 0.002 and the standard deviation sqrt(f R(K)/(n h)) below 0.004
	// (Silverman 1986, eqs. 3.18-3.19): 0.02 is a 5 sigma bound.
	const n = 100000
	d := distuv.Normal{Mu: 1, Sigma: 1, Src: rand.New(rand.NewPCG(71, 72))}
	k, err := KDE1D(drawN(d, n), [2]float64{math.Inf(-1), math.Inf(1)}, Options1D{})
	if err != nil {
		t.Fatal(err)
	}
	if k.Rule != RuleSilverman || k.Reflect != [2]bool{} {
		t.Errorf("rule %q, reflect %v", k.Rule, k.Reflect)
	}
	for x := -2.0; x <= 4; x += 0.25 {
		if got, want := k.At(x), d.Prob(x); math.Abs(got-want) > 0.02 {
			t.Errorf("density at %g = %.4f, want %.4f", x, got, want)
		}
	}
	// The histogram, normalised as a density, integrates to 1.
	var s float64
	for i, h := range k.Hist {
		s += h * (k.Edges[i+1] - k.Edges[i])
	}
	if math.Abs(s-1) > 1e-12 {
		t.Errorf("histogram integrates to %g", s)
	}
}

// TestConvention: Marginalize's "68 %" and "95 %" intervals of the normal
// quantile sample x_k = Phi^-1((k+0.5)/n) (gonum's UnitNormal.Quantile)
// are the normal's [-1, 1] and [Phi^-1(0.025), Phi^-1(0.975)] =
// [-1.95996, 1.95996]; the HDIs, of masses Mass68 and Mass95, are the
// same intervals for a symmetric unimodal density. The tolerance, 2e-3, is
// a few sample spacings 1/(n phi(x)) at |x| <= 2 for n = 20001.
func TestConvention(t *testing.T) {
	const n = 20001
	x := make([]float64, n)
	for k := range x {
		x[k] = distuv.UnitNormal.Quantile((float64(k) + 0.5) / n)
	}
	m, err := Marginalize("x", x, [2]float64{-10, 10}, Options1D{})
	if err != nil {
		t.Fatal(err)
	}
	z95 := distuv.UnitNormal.Quantile(0.975)
	sm := m.Summary
	for _, c := range []struct {
		name   string
		got    Interval
		lo, hi float64
	}{
		{"ET68", sm.ET68, -1, 1}, {"HDI68", sm.HDI68, -1, 1},
		{"ET95", sm.ET95, -z95, z95}, {"HDI95", sm.HDI95, -z95, z95},
	} {
		if math.Abs(c.got.Lo-c.lo) > 2e-3 || math.Abs(c.got.Hi-c.hi) > 2e-3 {
			t.Errorf("%s = [%.5f, %.5f], want [%.5f, %.5f]", c.name, c.got.Lo, c.got.Hi, c.lo, c.hi)
		}
	}
}
