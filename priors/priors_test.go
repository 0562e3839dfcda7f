package priors

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// TestLogProbAgainstDistuv compares log densities with gonum's independent
// implementations (stat/distuv). Tolerance 1e-12 absolute: both sides are a
// few float64 operations on numbers of order 10, so they agree to ~1e-14.
func TestLogProbAgainstDistuv(t *testing.T) {
	normCDF := func(mu, sigma, x float64) float64 { return distuv.Normal{Mu: mu, Sigma: sigma}.CDF(x) }
	cases := []struct {
		name string
		p    Prior
		ref  func(x float64) float64 // reference log density, from gonum
		xs   []float64
	}{
		{"uniform", Uniform{-18, -11}, distuv.Uniform{Min: -18, Max: -11}.LogProb,
			[]float64{-18, -15.5, -11.000001, -11}},
		{"normal", Normal{0.3, 2.5}, distuv.Normal{Mu: 0.3, Sigma: 2.5}.LogProb,
			[]float64{-7, 0, 0.3, 4, 12}},
		// Change of variables: ln x ~ U(ln a, ln b) gives
		// p(x) = U.pdf(ln x) / x.
		{"log-uniform", LogUniform{1e-3, 1}, func(x float64) float64 {
			return distuv.Uniform{Min: math.Log(1e-3), Max: 0}.LogProb(math.Log(x)) - math.Log(x)
		}, []float64{1e-3, 0.0123, 0.5, 1}},
		// Truncated normal: normal density over the mass in [min, max].
		{"truncnormal", TruncNormal{1, 2, -0.5, 6}, func(x float64) float64 {
			return distuv.Normal{Mu: 1, Sigma: 2}.LogProb(x) - math.Log(normCDF(1, 2, 6)-normCDF(1, 2, -0.5))
		}, []float64{-0.5, 0, 1, 3.7, 6}},
		// Upper tail: mass Phi(-3)-ish, still well inside float64 range.
		{"truncnormal upper tail", TruncNormal{0, 1, 3, 5}, func(x float64) float64 {
			return distuv.UnitNormal.LogProb(x) - math.Log(distuv.UnitNormal.Survival(3)-distuv.UnitNormal.Survival(5))
		}, []float64{3, 4, 5}},
		{"truncnormal half line", TruncNormal{0, 1, 0, math.Inf(1)}, func(x float64) float64 {
			return distuv.UnitNormal.LogProb(x) + math.Ln2
		}, []float64{0, 1, 10}},
	}
	for _, c := range cases {
		for _, x := range c.xs {
			got, want := c.p.LogProb(x), c.ref(x)
			if math.Abs(got-want) > 1e-12 {
				t.Errorf("%s: LogProb(%g) = %.15g, gonum gives %.15g", c.name, x, got, want)
			}
		}
		lo, hi := c.p.Bounds()
		for _, x := range []float64{lo - 1, hi + 1} {
			if math.IsInf(x, 0) {
				continue // unbounded side
			}
			if got := c.p.LogProb(x); !math.IsInf(got, -1) {
				t.Errorf("%s: LogProb(%g) outside support = %g, want -Inf", c.name, x, got)
			}
		}
	}
}

// TestNormalisation integrates each density over its support with
// Gauss-Legendre quadrature (gonum integrate/quad). Tolerance 1e-9: the
// densities are smooth on the finite intervals used, where a 400-point rule
// converges far beyond that; 1e-9 leaves room for the rounding of the sum.
func TestNormalisation(t *testing.T) {
	cases := []struct {
		name   string
		p      Prior
		lo, hi float64 // integration interval (the support, or 40 sigma)
	}{
		{"uniform", Uniform{-18, -11}, -18, -11},
		{"log-uniform", LogUniform{1e-3, 1}, 1e-3, 1},
		{"normal", Normal{2, 0.5}, 2 - 20, 2 + 20},
		{"truncnormal", TruncNormal{1, 2, -0.5, 6}, -0.5, 6},
		{"truncnormal narrow", TruncNormal{0, 1, 2.5, 2.6}, 2.5, 2.6},
		{"truncnormal one-sided", TruncNormal{0, 0.1, 0, math.Inf(1)}, 0, 4},
		{"truncnormal lower tail", TruncNormal{0, 1, -7, -6}, -7, -6},
		// Far tail: the mass, about 3.7e-350, is below the smallest float64,
		// so the normalisation runs through the asymptotic series.
		{"truncnormal far tail", TruncNormal{0, 1, 40, 40.5}, 40, 40.5},
	}
	for _, c := range cases {
		var sub float64
		// Split into pieces so that log-uniform's 1/x is resolved near Min.
		const pieces = 20
		for k := range pieces {
			a := c.lo + (c.hi-c.lo)*float64(k)/pieces
			b := c.lo + (c.hi-c.lo)*float64(k+1)/pieces
			if c.name == "log-uniform" {
				a = c.lo * math.Pow(c.hi/c.lo, float64(k)/pieces)
				b = c.lo * math.Pow(c.hi/c.lo, float64(k+1)/pieces)
			}
			sub += quad.Fixed(func(x float64) float64 { return math.Exp(c.p.LogProb(x)) }, a, b, 400, quad.Legendre{}, 0)
		}
		if math.Abs(sub-1) > 1e-9 {
			t.Errorf("%s: integral of density = %.12g, want 1", c.name, sub)
		}
	}
}

