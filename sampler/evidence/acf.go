package evidence

import (
	"math"

	fftacf "tautline/sampler/internal/acf"
)

// An acf computes integrated autocorrelation times from FFT
// autocovariances (package sampler/internal/acf), so that a series of n
// steps costs O(n log n) whatever its length. Its buffers are sized once
// for the longest series, so calls allocate nothing.
type acf struct {
	w   *fftacf.Work
	cov []float64 // autocovariance, lag t at cov[t]
}

// newACF returns an acf for series of up to n steps.
func newACF(n int) *acf {
	return &acf{w: fftacf.New(n), cov: make([]float64, n)}
}

// tau returns the integrated autocorrelation time of g with Sokal's
// automatic window, tau = 1 + 2 sum_{t=1}^{M} rho(t) (the first lag M with
// M >= sokalWindow tau), the autocovariances coming from an FFT, and
// whether the window closed before lag len(g)/2.
func (a *acf) tau(g []float64) (tau float64, ok bool) {
	n := len(g)
	if n < 2 {
		return 1, false
	}
	a.w.Autocov(g, a.cov[:n])
	c0 := a.cov[0]
	if !(c0 > 0) || math.IsInf(c0, 0) {
		return 1, true
	}
	tau = 1
	for t := 1; t < n/2; t++ {
		tau += 2 * a.cov[t] / c0
		if float64(t) >= sokalWindow*tau {
			return math.Max(tau, 1/float64(n)), true
		}
	}
	return math.Max(tau, 1/float64(n)), false
}
