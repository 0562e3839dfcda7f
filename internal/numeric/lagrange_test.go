package numeric

import (
	"math"
	"testing"
)

// cubic is an arbitrary cubic polynomial; 4-point Lagrange interpolation
// reproduces every polynomial of degree <= 3 exactly (Abramowitz & Stegun
// 25.2.13 has no remainder term for them), so the only error is rounding.
func cubic(x float64) float64 { return 0.75 - 1.5*x + 0.3*x*x - 0.02*x*x*x }

// TestLagrangeExactOnCubics: tolerance 1e-12 absolute on values of order
// 10 over nodes 0..9: weights of order 1, products of four factors, a few
// dozen ulp.
func TestLagrangeExactOnCubics(t *testing.T) {
	const n = 10
	tab := make([]float64, n)
	for k := range tab {
		tab[k] = cubic(float64(k))
	}
	for s := 0.0; s <= n-1; s += 0.0625 {
		want := cubic(s)
		if got := Lagrange4(tab, s); math.Abs(got-want) > 1e-12 {
			t.Errorf("Lagrange4(%g) = %.17g, cubic %.17g", s, got, want)
		}
		i, w := Lagrange4Weights(s, n)
		v := 0.0
		for k := range w {
			v += w[k] * tab[i+k]
		}
		if math.Abs(v-want) > 1e-12 {
			t.Errorf("weights at %g: sum %.17g, cubic %.17g", s, v, want)
		}
	}
	// Outside the nodes the weights extrapolate the cubic (still exact);
	// Lagrange4 clamps instead.
	for _, s := range []float64{-1.5, 10.25} {
		i, w := Lagrange4Weights(s, n)
		v := 0.0
		for k := range w {
			v += w[k] * tab[i+k]
		}
		if math.Abs(v-cubic(s)) > 1e-11 {
			t.Errorf("extrapolated weights at %g: %.17g, cubic %.17g", s, v, cubic(s))
		}
	}
	if got := Lagrange4(tab, -3); got != tab[0] {
		t.Errorf("Lagrange4 below the table = %g, want tab[0] = %g", got, tab[0])
	}
	if got := Lagrange4(tab, 42); got != tab[n-1] {
		t.Errorf("Lagrange4 above the table = %g, want tab[n-1] = %g", got, tab[n-1])
	}
}

// TestLagrangeWeights checks the weights' closed-form properties: they
// interpolate (w = unit vector at a node), sum to 1 (the interpolant of a
// constant), and the stencil stays inside the table.
func TestLagrangeWeights(t *testing.T) {
	const n = 6
	cases := []struct {
		s      float64
		wantI  int
		wantW0 [4]float64 // only checked at nodes
		node   bool
	}{
		{0, 0, [4]float64{1, 0, 0, 0}, true},
		{1, 0, [4]float64{0, 1, 0, 0}, true},
		{2, 1, [4]float64{0, 1, 0, 0}, true},
		{4, 2, [4]float64{0, 0, 1, 0}, true},
		{5, 2, [4]float64{0, 0, 0, 1}, true},
		{2.5, 1, [4]float64{}, false},
		{4.9, 2, [4]float64{}, false},
	}
	for _, c := range cases {
		i, w := Lagrange4Weights(c.s, n)
		if i != c.wantI {
			t.Errorf("s=%g: first node %d, want %d", c.s, i, c.wantI)
		}
		sum := w[0] + w[1] + w[2] + w[3]
		if math.Abs(sum-1) > 1e-15 {
			t.Errorf("s=%g: weights sum to %.17g", c.s, sum)
		}
		if c.node && w != c.wantW0 {
			t.Errorf("s=%g: weights %v at a node, want %v", c.s, w, c.wantW0)
		}
	}
	// Midway between the middle nodes the weights are (-1, 9, 9, -1)/16
	// (Abramowitz & Stegun 25.2.13 at p = 1/2).
	_, w := Lagrange4Weights(2.5, n)
	want := [4]float64{-1.0 / 16, 9.0 / 16, 9.0 / 16, -1.0 / 16}
	if w != want {
		t.Errorf("midpoint weights %v, want %v", w, want)
	}
}

// TestBisect finds sqrt 2 as the root of x^2 - 2 on [0, 2] (closed form).
// Tolerance: the 1e-13 bracket width asked for.
func TestBisect(t *testing.T) {
	f := func(x float64) float64 { return x*x - 2 }
	if got := Bisect(f, 0, 2, 1e-13, 200); math.Abs(got-math.Sqrt2) > 1e-13 {
		t.Errorf("Bisect = %.17g, sqrt 2 = %.17g", got, math.Sqrt2)
	}
	// maxIter bounds the work: one halving of [0, 2] leaves [1, 2].
	if got := Bisect(f, 0, 2, 0, 1); got != 1.5 {
		t.Errorf("one halving: %g, want 1.5", got)
	}
	calls := 0
	Bisect(func(x float64) float64 { calls++; return x - 0.3 }, 0, 1, 0, 7)
	if calls != 7 {
		t.Errorf("%d evaluations, want maxIter = 7", calls)
	}
}
