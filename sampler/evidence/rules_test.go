package evidence

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate"
)

// TestTrapezoidWeights checks the trapezoid weights against gonum's
// integrate.Trapezoidal on an uneven grid.
func TestTrapezoidWeights(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 3))
	for _, betas := range [][]float64{{0, 1}, {0, 0.3, 1}, powerLadder(20, 5), powerLadder(7, 2)} {
		f := make([]float64, len(betas))
		for i := range f {
			f[i] = r.NormFloat64() * 10
		}
		w := make([]float64, len(betas))
		trapezoidWeights(betas, w)
		want := integrate.Trapezoidal(betas, f)
		// Same sum in a different order: a few ulps of the terms.
		if got := dot(w, f); math.Abs(got-want) > 1e-12*(1+math.Abs(want)) {
			t.Errorf("%d points: %g, want %g", len(betas), got, want)
		}
	}
}

// TestCorrectedTrapezoidCubic checks that the derivative-corrected trapezoid
// (Friel, Hurn & Wyse 2014) is exact for a cubic E(beta) with V = E', as the
// Euler-Maclaurin formula promises (the first neglected term involves E”” = 0).
func TestCorrectedTrapezoidCubic(t *testing.T) {
	// E(b) = 2 - 3b + 5b^2 - 7b^3; integral over [0, 1] = 2 - 3/2 + 5/3 - 7/4.
	want := 2 - 1.5 + 5.0/3 - 1.75
	for _, betas := range [][]float64{{0, 1}, {0, 0.1, 1}, powerLadder(5, 5), powerLadder(16, 3)} {
		n := len(betas)
		E, V := make([]float64, n), make([]float64, n)
		for k, b := range betas {
			E[k] = 2 - 3*b + 5*b*b - 7*b*b*b
			V[k] = -3 + 10*b - 21*b*b
		}
		w, u := make([]float64, n), make([]float64, n)
		trapezoidWeights(betas, w)
		correctionWeights(betas, u)
		// Exact up to rounding of a dozen terms of order 10.
		if got := dot(w, E) + dot(u, V); math.Abs(got-want) > 1e-13 {
			t.Errorf("%d rungs: %.16g, want %.16g", n, got, want)
		}
	}
}

func TestSubLadder(t *testing.T) {
	tests := []struct {
		n    int
		want []int
	}{
		{2, []int{0, 1}},
		{3, []int{0, 2}},
		{4, []int{0, 2, 3}},
		{5, []int{0, 2, 4}},
		{21, []int{0, 2, 4, 6, 8, 10, 12, 14, 16, 18, 20}},
	}
	for _, tc := range tests {
		got := subLadder(tc.n)
		if len(got) != len(tc.want) {
			t.Errorf("subLadder(%d) = %v, want %v", tc.n, got, tc.want)
			continue
		}
		for i := range got {
			if got[i] != tc.want[i] {
				t.Errorf("subLadder(%d) = %v, want %v", tc.n, got, tc.want)
				break
			}
		}
	}
}
