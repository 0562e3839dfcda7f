// Package sampler explores posterior distributions with an affine-invariant
// ensemble sampler (Goodman & Weare 2010), optionally tempered, and reports
// how well it has converged.
package sampler

import "math/rand/v2"

// A Target is the distribution the sampler explores: a prior and a
// likelihood over Dim sampled dimensions. Tempered rungs sample
// prior * likelihood^beta. All methods must be safe for concurrent use.
type Target interface {
	// Dim is the number of sampled dimensions.
	Dim() int
	// Draw fills x with a draw from the prior, using only r.
	Draw(r *rand.Rand, x []float64)
	// LogPrior returns the log prior density at x; -Inf outside its
	// support, in which case LogLike is not called.
	LogPrior(x []float64) float64
	// LogLike returns the log likelihood at x. It may be very negative
	// but should be finite inside the prior support.
	LogLike(x []float64) float64
}
