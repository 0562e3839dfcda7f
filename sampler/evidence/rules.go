package evidence

// trapezoidWeights fills w with the weights of the trapezoidal rule on the
// ladder betas, so that sum_k w[k] f(betas[k]) approximates the integral of
// f over [betas[0], betas[len-1]].
func trapezoidWeights(betas, w []float64) {
	n := len(betas)
	for k := range w {
		w[k] = 0
	}
	for k := 0; k+1 < n; k++ {
		h := betas[k+1] - betas[k]
		w[k] += h / 2
		w[k+1] += h / 2
	}
}

// correctionWeights fills u with the weights on Var_beta[ln L] of the
// derivative correction of Friel, Hurn & Wyse (2014): the trapezoid plus
//
//	-sum_k (h_k^2 / 12) (V_{k+1} - V_k),   h_k = beta_{k+1} - beta_k,
//
// which is the Euler-Maclaurin end correction applied interval by interval
// (cubic Hermite interpolation of E_beta[ln L] using dE/dbeta = V), exact
// for cubics.
func correctionWeights(betas, u []float64) {
	n := len(betas)
	for k := range u {
		u[k] = 0
	}
	for k := 0; k+1 < n; k++ {
		h := betas[k+1] - betas[k]
		c := h * h / 12
		u[k] += c
		u[k+1] -= c
	}
}

// dot returns sum_k a[k] b[k].
func dot(a, b []float64) float64 {
	var s float64
	for k := range a {
		s += a[k] * b[k]
	}
	return s
}
