package acf

import (
	"math"
	"math/cmplx"
)

// The real FFT of FFTPACK (Swarztrauber 1982) for lengths that are powers
// of 2, as gonum's dsp/fourier computes it: the factorisation, the
// twiddle factors and every arithmetic operation, in its order, are those
// of gonum's internal fftpack (adapted from gonum, BSD-style licence, see
// gonum's LICENSE), so that the transforms agree to the bit; only the
// indexing of the arrays differs (gonum's column-major array types are
// written out as offsets), which is what costs less.

// An rfft is the plan of the real FFT of one length n, a power of 2.
type rfft struct {
	n    int
	fac  []int     // the radices, in the order of the backward transform
	wa   []float64 // the twiddle factors
	work []float64 // n values of scratch
}

// newRFFT returns the plan for length n, a power of 2 (n >= 1).
func newRFFT(n int) *rfft {
	t := &rfft{n: n, wa: make([]float64, n), work: make([]float64, n)}
	if n == 1 {
		return t
	}
	// Factors of 4 first, then one of 2 if left, moved to the front (as
	// rffti1 orders them).
	for nl := n; nl > 1; {
		if nl%4 == 0 {
			t.fac = append(t.fac, 4)
			nl /= 4
			continue
		}
		t.fac = append([]int{2}, t.fac...)
		nl /= 2
	}
	nf := len(t.fac)
	if nf == 1 {
		return t
	}
	argh := 2 * math.Pi / float64(n)
	is := 0
	l1 := 1
	for k1 := 0; k1 < nf-1; k1++ {
		ip := t.fac[k1]
		ld := 0
		l2 := l1 * ip
		ido := n / l2
		for j := 0; j < ip-1; j++ {
			ld += l1
			i := is
			fi := 0.0
			argld := float64(ld) * argh
			for ii := 2; ii < ido; ii += 2 {
				fi++
				arg := fi * argld
				t.wa[i] = math.Cos(arg)
				t.wa[i+1] = math.Sin(arg)
				i += 2
			}
			is += ido
		}
		l1 = l2
	}
	return t
}

// forward replaces c (n values) by its Fourier coefficients in FFTPACK's
// packed order, as fftpack.Rfftf.
func (t *rfft) forward(c []float64) {
	n := t.n
	if n == 1 {
		return
	}
	c, ch, wa := c[:n], t.work[:n], t.wa
	nf := len(t.fac)
	na := true
	l2 := n
	iw := n - 1
	for k1 := 1; k1 <= nf; k1++ {
		kh := nf - k1
		ip := t.fac[kh]
		l1 := l2 / ip
		ido := n / l2
		iw -= (ip - 1) * ido
		na = !na
		switch ip {
		case 4:
			ix2 := iw + ido
			ix3 := ix2 + ido
			if na {
				radf4(ido, l1, ch, c, wa[iw:], wa[ix2:], wa[ix3:])
			} else {
				radf4(ido, l1, c, ch, wa[iw:], wa[ix2:], wa[ix3:])
			}
		case 2:
			if na {
				radf2(ido, l1, ch, c, wa[iw:])
			} else {
				radf2(ido, l1, c, ch, wa[iw:])
			}
		}
		l2 = l1
	}
	if na {
		return
	}
	copy(c, ch)
}

// backward is the inverse of forward times n, as fftpack.Rfftb.
func (t *rfft) backward(c []float64) {
	n := t.n
	if n == 1 {
		return
	}
	c, ch, wa := c[:n], t.work[:n], t.wa
	na := false
	l1 := 1
	iw := 0
	for _, ip := range t.fac {
		l2 := ip * l1
		ido := n / l2
		switch ip {
		case 4:
			ix2 := iw + ido
			ix3 := ix2 + ido
			if na {
				radb4(ido, l1, ch, c, wa[iw:], wa[ix2:], wa[ix3:])
			} else {
				radb4(ido, l1, c, ch, wa[iw:], wa[ix2:], wa[ix3:])
			}
		case 2:
			if na {
				radb2(ido, l1, ch, c, wa[iw:])
			} else {
				radb2(ido, l1, c, ch, wa[iw:])
			}
		}
		na = !na
		l1 = l2
		iw += (ip - 1) * ido
	}
	if na {
		copy(c, ch)
	}
}

func swap(c complex128) complex128 { return complex(imag(c), real(c)) }

