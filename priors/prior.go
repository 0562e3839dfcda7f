// Package priors provides the prior distributions tautline places on model
// parameters: each has a log density, a way to draw from it, and bounds.
//
// The shapes are uniform, log-uniform, normal, truncated normal and fixed.
// Densities are normalised, so that evidences computed with them are
// absolute; a fixed prior is a point mass and takes no sampled dimension.
package priors

import "math/rand/v2"

// A Prior is a one-dimensional prior distribution.
type Prior interface {
	// LogProb returns the normalised log density at x; -Inf outside the
	// support.
	LogProb(x float64) float64
	// Rand draws one value using r.
	Rand(r *rand.Rand) float64
	// Bounds returns the support [lo, hi]; infinite where unbounded.
	Bounds() (lo, hi float64)
	// String returns the prior in the syntax Parse reads, e.g.
	// "uniform(-18, -11)".
	String() string
}

// PointMass is implemented by a prior that puts all its mass on one value,
// such as Fixed. A consumer that samples parameters holds such a parameter
// at FixedValue and gives it no sampled dimension.
type PointMass interface {
	FixedValue() float64
}
