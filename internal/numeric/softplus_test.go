package numeric

import (
	"math"
	"math/rand/v2"
	"testing"
)

// softplusRef is ln(1 + e^x) by the standard library's math.Log1p and
// math.Exp (each accurate to 1 ulp), the independent reference.
func softplusRef(x float64) float64 {
	if x > 0 {
		return x + math.Log1p(math.Exp(-x))
	}
	return math.Log1p(math.Exp(x))
}

// TestSoftplusMatchesStdlib: Softplus agrees with math.Log1p(math.Exp(x))
// within 4 ulp of the result (the reference itself is within about 2 ulp)
// at 10^6 random points over [-60, 60], at every table node and midpoint,
// and at the special values.
func TestSoftplusMatchesStdlib(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	xs := []float64{0, math.Copysign(0, -1), 1e-300, -1e-300, 40, -40, 40.001, -40.001, 700, -700, -745, 1e308, -1e308}
	for range 1000000 {
		xs = append(xs, 120*r.Float64()-60)
	}
	for k := 0; k <= softplusMax*softplusPerUnit; k++ {
		d := -float64(k) / softplusPerUnit
		xs = append(xs, d, d-0.5/softplusPerUnit, math.Nextafter(d-0.5/softplusPerUnit, 0))
	}
	worst := 0.0
	for _, x := range xs {
		got, want := Softplus(x), softplusRef(x)
		ulp := math.Abs(math.Nextafter(want, math.Inf(1)) - want)
		if e := math.Abs(got-want) / ulp; e > worst {
			worst = e
			if e > 4 {
				t.Errorf("Softplus(%v) = %v, want %v (%.1f ulp)", x, got, want, e)
			}
		}
	}
	t.Logf("largest difference from math.Log1p(math.Exp(x)): %.2f ulp", worst)
}

// softplusNegDirect is softplusNeg as it was before the table held the
// Taylor coefficients: it derives them from the sigmoid at every call.
func softplusNegDirect(x float64) float64 {
	k := int(-x*softplusPerUnit + 0.5)
	d := -float64(k) / softplusPerUnit
	e := math.Exp(d)
	f0, s := math.Log1p(e), e/(1+e)
	d = x + float64(k)/softplusPerUnit
	t := s * (1 - s)
	u := 1 - 2*s
	c2 := t / 2
	c3 := t * u / 6
	c4 := t * (1 - 6*t) / 24
	c5 := t * u * (1 - 12*t) / 120
	return f0 + d*(s+d*(c2+d*(c3+d*(c4+d*c5))))
}

// TestSoftplusTableSameBits: the precomputed coefficients give the same
// bits as deriving them at each call, at 10^5 random points and every
// node and half-node of [-40, 0].
func TestSoftplusTableSameBits(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	xs := []float64{0, -softplusMax}
	for range 100000 {
		xs = append(xs, -softplusMax*r.Float64())
	}
	for k := 0; k < softplusMax*softplusPerUnit; k++ {
		d := -float64(k) / softplusPerUnit
		xs = append(xs, d, d-0.5/softplusPerUnit)
	}
	for _, x := range xs {
		if got, want := softplusNeg(x), softplusNegDirect(x); math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("softplusNeg(%v) = %v, per-call coefficients give %v", x, got, want)
		}
	}
}

// TestSoftplusSpecial: the limits of ln(1 + e^x) (closed form): 0 at -Inf,
// +Inf at +Inf, ln 2 at 0, NaN for NaN.
func TestSoftplusSpecial(t *testing.T) {
	for _, c := range []struct{ x, want float64 }{
		{math.Inf(-1), 0}, {math.Inf(1), math.Inf(1)}, {0, math.Ln2},
	} {
		if got := Softplus(c.x); got != c.want {
			t.Errorf("Softplus(%v) = %v, want %v", c.x, got, c.want)
		}
	}
	if got := Softplus(math.NaN()); !math.IsNaN(got) {
		t.Errorf("Softplus(NaN) = %v, want NaN", got)
	}
}

// BenchmarkSoftplus evaluates a 30-bin spectrum's worth of independent
// values, as models' sums do.
func BenchmarkSoftplus(b *testing.B) {
	xs, out := make([]float64, 30), make([]float64, 30)
	r := rand.New(rand.NewPCG(3, 4))
	for i := range xs {
		xs[i] = -20 * r.Float64()
	}
	b.Run("table", func(b *testing.B) {
		for b.Loop() {
			for i, x := range xs {
				out[i] = Softplus(x)
			}
		}
	})
	b.Run("log1p-exp", func(b *testing.B) {
		for b.Loop() {
			for i, x := range xs {
				out[i] = math.Log1p(math.Exp(x))
			}
		}
	})
}
