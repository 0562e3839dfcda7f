package stats

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"tautline/internal/numeric"
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
// interpolation between order statistics (Hyndman & Fan 1996, definition
// 7), the one sample-quantile definition of tautline (numeric.Quantile).
// It returns NaN when s is empty or p lies outside [0, 1].
func Quantile(s []float64, p float64) float64 { return numeric.Quantile(s, p) }

// The probability levels of the intervals tautline reports (docs/physics.md
// section 8): "68 %" runs from the Phi(-1) to the Phi(1) quantile (mass
// Mass68 = erf(1/sqrt 2) = 0.6827), "95 %" from the 0.025 to the 0.975
// quantile (mass Mass95 = 0.95).
const (
	P68Lo, P68Hi, Mass68 = numeric.P68Lo, numeric.P68Hi, numeric.Mass68
	P95Lo, P95Hi, Mass95 = numeric.P95Lo, numeric.P95Hi, numeric.Mass95
)

// Central68 and Central95 return the "68 %" and "95 %" intervals of the
// sorted samples s: [Q(P68Lo), Q(P68Hi)] and [Q(P95Lo), Q(P95Hi)].
func Central68(s []float64) Interval { return Interval{Quantile(s, P68Lo), Quantile(s, P68Hi)} }

// Central95 is Central68 for "95 %".
func Central95(s []float64) Interval { return Interval{Quantile(s, P95Lo), Quantile(s, P95Hi)} }

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