// ks returns the one-sample Kolmogorov-Smirnov statistic of xs against cdf.
func ks(xs []float64, cdf func(float64) float64) float64 {
	s := slices.Clone(xs)
	slices.Sort(s)
	n := float64(len(s))
	var d float64
	for i, x := range s {
		c := cdf(x)
		d = math.Max(d, math.Max(c-float64(i)/n, float64(i+1)/n-c))
	}
	return d
}

// TestDrawsKS checks draws against the distribution function with a
// Kolmogorov-Smirnov test. Critical value 1.95/sqrt(n) is the asymptotic
// Kolmogorov 0.1 % point (Smirnov 1948 table, c(0.001) = 1.949): with fixed
// seeds the test is deterministic, and a correct sampler fails it for about
// one seed in a thousand.
func TestDrawsKS(t *testing.T) {
	un := distuv.UnitNormal
	mass := func(a, b float64) float64 { return un.CDF(b) - un.CDF(a) }
	cases := []struct {
		name string
		p    Prior
		cdf  func(float64) float64 // from gonum distuv
	}{
		{"uniform", Uniform{-18, -11}, distuv.Uniform{Min: -18, Max: -11}.CDF},
		{"log-uniform", LogUniform{1e-3, 1}, func(x float64) float64 {
			return distuv.Uniform{Min: math.Log(1e-3), Max: 0}.CDF(math.Log(x))
		}},
		{"normal", Normal{2, 0.5}, distuv.Normal{Mu: 2, Sigma: 0.5}.CDF},
		{"truncnormal", TruncNormal{1, 2, -0.5, 6}, func(x float64) float64 {
			return mass(-0.75, (x-1)/2) / mass(-0.75, 2.5)
		}},
		{"truncnormal upper", TruncNormal{0, 1, 2, 4}, func(x float64) float64 {
			return (un.Survival(2) - un.Survival(x)) / (un.Survival(2) - un.Survival(4))
		}},
		{"truncnormal lower", TruncNormal{0, 1, math.Inf(-1), -3}, func(x float64) float64 {
			return un.CDF(x) / un.CDF(-3)
		}},
		// Beyond the inverse-CDF range: rejection sampler, long interval.
		// Reference: the Mills-ratio asymptote Phi(-z) = phi(z)/z (1 + O(1/z^2))
		// (Abramowitz & Stegun 26.2.12) gives P(Z > z | Z > a) =
		// exp(-(z^2 - a^2)/2) a/z to about 1e-4 at a = 40, far below the KS
		// resolution 1/sqrt(n).
		{"truncnormal far tail", TruncNormal{0, 1, 40, math.Inf(1)}, func(z float64) float64 {
			return 1 - math.Exp(-(z*z-1600)/2)*40/z
		}},
		// Far tail, short interval: uniform-proposal rejection branch.
		{"truncnormal far narrow", TruncNormal{0, 1, -40.01, -40}, func(z float64) float64 {
			// Same Mills-ratio asymptote, for the lower tail.
			num := math.Exp(-(z*z-1600)/2)*40/(-z) - math.Exp(-(40.01*40.01-1600)/2)*40/40.01
			den := 1 - math.Exp(-(40.01*40.01-1600)/2)*40/40.01
			return num / den
		}},
	}
	const n = 4000
	crit := 1.95 / math.Sqrt(n)
	for i, c := range cases {
		r := rand.New(rand.NewPCG(uint64(i), 12345))
		xs := make([]float64, n)
		lo, hi := c.p.Bounds()
		for j := range xs {
			xs[j] = c.p.Rand(r)
			if xs[j] < lo || xs[j] > hi {
				t.Fatalf("%s: draw %g outside [%g, %g]", c.name, xs[j], lo, hi)
			}
		}
		if d := ks(xs, c.cdf); d > crit {
			t.Errorf("%s: KS statistic %.4f > %.4f (n = %d)", c.name, d, crit, n)
		}
	}
}

func TestFixed(t *testing.T) {
	p := Fixed{13.0 / 3}
	if p.LogProb(13.0/3) != 0 || !math.IsInf(p.LogProb(4.3), -1) {
		t.Errorf("Fixed.LogProb: got %g at value, %g off it", p.LogProb(13.0/3), p.LogProb(4.3))
	}
	if v := p.Rand(rand.New(rand.NewPCG(1, 2))); v != 13.0/3 {
		t.Errorf("Fixed.Rand = %g", v)
	}
	var q Prior = p
	f, ok := q.(PointMass)
	if !ok || f.FixedValue() != 13.0/3 {
		t.Errorf("Fixed is not a PointMass at its value")
	}
	// The spread-out shapes are not point masses.
	for _, q := range []Prior{Uniform{0, 1}, LogUniform{1, 2}, Normal{0, 1}, TruncNormal{0, 1, -1, 1}} {
		if _, ok := q.(PointMass); ok {
			t.Errorf("%v is a PointMass", q)
		}
	}
	if lo, hi := p.Bounds(); lo != hi || lo != 13.0/3 {
		t.Errorf("Fixed.Bounds = %g, %g", lo, hi)
	}
}

