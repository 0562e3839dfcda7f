package gw

import (
	"math"
	"testing"
)

// TestLogFrequencies: the grid has its ends exactly, a constant ratio
// between neighbours (the definition of logarithmic spacing), and n = 1
// gives fmin.
func TestLogFrequencies(t *testing.T) {
	for _, c := range []struct {
		fmin, fmax float64
		n          int
	}{{1e-9, 1e-7, 30}, {2e-9, 3e-8, 2}, {1e-9, 1e-7, 1}} {
		fs := LogFrequencies(c.fmin, c.fmax, c.n)
		if len(fs) != c.n || fs[0] != c.fmin {
			t.Fatalf("%+v: got %v", c, fs)
		}
		if c.n == 1 {
			continue
		}
		if math.Abs(fs[c.n-1]/c.fmax-1) > 1e-14 {
			t.Errorf("%+v: last %g, want %g", c, fs[c.n-1], c.fmax)
		}
		// The ratio is (fmax/fmin)^(1/(n-1)); 1e-13 allows for the rounding
		// of math.Pow over a few decades.
		want := math.Pow(c.fmax/c.fmin, 1/float64(c.n-1))
		for i := 1; i < c.n; i++ {
			if r := fs[i] / fs[i-1]; math.Abs(r/want-1) > 1e-13 {
				t.Errorf("%+v: ratio %d = %.15g, want %.15g", c, i, r, want)
			}
		}
	}
}

// TestBinFrequencies: f_i = i/T; for a span of one Julian year the first
// bin is f_yr.
func TestBinFrequencies(t *testing.T) {
	fs := BinFrequencies(3, JulianYear)
	if fs[0] != FYear || math.Abs(fs[2]/(3*FYear)-1) > 1e-15 {
		t.Errorf("got %v, want f_yr multiples", fs)
	}
}

// TestForms: the four descriptions agree with the package doc's relations,
// Omega = 2 pi^2 f^2 h_c^2 / (3 H0^2) and rho^2 = S / T, to rounding
// (1e-12 relative: a handful of operations on values of order 1e-30).
func TestForms(t *testing.T) {
	f, h0, span := 3e-9, H0SI(67.4), 15*JulianYear
	om, hc, psd, lr := Forms(f, math.Log(1e-9), h0, span)
	if math.Abs(om/1e-9-1) > 1e-12 {
		t.Errorf("omega %g, want 1e-9", om)
	}
	if want := 2 * math.Pi * math.Pi * f * f * hc * hc / (3 * h0 * h0); math.Abs(om/want-1) > 1e-12 {
		t.Errorf("omega %g, h_c gives %g", om, want)
	}
	if rho2 := math.Pow(10, 2*lr); math.Abs(rho2/(psd/span)-1) > 1e-12 {
		t.Errorf("rho^2 %g, S/T %g", rho2, psd/span)
	}
}
