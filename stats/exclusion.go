package stats

import (
	"fmt"
	"math"
	"slices"
)

// An ExclusionPoint is a one-sided limit on y within one slice of x.
type ExclusionPoint struct {
	// X is the slice centre and Lo, Hi its edges.
	X, Lo, Hi float64
	// N is the number of samples in the slice.
	N int
	// Limit is the conditional quantile of y at the limit mass within the
	// slice; NaN when N is below the minimum.
	Limit float64
}

// MinSlice returns the default minimum number of samples for a slice limit
// of mass p: enough that ten samples are expected beyond the limit, so the
// quantile's binomial relative error is at most about 1/sqrt(10).
func MinSlice(p float64) int { return int(math.Ceil(10 / (1 - p))) }

// ExclusionCurve returns the conditional upper limit of mass p on y (for
// example log10 Gmu) as a function of x (for example log10 alpha): the
// sample pairs are split into slices of x between consecutive edges
// (increasing; a sample on an inner edge goes to the slice above it) and
// the p-quantile of y is taken within each slice from its samples. Slices
// with fewer than minSamples samples get a NaN limit; minSamples <= 0
// selects MinSlice(p).
func ExclusionCurve(x, y, edges []float64, p float64, minSamples int) ([]ExclusionPoint, error) {
	if len(x) != len(y) {
		return nil, fmt.Errorf("stats: exclusion: %d x samples but %d y samples", len(x), len(y))
	}
	if !(p > 0 && p < 1) {
		return nil, fmt.Errorf("stats: exclusion: %w, got %g", errMass, p)
	}
	if len(edges) < 2 {
		return nil, fmt.Errorf("stats: exclusion: need at least 2 slice edges, got %d", len(edges))
	}
	for i := 1; i < len(edges); i++ {
		if !(edges[i] > edges[i-1]) {
			return nil, fmt.Errorf("stats: exclusion: edges[%d] = %g not above edges[%d] = %g", i, edges[i], i-1, edges[i-1])
		}
	}
	if minSamples <= 0 {
		minSamples = MinSlice(p)
	}
	ns := len(edges) - 1
	bins := make([][]float64, ns)
	for i, u := range x {
		v := y[i]
		if math.IsNaN(u) || math.IsNaN(v) || math.IsInf(v, 0) || u < edges[0] || u > edges[ns] {
			continue
		}
		k, found := slices.BinarySearch(edges, u)
		if !found {
			k--
		}
		k = min(k, ns-1)
		bins[k] = append(bins[k], v)
	}
	out := make([]ExclusionPoint, ns)
	for k, b := range bins {
		pt := ExclusionPoint{X: (edges[k] + edges[k+1]) / 2, Lo: edges[k], Hi: edges[k+1], N: len(b), Limit: math.NaN()}
		if len(b) >= minSamples {
			slices.Sort(b)
			pt.Limit = Quantile(b, p)
		}
		out[k] = pt
	}
	return out, nil
}

// LinearEdges returns n+1 equally spaced edges from lo to hi.
func LinearEdges(lo, hi float64, n int) []float64 {
	if n < 1 {
		n = 1
	}
	return nodes(lo, hi, n+1)
}
