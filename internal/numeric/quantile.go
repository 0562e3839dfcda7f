package numeric

import "math"

// Quantile returns the p-quantile of the n values in sorted (ascending) by
// definition 7 of Hyndman & Fan (1996, Am. Stat. 50, 361), linear
// interpolation between order statistics with x[k] placed at probability
// k/(n-1):
//
//	h = (n - 1) p,  j = floor(h),
//	Q(p) = x[j] + (h - j) (x[j+1] - x[j])     (0-based x),
//
// with Q(0) = x[0] and Q(1) = x[n-1] exactly. It returns NaN when sorted is
// empty or p lies outside [0, 1] (or is NaN). The order of sorted is not
// checked.
func Quantile(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	h := p * float64(n-1)
	if h <= 0 {
		return sorted[0]
	}
	j := int(h) // h > 0, so int truncates to floor
	if j >= n-1 {
		return sorted[n-1]
	}
	return sorted[j] + (h-float64(j))*(sorted[j+1]-sorted[j])
}
