// Package scores computes the normal scores of untied ranks,
//
//	z_i = Phi^-1((i + 1 - 3/8) / (S + 1/4)),  i = 0, ..., S-1,
//
// the rank normalisation of Vehtari et al. (2021), eq. 14, equal to the bit
// to gonum's distuv.UnitNormal.Quantile of the same argument (Wichura's
// algorithm AS 241, 1988). Where the CPU allows, the central region
// (|p - 1/2| <= 0.425, about 85 % of the ranks), whose rational
// approximation needs no logarithm, is evaluated four ranks at a time with
// the same operations in the same order, each rounded as the scalar code
// rounds it (no fused multiply-add); the tails are gonum's.
package scores

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Of returns z_i of S ranks for rank index i (0-based), computed exactly
// as the table Fill writes.
func Of(i, S int) float64 {
	return distuv.UnitNormal.Quantile(prob(i, S))
}

// prob is the argument of Phi^-1 for rank index i of S, as the scalar
// code computes it: the mid-rank (i+i)/2 + 1, less 3/8, over S + 1/4.
func prob(i, S int) float64 {
	rk := float64(i+i)/2 + 1
	return (rk - 0.375) / (float64(S) + 0.25)
}

// central reports whether AS 241 evaluates rank index i of S by its
// central rational approximation.
func central(i, S int) bool { return math.Abs(prob(i, S)-0.5) <= 0.425 }

// Fill sets dst[j] = z_{lo+j} of S ranks for j < len(dst); lo + len(dst)
// must not exceed S.
func Fill(dst []float64, lo, S int) {
	hi := lo + len(dst)
	// The central indices form one interval [c0, c1): p increases with i.
	c0, c1 := centralRange(S)
	c0, c1 = max(c0, lo), min(c1, hi)
	if c1-c0 < 4 || !fast() {
		c0, c1 = hi, hi
	}
	for i := lo; i < c0; i++ {
		dst[i-lo] = Of(i, S)
	}
	n := (c1 - c0) &^ 3
	if n > 0 {
		centralScores(dst[c0-lo:c0-lo+n], c0, S)
	}
	for i := c0 + n; i < hi; i++ {
		dst[i-lo] = Of(i, S)
	}
}

// centralRange returns the interval [c0, c1) of rank indices of S that
// are central (c0 = c1 if there are none).
func centralRange(S int) (c0, c1 int) {
	mid := S / 2 // p(mid) is within 1/(2S) of 1/2: central
	if S < 1 || !central(mid, S) {
		return 0, 0
	}
	// First central index: central is false below it, true from it on to
	// mid.
	lo, hi := 0, mid
	for lo < hi {
		m := int(uint(lo+hi) >> 1)
		if central(m, S) {
			hi = m
		} else {
			lo = m + 1
		}
	}
	c0 = lo
	lo, hi = mid, S
	for lo < hi {
		m := int(uint(lo+hi) >> 1)
		if central(m, S) {
			lo = m + 1
		} else {
			hi = m
		}
	}
	return c0, lo
}

// The coefficients of AS 241's central approximation, as gonum's mathext
// holds them (zQSA, zQSB), highest power first.
var (
	qsa = [8]float64{2509.0809287301226727, 33430.575583588128105, 67265.770927008700853, 45921.953931549871457, 13731.693765509461125, 1971.5909503065514427, 133.14166789178437745, 3.387132872796366608}
	qsb = [8]float64{5226.495278852854561, 28729.085735721942674, 39307.89580009271061, 21213.794301586595867, 5394.1960214247511077, 687.1870074920579083, 42.313330701600911252, 1.0}
)

// centralGo is the central approximation of rank indices i0, i0+1, ...
// into dst, in plain Go: the reference of the vector kernel, and the
// code the kernel's operations follow.
func centralGo(dst []float64, i0, S int) {
	for j := range dst {
		dp := prob(i0+j, S) - 0.5
		z := 0.180625 - dp*dp
		z1 := ((((((qsa[0]*z+qsa[1])*z+qsa[2])*z+qsa[3])*z+qsa[4])*z+qsa[5])*z+qsa[6])*z + qsa[7]
		z2 := ((((((qsb[0]*z+qsb[1])*z+qsb[2])*z+qsb[3])*z+qsb[4])*z+qsb[5])*z+qsb[6])*z + qsb[7]
		dst[j] = dp * z1 / z2
	}
}
