//go:build !purego

package acf

// sums16 sets s[i] = sum_{t<n} d[t]*e[t+i] for i < 16, each accumulated
// in t order; n > 0, and d and e must hold n and n+15 values.
//
//go:noescape
func sums16(d, e *float64, n int, s *[16]float64)

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
	for t := full; t < n-k0; t++ {
		for i := range 16 {
			if t+k0+i < n {
				s[i] += d[t] * d[t+k0+i]
			}
		}
	}
	return s
}
