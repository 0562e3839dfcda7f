//go:build !purego

package acf

import "golang.org/x/sys/cpu"

// sums16 sets s[i] = sum_{t<n} d[t]*e[t+i] for i < 16, each accumulated
// in t order; n > 0, and d and e must hold n and n+15 values.
//
//go:noescape
func sums16(d, e *float64, n int, s *[16]float64)

// sums32avx2 is sums16 for i < 32 with AVX2, for n >= 16; e must hold
// n+31 values.
//
//go:noescape
func sums32avx2(d, e *float64, n int, s *[32]float64)

// sums32avx512 is sums32avx2 with AVX-512, for n >= 24; e must hold
// n+31 values. It takes about 0.8 of sums32avx2's time (BenchmarkKernels32):
// the same additions in the same order, in half as many instructions.
//
//go:noescape
func sums32avx512(d, e *float64, n int, s *[32]float64)

// wide reports whether block32 has a kernel of its own (AVX2), which
// computes 32 lags in about the time block16 takes for 16.
func wide() bool { return cpu.X86.HasAVX2 }

// block16 returns the unnormalised sums sum_t d_t d_{t+k0+i}, i < 16,
// each accumulated in t order.
func block16(d []float64, k0 int) [16]float64 {
	n := len(d)
	var s [16]float64
	if k0 >= n {
		return s
	}
	// t below full has every lag of the block inside the series.
	full := max(n-(k0+15), 0)
	if full > 0 {
		sums16(&d[0], &d[k0], full, &s)
	}
	tail(d, k0, full, s[:])
	return s
}

// block32 is block16 for i < 32.
func block32(d []float64, k0 int) [32]float64 {
	if !wide() {
		return pair16(d, k0)
	}
	n := len(d)
	var s [32]float64
	if k0 >= n {
		return s
	}
	full := max(n-(k0+31), 0)
	if full < 16 {
		return pair16(d, k0)
	}
	if full >= 24 && cpu.X86.HasAVX512F {
		sums32avx512(&d[0], &d[k0], full, &s)
	} else {
		sums32avx2(&d[0], &d[k0], full, &s)
	}
	tail(d, k0, full, s[:])
	return s
}