// at2 is the complex number of the values at p and p+1.
func at2(a []float64, p int) complex128 { return complex(a[p], a[p+1]) }

// set2 stores v at p and p+1.
func set2(a []float64, p int, v complex128) { a[p], a[p+1] = real(v), imag(v) }

// radf2 is fftpack's radf2: cc is (ido, l1, 2), ch is (ido, 2, l1),
// column-major.
func radf2(ido, l1 int, cc, ch, wa1 []float64) {
	cs := ido * l1
	cc, ch = cc[:2*cs], ch[:2*cs]
	for k := 0; k < l1; k++ {
		a, b := cc[ido*k], cc[ido*k+cs]
		h := 2 * ido * k
		ch[h] = a + b
		ch[h+ido-1+ido] = a - b
	}
	if ido < 2 {
		return
	}
	if ido > 2 {
		idp2 := ido + 1
		for k := 0; k < l1; k++ {
			c0, c1, h0, h1 := ido*k, ido*k+cs, 2*ido*k, 2*ido*k+ido
			for i := 2; i < ido; i += 2 {
				ic := idp2 - (i + 1)
				t2 := complex(wa1[i-2], -wa1[i-1]) * at2(cc, i-1+c1)
				set2(ch, i-1+h0, at2(cc, i-1+c0)+t2)
				set2(ch, ic-1+h1, cmplx.Conj(at2(cc, i-1+c0))-cmplx.Conj(t2))
			}
		}
		if ido%2 == 1 {
			return
		}
	}
	for k := 0; k < l1; k++ {
		ch[2*ido*k+ido] = -cc[ido-1+ido*k+cs]
		ch[ido-1+2*ido*k] = cc[ido-1+ido*k]
	}
}

// radf4 is fftpack's radf4: cc is (ido, l1, 4), ch is (ido, 4, l1).
func radf4(ido, l1 int, cc, ch, wa1, wa2, wa3 []float64) {
	const hsqt2 = math.Sqrt2 / 2
	cs := ido * l1
	cc, ch = cc[:4*cs], ch[:4*cs]
	for k := 0; k < l1; k++ {
		c := ido * k
		h := 4 * ido * k
		tr1 := cc[c+cs] + cc[c+3*cs]
		tr2 := cc[c] + cc[c+2*cs]
		ch[h] = tr1 + tr2
		ch[h+ido-1+3*ido] = tr2 - tr1
		ch[h+ido-1+ido] = cc[c] - cc[c+2*cs]
		ch[h+2*ido] = cc[c+3*cs] - cc[c+cs]
	}
	if ido < 2 {
		return
	}
	if ido > 2 {
		idp2 := ido + 1
		for k := 0; k < l1; k++ {
			c := ido * k
			h := 4 * ido * k
			for i := 2; i < ido; i += 2 {
				ic := idp2 - (i + 1)
				c2 := complex(wa1[i-2], -wa1[i-1]) * at2(cc, i-1+c+cs)
				c3 := complex(wa2[i-2], -wa2[i-1]) * at2(cc, i-1+c+2*cs)
				c4 := complex(wa3[i-2], -wa3[i-1]) * at2(cc, i-1+c+3*cs)
				t1 := c2 + c4
				t2 := at2(cc, i-1+c) + c3
				t3 := at2(cc, i-1+c) - c3
				t4 := cmplx.Conj(c4 - c2)
				set2(ch, i-1+h, t1+t2)
				set2(ch, ic-1+h+3*ido, cmplx.Conj(t2-t1))
				set2(ch, i-1+h+2*ido, swap(t4)+t3)
				set2(ch, ic-1+h+ido, cmplx.Conj(t3-swap(t4)))
			}
		}
		if ido%2 == 1 {
			return
		}
	}
	for k := 0; k < l1; k++ {
		c := ido - 1 + ido*k
		h := 4 * ido * k
		ti1 := -hsqt2 * (cc[c+cs] + cc[c+3*cs])
		tr1 := hsqt2 * (cc[c+cs] - cc[c+3*cs])
		ch[h+ido-1] = tr1 + cc[c]
		ch[h+ido-1+2*ido] = cc[c] - tr1
		ch[h+ido] = ti1 - cc[c+2*cs]
		ch[h+3*ido] = ti1 + cc[c+2*cs]
	}
}

