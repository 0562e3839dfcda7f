package acf

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestAgainstDirectSum compares the FFT autocovariance with the defining
// lag-by-lag sum (the formula in the package doc), to rounding.
func TestAgainstDirectSum(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	w := New(300)
	for _, n := range []int{1, 2, 7, 64, 300} {
		x := make([]float64, n)
		for i := range x {
			x[i] = r.NormFloat64() + 3
			if i > 0 {
				x[i] += 0.8 * x[i-1]
			}
		}
		got := make([]float64, n)
		m := w.Autocov(x, got)
		var mean float64
		for _, v := range x {
			mean += v
		}
		mean /= float64(n)
		if math.Abs(m-mean) > 1e-12*math.Abs(mean) {
			t.Errorf("n=%d: mean %g, want %g", n, m, mean)
		}
		for k := range n {
			var c float64
			for s := 0; s+k < n; s++ {
				c += (x[s] - mean) * (x[s+k] - mean)
			}
			c /= float64(n)
			// Tolerance: FFT rounding, a few ulps of C(0) times log2 of the length.
			if math.Abs(got[k]-c) > 1e-10*got[0] {
				t.Errorf("n=%d lag %d: %g, want %g", n, k, got[k], c)
			}
		}
	}
}

func TestAllocs(t *testing.T) {
	w := New(512)
	x, c := make([]float64, 512), make([]float64, 512)
	for i := range x {
		x[i] = float64(i % 7)
	}
	if a := testing.AllocsPerRun(20, func() { w.Autocov(x, c) }); a != 0 {
		t.Errorf("Autocov allocates %v times per call", a)
	}
}

// TestLagsAgainstDirectSum compares Lags, in both layouts, with the
// defining lag-by-lag sum, to rounding.
func TestLagsAgainstDirectSum(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	const m = 3
	for _, n := range []int{1, 5, 8, 9, 40} {
		c := make([]float64, n*m)
		for i := range c {
			c[i] = r.NormFloat64() + 2
		}
		inter := make([]float64, n*m)
		for j := range m {
			for s := range n {
				inter[s*m+j] = c[j*n+s]
			}
		}
		var a, b Lags
		a.LoadChains(c, n, m)
		b.LoadInterleaved(inter, n, m)
		ga, gb := make([]float64, m*LagBlock), make([]float64, m*LagBlock)
		for k0 := 0; k0 < n+LagBlock; k0 += LagBlock {
			a.Block(k0, ga)
			b.Block(k0, gb)
			for j := range m {
				x := c[j*n : (j+1)*n]
				mean := 0.0
				for _, v := range x {
					mean += v
				}
				mean /= float64(n)
				if a.Mean(j) != mean {
					t.Errorf("n=%d: mean %g, want %g", n, a.Mean(j), mean)
				}
				for i := range LagBlock {
					k := k0 + i
					want := 0.0
					for s := 0; s+k < n; s++ {
						want += (x[s] - mean) * (x[s+k] - mean)
					}
					want /= float64(n)
					// The same sum in the same order: equal to the bit.
					if ga[j*LagBlock+i] != want || gb[j*LagBlock+i] != want {
						t.Errorf("n=%d series %d lag %d: %g and %g, want %g", n, j, k, ga[j*LagBlock+i], gb[j*LagBlock+i], want)
					}
				}
			}
		}
	}
}

// TestSumsAgainstDirectSum compares Sums, over lag ranges that start and
// end anywhere (so that both its sixteen-lag kernel and its tail loop
// run), with the defining sum in the package doc accumulated in t order:
// the same operations in the same order, so equal to the bit.
func TestSumsAgainstDirectSum(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{1, 2, 15, 16, 17, 40, 129} {
		d := make([]float64, n)
		for i := range d {
			d[i] = r.NormFloat64()
		}
		for _, k0 := range []int{0, 1, 7, 16, n - 1, n, n + 3} {
			for _, l := range []int{1, 8, 16, 23, 40} {
				if k0 < 0 {
					continue
				}
				got := make([]float64, l)
				Sums(d, k0, got)
				for i, g := range got {
					k := k0 + i
					want := 0.0
					for s := 0; s+k < n; s++ {
						want += d[s] * d[s+k]
					}
					want /= float64(n)
					if g != want {
						t.Errorf("n=%d k0=%d len %d: lag %d = %v, want %v", n, k0, l, k, g, want)
					}
				}
			}
		}
	}
}

