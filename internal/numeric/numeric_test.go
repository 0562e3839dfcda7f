package numeric

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/interp"
	"gonum.org/v1/gonum/stat/distuv"
)

func TestFinite(t *testing.T) {
	cases := []struct {
		x    float64
		want bool
	}{
		{0, true}, {-1e308, true}, {math.SmallestNonzeroFloat64, true}, {math.MaxFloat64, true},
		{math.Inf(1), false}, {math.Inf(-1), false}, {math.NaN(), false},
	}
	for _, c := range cases {
		if got := Finite(c.x); got != c.want {
			t.Errorf("Finite(%g) = %v, want %v", c.x, got, c.want)
		}
	}
}

// TestLnSqrt2Pi checks the constant against the closed form 0.5 ln(2 pi),
// to one ulp (the closed form rounds twice).
func TestLnSqrt2Pi(t *testing.T) {
	if want := 0.5 * math.Log(2*math.Pi); math.Abs(LnSqrt2Pi-want) > 2e-16 {
		t.Errorf("LnSqrt2Pi = %.17g, 0.5 ln(2 pi) = %.17g", LnSqrt2Pi, want)
	}
}

// TestNormAgainstGonum compares NormCDF and NormQuantile with gonum's
// distuv.Normal{Mu: 0, Sigma: 1}, an independent implementation (its
// quantile is Wichura's AS241). CDF tolerance 1e-14 relative, down to the
// far lower tail where the erfc form must keep its relative accuracy: a few
// ulp of the special function.
func TestNormAgainstGonum(t *testing.T) {
	n := distuv.Normal{Mu: 0, Sigma: 1}
	for _, z := range []float64{-37, -20, -8, -3, -1, -0.25, 0, 0.5, 1, 2.5, 6} {
		got, want := NormCDF(z), n.CDF(z)
		if math.Abs(got-want) > 1e-14*want {
			t.Errorf("NormCDF(%g) = %.17g, gonum %.17g", z, got, want)
		}
	}
	// NormQuantile's documented accuracy, 1e-16/phi(z), is below 2e-13 for
	// p >= 1e-4 (phi(-3.72) = 4e-4); the upper tail is not affected.
	for _, p := range []float64{1e-4, 0.001, 0.025, 0.1586552539314571, 0.5, 0.8, 0.975, 0.999999, 1 - 1e-12} {
		got, want := NormQuantile(p), n.Quantile(p)
		if math.Abs(got-want) > 2e-13 {
			t.Errorf("NormQuantile(%g) = %.17g, gonum %.17g", p, got, want)
		}
	}
}

// TestNormHandbook checks two tabulated values of Phi (Abramowitz & Stegun
// Table 26.1, to ten digits; values from memory, and cross-checked by
// TestNormAgainstGonum) and the exact Phi(0) = 1/2, Phi^-1(1/2) = 0 and the
// infinite ends. Tolerance 1e-10: the ten quoted digits.
func TestNormHandbook(t *testing.T) {
	cases := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"Phi(0)", NormCDF(0), 0.5, 0},
		{"Phi^-1(0.5)", NormQuantile(0.5), 0, 0},
		{"Phi(1)", NormCDF(1), 0.8413447461, 1e-10},
		{"Phi(1.96)", NormCDF(1.96), 0.9750021049, 1e-10},
		{"Phi^-1(0)", NormQuantile(0), math.Inf(-1), 0},
		{"Phi^-1(1)", NormQuantile(1), math.Inf(1), 0},
	}
	for _, c := range cases {
		if !(c.got == c.want || math.Abs(c.got-c.want) <= c.tol) {
			t.Errorf("%s = %.12g, want %.12g", c.name, c.got, c.want)
		}
	}
	if !math.IsNaN(NormQuantile(1.5)) || !math.IsNaN(NormQuantile(-0.1)) {
		t.Error("NormQuantile outside [0, 1] is not NaN")
	}
}

