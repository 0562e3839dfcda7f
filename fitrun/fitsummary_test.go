package fitrun

import (
	"math"
	"testing"
)

// TestFitSummary checks FitSummary on the samples 1..5 (one column) and
// their mirror image -1..-5: median 3, mean 3 and sample standard deviation
// sqrt(2.5) by the textbook formulas.
func TestFitSummary(t *testing.T) {
	post := []float64{1, -1, 2, -2, 3, -3, 4, -4, 5, -5}
	s := FitSummary([]string{"a", "b"}, post, 5, 2)
	if s[0].Median != 3 || math.Abs(s[0].Mean-3) > 1e-15 || math.Abs(s[0].Std-math.Sqrt(2.5)) > 1e-15 {
		t.Errorf("a: %+v", s[0])
	}
	// Linear interpolation between order statistics rounds differently on
	// the two sides; 1e-12 is a few ulps of values near 5.
	if s[1].Median != -3 || math.Abs(s[1].Lo68+s[0].Hi68) > 1e-12 || math.Abs(s[1].Hi95+s[0].Lo95) > 1e-12 {
		t.Errorf("b is not the mirror of a: %+v vs %+v", s[1], s[0])
	}
}
