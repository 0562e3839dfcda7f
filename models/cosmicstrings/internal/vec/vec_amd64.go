//go:build !purego

package vec

import "golang.org/x/sys/cpu"

// sum8 runs Sum8's loop with AVX when the processor and the operating
// system support it (x/sys/cpu checks both), else sum8Go.
func sum8(dst, src []float64, m, gs int, w *[8]float64, acc bool) {
	if !cpu.X86.HasAVX {
		sum8Go(dst, src, m, gs, w, acc)
		return
	}
	sum8AVX(&dst[0], len(dst), &src[0], 8*m, 8*gs, w, acc)
}

// sum4 runs Sum4's loop with AVX when it is there, else sum4Go.
func sum4(dst, src []float64, gs int, w *[4]float64) {
	if !cpu.X86.HasAVX {
		sum4Go(dst, src, gs, w)
		return
	}
	sum4AVX(&dst[0], len(dst), &src[0], 8*gs, w)
}

// cubics runs Cubics' loop with AVX when it is there, else cubicsGo.
func cubics[C ~[4]float64](dst []C, r []float64, shift float64) {
	if !cpu.X86.HasAVX {
		cubicsGo(dst, r, shift)
		return
	}
	cubicsAVX(&dst[0][0], &r[0], len(dst), shift)
}

// series runs Series2's (terms 2) or Series5's (terms 5) loop with AVX
// for the first len(xs) &^ 3 frequencies when AVX is there and returns how
// many it did, which the caller's scalar loop continues from.
func series[C ~[4]float64](dst, xs, invF []float64, cf *[Slots]C, c float64, a *[5]float64, terms int) int {
	n := len(xs) &^ 3
	if n == 0 || !cpu.X86.HasAVX {
		return 0
	}
	seriesAVX(&dst[0], &xs[0], &invF[0], n, &cf[0][0], c, a, terms)
	return n
}

// log1mxHead runs Run's loop with AVX2, four frequencies at a time, for
// as long as all four have x >= 2^-10 (and x < 1, which Run's caller
// ensures), and returns how many it did.
func log1mxHead(dst, invF []float64, c float64, tab *LogTable) int {
	n := len(invF) &^ 3
	if n == 0 || !cpu.X86.HasAVX2 {
		return 0
	}
	return log1mxAVX2(&dst[0], &invF[0], n, c, &tab[0][0])
}

// addClamped runs AddClamped's loop with AVX for the first len(xs) &^ 3
// frequencies when AVX is there and returns how many it did.
func addClamped[C ~[4]float64](dst, xs []float64, cf *[Slots]C, c float64, last int) int {
	n := len(xs) &^ 3
	if n == 0 || !cpu.X86.HasAVX {
		return 0
	}
	clampedAVX(&dst[0], &xs[0], n, &cf[0][0], c, last)
	return n
}

// sum8AVX is sum8Go with AVX: dst[j] for j < n (n > 0) from the rows at
// src + k m8 and src + gs8 + k m8 bytes (k < 4), each at least n long,
// and the weights w.
//
//go:noescape
func sum8AVX(dst *float64, n int, src *float64, m8, gs8 int, w *[8]float64, acc bool)

// sum4AVX is sum4Go with AVX: dst[j] for j < n (n > 0) from the rows at
// src + k gs8 bytes (k < 4).
//
//go:noescape
func sum4AVX(dst *float64, n int, src *float64, gs8 int, w *[4]float64)

// cubicsAVX is cubicsGo with AVX: n > 0 cubics, 4n values from dst, from
// the n + 3 values from r.
//
//go:noescape
func cubicsAVX(dst *float64, r *float64, n int, shift float64)

// seriesAVX is series' loop: n frequencies (a multiple of 4, > 0) from xs
// and invF into dst, with the table of Slots cubics at cf and the edge
// term's terms (2 or 5) coefficients a.
//
//go:noescape
func seriesAVX(dst, xs, invF *float64, n int, cf *float64, c float64, a *[5]float64, terms int)

// log1mxAVX2 is log1mxHead's loop over at most n (a multiple of 4, > 0)
// frequencies.
//
//go:noescape
func log1mxAVX2(dst, invF *float64, n int, c float64, tab *float64) int

// clampedAVX is addClamped's loop: n frequencies (a multiple of 4, > 0)
// from xs into dst, with the table of Slots cubics at cf.
//
//go:noescape
func clampedAVX(dst, xs *float64, n int, cf *float64, c float64, last int)
