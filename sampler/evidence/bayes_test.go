package evidence

import (
	"math"
	"testing"
)

// TestKassRaftery checks the categories against Kass & Raftery (1995),
// Journal of the American Statistical Association 90, 773, Section 3.2
// (from memory): 2 ln B in [0, 2) "not worth more than a bare mention",
// [2, 6) positive, [6, 10) strong, >= 10 very strong; halved for ln B, and
// mirrored for negative ln B.
func TestKassRaftery(t *testing.T) {
	tests := []struct {
		lnB  float64
		want string
	}{
		{0, "inconclusive: hardly worth mentioning either way"},
		{0.999, "inconclusive: hardly worth mentioning either way"},
		{-0.999, "inconclusive: hardly worth mentioning either way"},
		{1, "positive support for the first model"},
		{2.9, "positive support for the first model"},
		{-1, "positive support for the second model"},
		{3, "strong support for the first model"},
		{-4.99, "strong support for the second model"},
		{5, "very strong support for the first model"},
		{-5, "very strong support for the second model"},
		{1e6, "very strong support for the first model"},
		{math.Inf(-1), "very strong support for the second model"},
		{math.NaN(), "undefined (ln B is NaN)"},
	}
	for _, tc := range tests {
		if got := KassRaftery(tc.lnB); got != tc.want {
			t.Errorf("KassRaftery(%g) = %q, want %q", tc.lnB, got, tc.want)
		}
	}
	// The named form says which model the evidence favours.
	if got := KassRafteryNamed(-3.5, "strings", "smbhb"); got != "strong support for smbhb" {
		t.Errorf("KassRafteryNamed(-3.5) = %q", got)
	}
	if got := KassRafteryNamed(1.2, "strings", "smbhb"); got != "positive support for strings" {
		t.Errorf("KassRafteryNamed(1.2) = %q", got)
	}
}

// TestBayesFactor checks ln B = ln Z_a - ln Z_b and that the errors of
// independent runs add in quadrature (a 3-4-5 triangle, exact in floating
// point).
func TestBayesFactor(t *testing.T) {
	a := Estimate{LnZ: -10.5, MCErr: 1, DiscErr: 2, Total: 3}
	b := Estimate{LnZ: -12.25, MCErr: 4, DiscErr: 0, Total: 4}
	lnB, err := BayesFactor(a, b)
	if lnB != 1.75 || err != 5 {
		t.Errorf("BayesFactor = %g +- %g, want 1.75 +- 5", lnB, err)
	}
	lnB, err = BayesFactor(b, a)
	if lnB != -1.75 || err != 5 {
		t.Errorf("BayesFactor reversed = %g +- %g, want -1.75 +- 5", lnB, err)
	}
}

// TestBayesFactorEstimate checks the split budget: 3-4-5 and 5-12-13
// triangles, exact in floating point.
func TestBayesFactorEstimate(t *testing.T) {
	a := Estimate{LnZ: -1, MCErr: 3, DiscErr: 5, Total: 8, DiscNoise: 0.6}
	b := Estimate{LnZ: -4, MCErr: 4, DiscErr: 12, Total: 16, DiscNoise: 0.8}
	got := BayesFactorEstimate(a, b)
	want := Estimate{LnZ: 3, MCErr: 5, DiscErr: 13, Total: 18, DiscNoise: 1}
	if got != want {
		t.Errorf("BayesFactorEstimate = %+v, want %+v", got, want)
	}
	if _, err := BayesFactor(a, b); got.Total < err {
		t.Errorf("split total %g below quadrature total %g", got.Total, err)
	}
}
