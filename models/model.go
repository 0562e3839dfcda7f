// Package models defines what a gravitational-wave background model is to
// tautline: a named list of parameters and a way to compute ln Omega_GW at a
// fixed set of frequencies.
//
// The concrete models live in sub-packages: binaries (the SMBHB power law),
// strings (the cosmic-string loop network) and their sum (Sum, in this
// package). Optional behaviour is an interface a model may also implement:
// Bounded for a model valid inside a box of parameters. Nothing here knows
// about sampling.
package models

import "tautline/priors"

// A Param describes one model parameter.
type Param struct {
	// Name identifies the parameter in configuration files, flags and chain
	// columns, e.g. "log10_Gmu".
	Name string
	// Label is a LaTeX label for tables and figures, e.g. `\log_{10} G\mu`.
	Label string
	// Unit is the parameter's unit; empty when dimensionless.
	Unit string
	// Doc is a one-line description.
	Doc string
	// Prior is the default prior.
	Prior priors.Prior
}

// A Model is a family of gravitational-wave background spectra.
type Model interface {
	// Name is the model's identifier on the command line, e.g. "smbhb".
	Name() string
	// Params lists the parameters, in the order LnOmega takes them.
	Params() []Param
	// At prepares evaluation at the frequencies f (Hz, increasing, > 0).
	// Each call returns an independent Spectrum, so that concurrent users
	// call At once each.
	At(f []float64) (Spectrum, error)
}

// Bounded is implemented by a model that is valid only inside a box of
// parameter values, a tabulated spectrum say. Domain returns [lo, hi] for
// each parameter in Params order (infinite ends where unbounded). Its
// consumers: Sum concatenates the parts' domains, and the likelihood's
// posterior refuses priors reaching outside it, since the posterior would
// otherwise be cut off at the box without a word and its evidence
// normalised wrongly. A model without the method accepts every value (its
// Spectrum may still reject a point with an error).
type Bounded interface {
	Domain() [][2]float64
}

// A Spectrum evaluates one model at fixed frequencies. It is used by one
// goroutine at a time; call Model.At again for another.
type Spectrum interface {
	// LnOmega writes ln Omega_GW(f_i; theta) into out, which has one entry
	// per frequency given to At. theta holds every parameter of the model
	// in Params order. It must not allocate. It returns an error (a
	// preallocated value) when theta lies outside the model's domain, for
	// example outside a tabulated range.
	LnOmega(theta, out []float64) error
}
