package stats

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

var (
	errNoSamples = errors.New("stats: no finite samples")
	errMass      = errors.New("stats: probability mass must lie in (0, 1)")
)

// An Interval is a closed interval [Lo, Hi].
type Interval struct {
	Lo, Hi float64
}

// Width returns Hi - Lo.
func (iv Interval) Width() float64 { return iv.Hi - iv.Lo }

// sortedFinite returns a sorted copy of the finite values of x.
func sortedFinite(x []float64) []float64 {
	s := make([]float64, 0, len(x))
	for _, v := range x {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			s = append(s, v)
		}
	}
	slices.Sort(s)
	return s
}

// Quantile returns the p-quantile of the sorted samples s by linear
// interpolation between order statistics (Hyndman & Fan 1996, definition 7).
// It returns NaN when s is empty or p lies outside [0, 1].
func Quantile(s []float64, p float64) float64 {
	n := len(s)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	h := float64(n-1) * p
	j := int(math.Floor(h))
	if j >= n-1 {
		return s[n-1]
	}
	return s[j] + (h-float64(j))*(s[j+1]-s[j])
}

// EqualTailed returns the central interval holding mass p of the sorted
// samples s, with (1-p)/2 of the mass beyond each end.
func EqualTailed(s []float64, p float64) (Interval, error) {
	if len(s) == 0 {
		return Interval{math.NaN(), math.NaN()}, errNoSamples
	}
	if !(p > 0 && p < 1) {
		return Interval{math.NaN(), math.NaN()}, fmt.Errorf("%w, got %g", errMass, p)
	}
	a := (1 - p) / 2
	return Interval{Quantile(s, a), Quantile(s, 1-a)}, nil
}

// HDI returns the highest-density interval of mass p of the sorted samples s,
// found as the shortest interval [s_i, s_(i+k)] with k = ceil(p n) - 1
// (Chen & Shao 1999). It is the highest-density interval when the marginal
// is unimodal.
func HDI(s []float64, p float64) (Interval, error) {
	n := len(s)
	if n == 0 {
		return Interval{math.NaN(), math.NaN()}, errNoSamples
	}
	if !(p > 0 && p < 1) {
		return Interval{math.NaN(), math.NaN()}, fmt.Errorf("%w, got %g", errMass, p)
	}
	k := int(math.Ceil(p*float64(n))) - 1
	if k < 0 {
		k = 0
	}
	if k >= n {
		k = n - 1
	}
	best, bi := math.Inf(1), 0
	for i := 0; i+k < n; i++ {
		if w := s[i+k] - s[i]; w < best {
			best, bi = w, i
		}
	}
	return Interval{s[bi], s[bi+k]}, nil
}
