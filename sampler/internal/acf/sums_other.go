//go:build !amd64 || purego

package acf

// wide reports whether block32 has a kernel of its own.
func wide() bool { return false }

// block16 returns the unnormalised sums sum_t d_t d_{t+k0+i}, i < 16,
// each accumulated in t order.
func block16(d []float64, k0 int) [16]float64 {
	var s [16]float64
	a, b := block(d, k0), block(d, k0+LagBlock)
	copy(s[:LagBlock], a[:])
	copy(s[LagBlock:], b[:])
	return s
}

// block32 is block16 for i < 32.
func block32(d []float64, k0 int) [32]float64 { return pair16(d, k0) }
