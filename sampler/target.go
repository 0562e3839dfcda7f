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

// A LogLikeMaker is a Target whose LogLike needs scratch memory of its own
// per goroutine (a model's spectrum buffers, say). The ensemble then asks
// it once, when it is built, for one evaluator per worker and calls each
// from one goroutine at a time, so the evaluators need no locks or pools
// and allocate nothing; an error (for example a model that cannot be
// evaluated at the data's frequencies) fails New or Restore instead of
// turning into -Inf later. Each evaluator must return what LogLike
// returns.
type LogLikeMaker interface {
	NewLogLike() (func(x []float64) float64, error)
}
