//go:build !amd64 || purego

package acf

// block16 returns the unnormalised sums sum_t d_t d_{t+k0+i}, i < 16,
// each accumulated in t order.
func block16(d []float64, k0 int) [16]float64 {
	var s [16]float64
	a, b := block(d, k0), block(d, k0+LagBlock)
	copy(s[:LagBlock], a[:])
	copy(s[LagBlock:], b[:])
	return s
}
