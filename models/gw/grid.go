package gw

import "math"

// MaxLogFrequencies is the most frequencies a logarithmic grid of the
// command line may have: a million points resolve any spectrum far below
// the width of a bin, and keep the output under a hundred megabytes.
const MaxLogFrequencies = 1 << 20

// LogFrequencies returns n frequencies spaced evenly in log f from fmin to
// fmax inclusive, fmin * (fmax/fmin)^(i/(n-1)); n = 1 gives {fmin}. The
// caller checks 0 < fmin < fmax and n >= 1.
func LogFrequencies(fmin, fmax float64, n int) []float64 {
	fs := make([]float64, n)
	for i := range fs {
		if n == 1 {
			fs[i] = fmin
			break
		}
		fs[i] = fmin * math.Pow(fmax/fmin, float64(i)/float64(n-1))
	}
	return fs
}

// BinFrequencies returns the n Fourier frequencies f_i = i/span, i = 1..n,
// of a free spectrum over a time span in seconds (docs/physics.md
// section 5).
func BinFrequencies(n int, span float64) []float64 {
	fs := make([]float64, n)
	for i := range fs {
		fs[i] = float64(i+1) / span
	}
	return fs
}

// Forms returns the spectrum with ln Omega_GW = lnOmega at f in each of its
// descriptions: Omega_GW, h_c, S(f) in s^3 and log10 rho in s for an array
// of time span span (s); h0 in s^-1.
func Forms(f, lnOmega, h0, span float64) (omega, hc, psd, log10Rho float64) {
	omega = math.Exp(lnOmega)
	hc = HcFromOmega(f, omega, h0)
	return omega, hc, PSDFromHc(f, hc), Log10RhoFromLnOmega(f, lnOmega, h0, span)
}
