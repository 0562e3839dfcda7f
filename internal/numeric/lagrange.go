package numeric

import "math"

// Lagrange4Weights returns the first node i and the weights w of the
// 4-point Lagrange interpolant through nodes i, i+1, i+2, i+3 of a table of
// n >= 4 values on uniform unit-spaced nodes 0, 1, ..., n-1, evaluated at the
// fractional index s (Abramowitz & Stegun 25.2.13): with u = s - i,
//
//	w0 = -(u-1)(u-2)(u-3)/6,  w1 = u(u-2)(u-3)/2,
//	w2 = -u(u-1)(u-3)/2,      w3 = u(u-1)(u-2)/6,
//
// so that the interpolated value is sum_k w[k] tab[i+k]. The stencil is
// centred on s (i = floor(s) - 1) and shifted inwards at the ends, where the
// cubic extrapolates for s outside [0, n-1]. The interpolant reproduces any
// cubic exactly.
func Lagrange4Weights(s float64, n int) (i int, w [4]float64) {
	i = min(max(int(math.Floor(s))-1, 0), n-4)
	u := s - float64(i)
	w[0] = -(u - 1) * (u - 2) * (u - 3) / 6
	w[1] = u * (u - 2) * (u - 3) / 2
	w[2] = -u * (u - 1) * (u - 3) / 2
	w[3] = u * (u - 1) * (u - 2) / 6
	return i, w
}

// Lagrange4 interpolates tab (n >= 4 values on unit-spaced nodes 0, 1, ...,
// n-1) at the fractional index s with the 4-point Lagrange cubic of
// Lagrange4Weights, clamped to tab[0] for s <= 0 and to tab[n-1] for
// s >= n-1. It multiplies each value into its weight factor by factor
// rather than forming the weights first, so its last bit can differ from
// the weighted sum.
func Lagrange4(tab []float64, s float64) float64 {
	n := len(tab)
	if s <= 0 {
		return tab[0]
	}
	if s >= float64(n-1) {
		return tab[n-1]
	}
	i := min(max(int(s)-1, 0), n-4)
	u := s - float64(i)
	p0, p1, p2, p3 := tab[i], tab[i+1], tab[i+2], tab[i+3]
	return -p0*(u-1)*(u-2)*(u-3)/6 + p1*u*(u-2)*(u-3)/2 - p2*u*(u-1)*(u-3)/2 + p3*u*(u-1)*(u-2)/6
}