// TestFits checks that a Work is reused only for series it pads as New
// would.
func TestFits(t *testing.T) {
	var nilWork *Work
	w := New(300) // FFT length 1024
	for _, c := range []struct {
		w    *Work
		n    int
		want bool
	}{{nilWork, 10, false}, {w, 300, true}, {w, 257, true}, {w, 256, false}, {w, 301, false}} {
		if got := c.w.Fits(c.n); got != c.want {
			t.Errorf("Fits(%d) = %v, want %v", c.n, got, c.want)
		}
	}
}

// TestKernelsAgree checks every lag-sum kernel (the SSE2 and, where the
// CPU has it, AVX2 or AVX-512 assembly, as block32 picks it, and the
// pure-Go blocks; TestKernels32 takes each 32-lag kernel in turn) against the defining
// sum in the package doc accumulated in t order, to the bit, for series
// shorter and longer than a kernel's lags.
func TestKernelsAgree(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	for _, n := range []int{1, 16, 31, 32, 33, 47, 100, 1000} {
		d := make([]float64, n)
		for i := range d {
			d[i] = r.NormFloat64()
		}
		for _, k0 := range []int{0, 1, 15, 16, 31, 32, 40, n - 1, n} {
			if k0 < 0 {
				continue
			}
			b32, p32 := block32(d, k0), pair16(d, k0)
			b8a, b8b := block(d, k0), block(d, k0+LagBlock)
			b16 := block16(d, k0)
			for i := range 32 {
				k := k0 + i
				want := 0.0
				for s := 0; s+k < n; s++ {
					want += d[s] * d[s+k]
				}
				if b32[i] != want || p32[i] != want {
					t.Fatalf("n=%d k0=%d lag %d: block32 %v, pair16 %v, want %v", n, k0, k, b32[i], p32[i], want)
				}
				if i < 16 && b16[i] != want {
					t.Fatalf("n=%d k0=%d lag %d: block16 %v, want %v", n, k0, k, b16[i], want)
				}
				if i < LagBlock && (b8a[i] != want || b8b[i] != b16[i+LagBlock]) {
					t.Fatalf("n=%d k0=%d lag %d: block %v and %v, want %v and %v", n, k0, k, b8a[i], b8b[i], want, b16[i+LagBlock])
				}
			}
		}
	}
}

// TestTail checks tail, for block sizes that are and are not multiples of
// its four-lag groups and for every start of the tail, against the
// defining sum's terms from the tail's first step on, in t order after
// those before it, to the bit.
func TestTail(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	for _, n := range []int{1, 5, 40} {
		d := make([]float64, n)
		for i := range d {
			d[i] = r.NormFloat64()
		}
		for _, width := range []int{1, 3, 4, 5, 8, 9} {
			for k0 := 0; k0 <= n; k0++ {
				for full := 0; full <= n; full++ {
					got := make([]float64, width)
					want := make([]float64, width)
					for i := range got {
						got[i] = float64(i) + 0.5 // the sums so far
						want[i] = got[i]
						for s := full; s+k0+i < n; s++ {
							want[i] += d[s] * d[s+k0+i]
						}
					}
					tail(d, k0, full, got)
					for i := range got {
						if got[i] != want[i] {
							t.Fatalf("n=%d width %d k0=%d full=%d: lag %d = %v, want %v", n, width, k0, full, k0+i, got[i], want[i])
						}
					}
				}
			}
		}
	}
}
