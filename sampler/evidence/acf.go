package evidence

import (
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// An acf computes autocovariances by FFT, so that the autocorrelation time
// of a series of n steps costs O(n log n) whatever its length. Its buffers
// are sized once for the longest series, so calls allocate nothing.
type acf struct {
	fft  *fourier.FFT
	pad  []float64    // zero-padded, mean-subtracted series
	coef []complex128 // its spectrum
	cov  []float64    // unnormalised autocovariance, lag t at cov[t]
}

// newACF returns an acf for series of up to n steps. Padding to at least 2n
// turns the FFT's circular correlation into the linear one.
func newACF(n int) *acf {
	m := 1
	for m < 2*n {
		m *= 2
	}
	return &acf{
		fft:  fourier.NewFFT(m),
		pad:  make([]float64, m),
		coef: make([]complex128, m/2+1),
		cov:  make([]float64, m),
	}
}

// tau returns the integrated autocorrelation time of g with Sokal's
// automatic window, exactly as autocorrTime does lag by lag, and whether
// the window closed before lag len(g)/2.
func (a *acf) tau(g []float64) (tau float64, ok bool) {
	n := len(g)
	if n < 2 {
		return 1, false
	}
	var mean float64
	for _, v := range g {
		mean += v
	}
	mean /= float64(n)
	for i := range a.pad {
		a.pad[i] = 0
	}
	for i, v := range g {
		a.pad[i] = v - mean
	}
	a.fft.Coefficients(a.coef, a.pad)
	for i, c := range a.coef {
		a.coef[i] = complex(real(c)*real(c)+imag(c)*imag(c), 0)
	}
	a.fft.Sequence(a.cov, a.coef)
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
