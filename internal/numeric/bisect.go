package numeric

// Bisect returns a root of f, increasing on [lo, hi] with f(lo) < 0 <= f(hi),
// by interval halving: at most maxIter halvings, stopping once the bracket is
// narrower than tol; it returns the midpoint of the final bracket. The
// bracket is not checked: when f < 0 throughout, the result tends to hi,
// when f >= 0 throughout, to lo.
func Bisect(f func(float64) float64, lo, hi, tol float64, maxIter int) float64 {
	for range maxIter {
		m := 0.5 * (lo + hi)
		if f(m) < 0 {
			lo = m
		} else {
			hi = m
		}
		if hi-lo < tol {
			break
		}
	}
	return 0.5 * (lo + hi)
}
