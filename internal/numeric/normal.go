package numeric

import "math"

// NormCDF returns the standard normal distribution function
//
//	Phi(z) = erfc(-z / sqrt 2) / 2,
//
// which keeps full relative accuracy in the lower tail (z < 0), where
// 1 - Phi(-z) would cancel.
func NormCDF(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// NormQuantile returns the inverse of NormCDF,
//
//	Phi^-1(p) = -sqrt 2 erfcinv(2 p),
//
// for p in [0, 1]: -Inf at 0, +Inf at 1, NaN outside. The standard
// library computes erfcinv(x) as erfinv(1 - x), so the rounding of 1 - 2p
// limits the absolute accuracy to about 1e-16 / phi(z) (phi the normal
// density): 1e-13 at p = 1e-4, 3e-6 at p = 1e-12, and -Inf below p of
// about 1e-17. Callers here use it away from the far lower tail.
func NormQuantile(p float64) float64 { return -math.Sqrt2 * math.Erfcinv(2*p) }
