//go:build !purego && !amd64.v3

package scores

import "golang.org/x/sys/cpu"

// central4 writes the central scores of n ranks (n a multiple of 4, > 0)
// into dst, lane j of the t-th group of four being the rank whose
// numerator is rk - 3/8 with rk = rk0 + 4t + j, over den = S + 1/4; the
// constants are coef4's.
//
//go:noescape
func central4(dst *float64, n int, rk0, den float64, coef *[84]float64)

// coef4 holds the kernel's constants four times each (one per lane): the
// coefficients qsa (from index 0) and qsb (32), then 3/8 (64), 1/2 (68),
// 0.180625 (72) and 4 (76), and the lane offsets 0, 1, 2, 3 (80). It is
// never written after its initialisation.
var coef4 = func() (c [84]float64) {
	for k := range 8 {
		for j := range 4 {
			c[4*k+j] = qsa[k]
			c[32+4*k+j] = qsb[k]
		}
	}
	for j := range 4 {
		c[64+j], c[68+j], c[72+j], c[76+j], c[80+j] = 0.375, 0.5, 0.180625, 4, float64(j)
	}
	return c
}()

// fast reports whether centralScores has a vector kernel (AVX2).
func fast() bool { return cpu.X86.HasAVX2 }

// centralScores is centralGo with the AVX2 kernel, for len(dst) a
// positive multiple of 4.
func centralScores(dst []float64, i0, S int) {
	// The mid-rank of index i is i + 1, exactly: (i+i)/2 + 1 in floats.
	central4(&dst[0], len(dst), float64(i0+1), float64(S)+0.25, &coef4)
}
