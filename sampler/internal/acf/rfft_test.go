package acf

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

// TestRFFTMatchesGonum checks the port of FFTPACK's real transforms
// against gonum's dsp/fourier (the implementation it follows), to the
// bit, for every power-of-2 length up to 2^16, forward (Coefficients) and
// backward (Sequence), on random data with zeros, as Work pads a series.
func TestRFFTMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	for n := 1; n <= 1<<16; n *= 2 {
		x := make([]float64, n)
		for i := range x[:(n+1)/2] {
			x[i] = r.NormFloat64() * 3
		}
		g := fourier.NewFFT(n)
		coeff := g.Coefficients(nil, x)
		p := newRFFT(n)
		got := append([]float64(nil), x...)
		p.forward(got)
		// FFTPACK's packed order, as Coefficients unpacks it.
		want := make([]float64, n)
		want[0] = real(coeff[0])
		if n > 1 {
			want[n-1] = real(coeff[len(coeff)-1])
			for i := 1; i < len(coeff)-1; i++ {
				want[2*i-1], want[2*i] = real(coeff[i]), imag(coeff[i])
			}
		}
		for i := range got {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Fatalf("n=%d forward[%d] = %v, want %v", n, i, got[i], want[i])
			}
		}
		// Backward from the same coefficients.
		back := g.Sequence(nil, coeff)
		p.backward(got)
		for i := range got {
			if math.Float64bits(got[i]) != math.Float64bits(back[i]) {
				t.Fatalf("n=%d backward[%d] = %v, want %v", n, i, got[i], back[i])
			}
		}
	}
}

// gonumAutocov is Work.Autocov as computed with gonum's dsp/fourier, the
// implementation before the port.
type gonumAutocov struct {
	fft   *fourier.FFT
	buf   []float64
	coeff []complex128
	out   []float64
}

func newGonumAutocov(n int) *gonumAutocov {
	m := padded(n)
	return &gonumAutocov{fft: fourier.NewFFT(m), buf: make([]float64, m), coeff: make([]complex128, m/2+1), out: make([]float64, m)}
}

func (a *gonumAutocov) autocov(series, acov []float64) {
	n := len(series)
	mean := 0.0
	for _, v := range series {
		mean += v
	}
	mean /= float64(n)
	clear(a.buf)
	for i, v := range series {
		a.buf[i] = v - mean
	}
	a.fft.Coefficients(a.coeff, a.buf)
	for i, c := range a.coeff {
		a.coeff[i] = complex(real(c)*real(c)+imag(c)*imag(c), 0)
	}
	a.fft.Sequence(a.out, a.coeff)
	scale := 1 / float64(len(a.buf)) / float64(n)
	for k := range n {
		acov[k] = a.out[k] * scale
	}
}

// TestAutocovMatchesGonum checks Work.Autocov against the same computation
// with gonum's dsp/fourier, to the bit, for series of many lengths.
func TestAutocovMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(23, 24))
	for _, n := range []int{1, 2, 3, 7, 64, 300, 513, 1000, 4097} {
		x := make([]float64, n)
		for i := range x {
			x[i] = r.NormFloat64() + 5
			if i > 0 {
				x[i] += 0.9 * x[i-1]
			}
		}
		got, want := make([]float64, n), make([]float64, n)
		New(n).Autocov(x, got)
		newGonumAutocov(n).autocov(x, want)
		for k := range got {
			if math.Float64bits(got[k]) != math.Float64bits(want[k]) {
				t.Fatalf("n=%d lag %d: %v, want %v", n, k, got[k], want[k])
			}
		}
	}
}

// BenchmarkAutocov compares Work.Autocov with the computation by gonum's
// dsp/fourier it replaced, for series of the lengths of a convergence
// check (padded to 2048 and 4096).
func BenchmarkAutocov(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{700, 1500} {
		x := make([]float64, n)
		for i := range x {
			x[i] = r.NormFloat64()
		}
		out := make([]float64, n)
		b.Run(fmt.Sprintf("n=%d/gonum", n), func(b *testing.B) {
			g := newGonumAutocov(n)
			for b.Loop() {
				g.autocov(x, out)
			}
		})
		b.Run(fmt.Sprintf("n=%d/port", n), func(b *testing.B) {
			w := New(n)
			for b.Loop() {
				w.Autocov(x, out)
			}
		})
	}
}