// TestQuantileHyndmanFan works definition 7 by hand on the sample
// x = (1, 2, 4, 7, 11) (n = 5): h = 4p, Q = x[floor h] + frac(h) (x[floor h + 1] - x[floor h]).
// For p = 0.1, h = 0.4: 1 + 0.4 (2 - 1) = 1.4. p = 0.25, h = 1: x[1] = 2.
// p = 0.3, h = 1.2: 2 + 0.2 (4 - 2) = 2.4. p = 0.5, h = 2: 4. p = 0.9,
// h = 3.6: 7 + 0.6 (11 - 7) = 9.4. The same numbers follow from R's
// quantile(type = 7) definition "1 + (n-1) p" in 1-based indexing (from
// memory). Tolerance 4 ulp of the result: one multiply-add each.
func TestQuantileHyndmanFan(t *testing.T) {
	x := []float64{1, 2, 4, 7, 11}
	cases := []struct{ p, want float64 }{
		{0, 1}, {0.1, 1.4}, {0.25, 2}, {0.3, 2.4}, {0.5, 4}, {0.9, 9.4}, {1, 11},
	}
	for _, c := range cases {
		if got := Quantile(x, c.p); math.Abs(got-c.want) > 4*ulp(c.want) {
			t.Errorf("Quantile(x, %g) = %.17g, hand-worked %g", c.p, got, c.want)
		}
	}
	for _, c := range []struct {
		name string
		s    []float64
		p    float64
	}{
		{"empty", nil, 0.5}, {"p<0", x, -0.01}, {"p>1", x, 1.01}, {"NaN", x, math.NaN()},
	} {
		if got := Quantile(c.s, c.p); !math.IsNaN(got) {
			t.Errorf("%s: Quantile = %g, want NaN", c.name, got)
		}
	}
	if got := Quantile([]float64{3}, 0.7); got != 3 {
		t.Errorf("single value: Quantile = %g, want 3", got)
	}
	// The extremes are returned exactly even next to an infinity, where the
	// interpolation formula would give NaN.
	if got := Quantile([]float64{-2, math.Inf(1)}, 0); got != -2 {
		t.Errorf("Quantile at p = 0 next to +Inf = %g, want -2", got)
	}
}

// TestQuantileAgainstGonum uses that the type-7 quantile is the
// piecewise-linear interpolant through the points (k/(n-1), x[k]), which
// gonum's interp.PiecewiseLinear evaluates independently. Tolerance 1e-14
// of the data range (43.5): both are one interpolation, a few ulp of it.
func TestQuantileAgainstGonum(t *testing.T) {
	x := []float64{-3.5, -1, -0.75, 0, 0.125, 2, 2, 5, 9.25, 40}
	xs := make([]float64, len(x))
	for k := range x {
		xs[k] = float64(k) / float64(len(x)-1)
	}
	var pl interp.PiecewiseLinear
	if err := pl.Fit(xs, x); err != nil {
		t.Fatal(err)
	}
	for p := 0.0; p <= 1; p += 1.0 / 97 {
		if got, want := Quantile(x, p), pl.Predict(p); math.Abs(got-want) > 1e-14*43.5 {
			t.Errorf("Quantile(%g) = %.17g, interpolant %.17g", p, got, want)
		}
	}
}

func ulp(x float64) float64 { return math.Nextafter(math.Abs(x), math.Inf(1)) - math.Abs(x) }

// TestLevels: the "68 %" levels are Phi(-1) and Phi(1) as NormCDF and the
// standard library's erf compute them (to 2e-16, a few roundings of
// numbers below 1), and "95 %" holds mass 0.95.
func TestLevels(t *testing.T) {
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"P68Lo = Phi(-1)", P68Lo, NormCDF(-1)},
		{"P68Hi = Phi(1)", P68Hi, NormCDF(1)},
		{"Mass68 = erf(1/sqrt 2)", Mass68, math.Erf(1 / math.Sqrt2)},
		{"Mass95", Mass95, 0.95},
		{"P95Lo", P95Lo, (1 - 0.95) / 2},
	} {
		if math.Abs(c.got-c.want) > 2e-16 {
			t.Errorf("%s: %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
}