// radb2 is fftpack's radb2: cc is (ido, 2, l1), ch is (ido, l1, 2).
func radb2(ido, l1 int, cc, ch, wa1 []float64) {
	hs := ido * l1
	cc, ch = cc[:2*hs], ch[:2*hs]
	for k := 0; k < l1; k++ {
		c := 2 * ido * k
		a, b := cc[c], cc[c+ido-1+ido]
		ch[ido*k] = a + b
		ch[ido*k+hs] = a - b
	}
	if ido < 2 {
		return
	}
	if ido > 2 {
		idp2 := ido + 1
		for k := 0; k < l1; k++ {
			c0, c1, h0, h1 := 2*ido*k, 2*ido*k+ido, ido*k, ido*k+hs
			for i := 2; i < ido; i += 2 {
				ic := idp2 - (i + 1)
				set2(ch, i-1+h0, at2(cc, i-1+c0)+cmplx.Conj(at2(cc, ic-1+c1)))
				t2 := at2(cc, i-1+c0) - cmplx.Conj(at2(cc, ic-1+c1))
				set2(ch, i-1+h1, complex(wa1[i-2], wa1[i-1])*t2)
			}
		}
		if ido%2 == 1 {
			return
		}
	}
	for k := 0; k < l1; k++ {
		c := 2 * ido * k
		ch[ido-1+ido*k] = 2 * cc[ido-1+c]
		ch[ido-1+ido*k+hs] = -2 * cc[c+ido]
	}
}

// radb4 is fftpack's radb4: cc is (ido, 4, l1), ch is (ido, l1, 4).
func radb4(ido, l1 int, cc, ch, wa1, wa2, wa3 []float64) {
	hs := ido * l1
	cc, ch = cc[:4*hs], ch[:4*hs]
	for k := 0; k < l1; k++ {
		c := 4 * ido * k
		h := ido * k
		tr1 := cc[c] - cc[c+ido-1+3*ido]
		tr2 := cc[c] + cc[c+ido-1+3*ido]
		tr3 := cc[c+ido-1+ido] + cc[c+ido-1+ido]
		tr4 := cc[c+2*ido] + cc[c+2*ido]
		ch[h] = tr2 + tr3
		ch[h+hs] = tr1 - tr4
		ch[h+2*hs] = tr2 - tr3
		ch[h+3*hs] = tr1 + tr4
	}
	if ido < 2 {
		return
	}
	if ido > 2 {
		idp2 := ido + 1
		for k := 0; k < l1; k++ {
			c := 4 * ido * k
			h := ido * k
			for i := 2; i < ido; i += 2 {
				ic := idp2 - (i + 1)
				t1 := at2(cc, i-1+c) - cmplx.Conj(at2(cc, ic-1+c+3*ido))
				t2 := at2(cc, i-1+c) + cmplx.Conj(at2(cc, ic-1+c+3*ido))
				t3 := at2(cc, i-1+c+2*ido) + cmplx.Conj(at2(cc, ic-1+c+ido))
				t4 := swap(at2(cc, i-1+c+2*ido) - cmplx.Conj(at2(cc, ic-1+c+ido)))
				set2(ch, i-1+h, t2+t3)
				c2 := t1 - cmplx.Conj(t4)
				c3 := t2 - t3
				c4 := t1 + cmplx.Conj(t4)
				set2(ch, i-1+h+hs, complex(wa1[i-2], wa1[i-1])*c2)
				set2(ch, i-1+h+2*hs, complex(wa2[i-2], wa2[i-1])*c3)
				set2(ch, i-1+h+3*hs, complex(wa3[i-2], wa3[i-1])*c4)
			}
		}
		if ido%2 == 1 {
			return
		}
	}
	for k := 0; k < l1; k++ {
		c := 4 * ido * k
		h := ido - 1 + ido*k
		tr1 := cc[ido-1+c] - cc[ido-1+c+2*ido]
		ti1 := cc[c+ido] + cc[c+3*ido]
		tr2 := cc[ido-1+c] + cc[ido-1+c+2*ido]
		ti2 := cc[c+3*ido] - cc[c+ido]
		ch[h] = tr2 + tr2
		ch[h+hs] = math.Sqrt2 * (tr1 - ti1)
		ch[h+2*hs] = ti2 + ti2
		ch[h+3*hs] = -math.Sqrt2 * (tr1 + ti1)
	}
}