func TestParse(t *testing.T) {
	cases := []struct {
		in   string
		want Prior
	}{
		{"uniform(-18, -11)", Uniform{-18, -11}},
		{"  UNIFORM ( -18 ,-11 )  ", Uniform{-18, -11}},
		{"log-uniform(1e-3, 1)", LogUniform{1e-3, 1}},
		{"normal(0, 1)", Normal{0, 1}},
		{"truncnormal(0, 1, -inf, 2.5)", TruncNormal{0, 1, math.Inf(-1), 2.5}},
		{"fixed(4.333)", Fixed{4.333}},
		{"4.333", Fixed{4.333}},
		{"13/3", Fixed{13.0 / 3}},
		{"fixed( 13 / 3 )", Fixed{13.0 / 3}},
		{"uniform(0, 7)", Uniform{0, 7}},
	}
	for _, c := range cases {
		got, err := Parse(c.in)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.in, err)
			continue
		}
		if got != c.want {
			t.Errorf("Parse(%q) = %#v, want %#v", c.in, got, c.want)
		}
		back, err := Parse(got.String())
		if err != nil || back != got {
			t.Errorf("round trip of %q via %q: got %#v, %v", c.in, got.String(), back, err)
		}
	}
}

func TestParseErrors(t *testing.T) {
	cases := []struct{ in, want string }{
		{"unifrom(1,2)", `priors: "unifrom(1,2)": unknown shape "unifrom"; want one of uniform, log-uniform, normal, truncnormal, fixed`},
		{"", "empty prior"},
		{"uniform(2, 1)", "need min < max"},
		{"uniform(1, 1)", "need min < max"},
		{"uniform(1)", "uniform takes 2 arguments (min, max), got 1"},
		{"uniform(1, 2", `missing ")"`},
		{"uniform(1, abc)", `argument 2 (max): "abc": not a number`},
		{"uniform(-inf, 1)", "must be finite"},
		{"uniform(nan, 1)", "NaN"},
		{"log-uniform(0, 1)", "need min > 0"},
		{"log-uniform(-1, 1)", "need min > 0"},
		{"normal(0, 0)", "need sigma > 0"},
		{"normal(0, -1)", "need sigma > 0"},
		{"truncnormal(0, 1, 3, 3)", "need min < max"},
		{"fixed(1e999)", "out of float64 range"},
		{"fixed()", "takes 1 arguments"},
		{"1/0", "non-zero"},
		{"1/2/3", "at most one"},
		{"0x1p3", "plain decimal"},
		{"uniform((1), 2)", "unbalanced"},
		{"inf", "finite"},
	}
	for _, c := range cases {
		_, err := Parse(c.in)
		if err == nil {
			t.Errorf("Parse(%q): no error, want %q", c.in, c.want)
			continue
		}
		if !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "priors: ") {
			t.Errorf("Parse(%q): error %q, want it to contain %q", c.in, err, c.want)
		}
	}
}

// FuzzParse checks that Parse never panics, that whatever it accepts
// prints back to a string it parses to the same prior, and that the
// accepted prior's draws lie in its support with finite log density.
func FuzzParse(f *testing.F) {
	for _, s := range []string{"uniform(-18, -11)", "log-uniform(1e-3, 1)", "normal(0, 1)",
		"truncnormal(0, 1, -inf, 2)", "fixed(4.333)", "13/3", "-2.5e-3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		p, err := Parse(s)
		if err != nil {
			return
		}
		q, err := Parse(p.String())
		if err != nil {
			t.Fatalf("Parse(%q) = %v, but Parse(%q): %v", s, p, p.String(), err)
		}
		if q != p {
			t.Fatalf("round trip: %#v -> %q -> %#v", p, p.String(), q)
		}
		r := rand.New(rand.NewPCG(1, 2))
		x := p.Rand(r)
		lo, hi := p.Bounds()
		if !(x >= lo && x <= hi) {
			t.Fatalf("%v: draw %g outside [%g, %g]", p, x, lo, hi)
		}
		if lp := p.LogProb(x); math.IsNaN(lp) || math.IsInf(lp, 0) {
			t.Fatalf("%v: LogProb(draw %g) = %g", p, x, lp)
		}
	})
}

// BenchmarkLogProb measures the per-call cost of each density, which the
// posterior pays once per sampled parameter per step.
func BenchmarkLogProb(b *testing.B) {
	for _, p := range []Prior{Uniform{-18, -11}, LogUniform{1e-3, 1}, Normal{0, 1},
		TruncNormal{0, 1, -1, 2}, Fixed{13.0 / 3}} {
		b.Run(strings.SplitN(p.String(), "(", 2)[0], func(b *testing.B) {
			b.ReportAllocs()
			var s float64
			for b.Loop() {
				s += p.LogProb(0.5)
			}
			_ = s
		})
	}
}
