package report

import (
	"errors"
	"math"
	"testing"
)

// TestPredictiveBand pushes the samples of a straight-line "model"
// log10 rho = a + b f through PredictiveBand and checks the evenly spaced
// rows it picks (row (i + 1/2) rows/draws, the midpoints of equal shares)
// and that rows outside the domain are counted and left out.
func TestPredictiveBand(t *testing.T) {
	freq := []float64{1, 2}
	samples := []float64{0, 1, 1, 1, 2, 1, 3, 1} // 4 rows of (a, b)
	line := func(theta []float64) ([]float64, error) {
		if theta[0] == 3 {
			return nil, errors.New("outside")
		}
		return []float64{theta[0] + theta[1]*freq[0], theta[0] + theta[1]*freq[1]}, nil
	}
	b, failed, err := PredictiveBand("m", freq, samples, 4, 2, 2, line)
	// draws 2 of 4 rows: rows int(0.5*2) = 1 and int(1.5*2) = 3; row 3 (a = 3) is outside.
	if err != nil || failed != 1 || len(b.Curves) != 1 || b.Curves[0][0] != 2 || b.Curves[0][1] != 3 {
		t.Errorf("band %+v, failed %d, err %v", b, failed, err)
	}
	b, failed, err = PredictiveBand("m", freq, samples, 4, 2, 10, line)
	// more draws than rows: every row once.
	if err != nil || failed != 1 || len(b.Curves) != 3 || math.Abs(b.Curves[2][1]-4) > 0 {
		t.Errorf("band %+v, failed %d, err %v", b, failed, err)
	}
	if _, _, err := PredictiveBand("m", freq, samples[6:], 1, 2, 1, line); err == nil {
		t.Error("a band with no curve was accepted")
	}
}
