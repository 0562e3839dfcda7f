// Package acf computes the autocovariance of a series by FFT
// (Wiener–Khinchin theorem), the shared core of the integrated
// autocorrelation times of package sampler (convergence diagnostics) and
// package sampler/evidence (Monte-Carlo errors of the evidence):
//
//	C(k) = (1/n) sum_{t=0}^{n-1-k} (x_t - m)(x_{t+k} - m),  k = 0 .. n-1,
//
// computed from the zero-padded series, padding to at least 2n so that the
// FFT's circular correlation is the linear one. Cost O(n log n).
package acf

// Work holds the FFT plan and buffers for series of up to a fixed length,
// so that Autocov allocates nothing. A Work is not safe for concurrent use.
type Work struct {
	max int
	fft *rfft
	buf []float64
}

// New returns a Work for series of up to n values.
func New(n int) *Work {
	m := padded(n)
	return &Work{max: n, fft: newRFFT(m), buf: make([]float64, m)}
}

// padded is the FFT length of New(n): the least power of 2 >= 2n.
func padded(n int) int {
	m := 1
	for m < 2*n {
		m *= 2
	}
	return m
}

// Fits reports whether a (which may be nil) computes for series of n
// values exactly what New(n) would: it takes n values and pads them to the
// same FFT length.
func (a *Work) Fits(n int) bool {
	return a != nil && n <= a.max && len(a.buf) == padded(n)
}

// Autocov writes the biased autocovariance C(k) of series into
// acov[0:len(series)] and returns the series' mean. series must not be
// longer than the n given to New, nor acov shorter than series.
func (a *Work) Autocov(series, acov []float64) (mean float64) {
	for _, v := range series {
		mean += v
	}
	if len(series) > 0 {
		mean /= float64(len(series))
	}
	a.AutocovAbout(series, mean, acov)
	return mean
}

// AutocovAbout is Autocov with the deviations taken from the given centre
// instead of the series' own mean:
//
//	C(k) = (1/n) sum_{t=0}^{n-1-k} (x_t - c)(x_{t+k} - c).
//
// Several series of one ensemble centred at their common mean keep the
// differences between their means in C(k).
func (a *Work) AutocovAbout(series []float64, centre float64, acov []float64) {
	n := len(series)
	if n > a.max || len(acov) < n {
		panic("acf: series longer than the Work or acov too short")
	}
	if n == 0 {
		return
	}
	mean := centre
	buf := a.buf
	for i := range buf {
		buf[i] = 0
	}
	for i, v := range series {
		buf[i] = v - mean
	}
	// The power spectrum |c_k|^2 in FFTPACK's packed order, computed as
	// from the complex coefficients (re*re + im*im, the imaginary parts 0
	// at k = 0 and m/2), then transformed back.
	a.fft.forward(buf)
	m := len(buf)
	buf[0] = buf[0]*buf[0] + 0*0
	if m > 1 {
		buf[m-1] = buf[m-1]*buf[m-1] + 0*0
		for i := 1; 2*i < m; i++ {
			re, im := buf[2*i-1], buf[2*i]
			buf[2*i-1], buf[2*i] = re*re+im*im, 0
		}
	}
	a.fft.backward(buf)
	// The inverse transform is unnormalised: divide by the FFT length.
	scale := 1 / float64(m) / float64(n)
	for k := range n {
		acov[k] = buf[k] * scale
	}
}
