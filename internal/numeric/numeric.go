// Package numeric holds the small numerical routines several tautline
// packages share, each a textbook method with one definition here:
//
//   - Finite: x is neither NaN nor infinite;
//   - NormCDF and NormQuantile: the standard normal distribution function
//     Phi and its inverse, through the complementary error function
//     (Abramowitz & Stegun 26.2.29);
//   - Quantile: the sample quantile of Hyndman & Fan (1996), definition 7;
//   - Lagrange4 and Lagrange4Weights: 4-point (cubic) Lagrange
//     interpolation on uniform nodes (Abramowitz & Stegun 25.2.13);
//   - Bisect: root finding by interval halving.
//
// The functions allocate nothing and keep no state.
package numeric

import "math"

// LnSqrt2Pi is ln sqrt(2 pi), the log normalisation of the standard normal
// density.
const LnSqrt2Pi = 0.91893853320467274178032973640561763986139747

// Finite reports whether x is neither NaN nor an infinity.
func Finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
