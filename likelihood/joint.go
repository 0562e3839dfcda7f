package likelihood

import (
	"errors"
	"fmt"
	"math/rand/v2"

	"tautline/models"
	"tautline/priors"
)

// A Part is one data set of a joint analysis with the likelihood tables
// built from it.
type Part struct {
	Data *Dataset
	FS   *FreeSpectrum
}

// Joint is the posterior of one model given several independent free
// spectra: the priors of the free parameters times the product of the
// data sets' free-spectrum likelihoods,
//
//	ln L(theta) = sum_d sum_{i in d} ln p_{d,i}(log10 rho_{d,i}(theta)),
//
// where each data set d has its own span T_d, bins f_{d,i} and prior range
// (so its own log10 rho offsets, docs/physics.md section 5). Treating the
// data sets as independent is the caller's claim: two analyses of
// overlapping data must not be combined this way. Joint has the method set
// of the sampler's Target and is safe for concurrent use.
type Joint struct {
	parts []*Posterior
}

// NewJoint builds the joint target of model m over the data sets in parts,
// with the priors pri (as for NewPosterior) and Hubble constant h0 in s^-1.
// It refuses an empty list and a data set given twice (same name, or same
// non-empty digest), which would count the same data twice.
func NewJoint(m models.Model, pri []priors.Prior, parts []Part, h0 float64) (*Joint, error) {
	if len(parts) == 0 {
		return nil, errors.New("likelihood: joint analysis needs at least one data set")
	}
	j := &Joint{parts: make([]*Posterior, len(parts))}
	for k, p := range parts {
		if p.Data == nil || p.FS == nil {
			return nil, fmt.Errorf("likelihood: joint analysis: data set %d: needs a data set and its free spectrum", k+1)
		}
		for q := range k {
			o := parts[q].Data
			if o.Name == p.Data.Name {
				return nil, fmt.Errorf("likelihood: joint analysis: data sets %d and %d are both named %q; give each data set once (and distinct names)", q+1, k+1, p.Data.Name)
			}
			if o.SHA256 != "" && o.SHA256 == p.Data.SHA256 {
				return nil, fmt.Errorf("likelihood: joint analysis: data sets %d (%q) and %d (%q) have the same digest %s; the same data would count twice", q+1, o.Name, k+1, p.Data.Name, o.SHA256)
			}
		}
		post, err := NewPosterior(m, pri, p.Data, p.FS, h0)
		if err != nil {
			return nil, fmt.Errorf("likelihood: joint analysis: data set %q: %w", p.Data.Name, err)
		}
		j.parts[k] = post
	}
	return j, nil
}

// Dim returns the number of sampled (non-fixed) parameters.
func (j *Joint) Dim() int { return j.parts[0].Dim() }

// Draw fills x with a draw from the priors of the free parameters.
func (j *Joint) Draw(r *rand.Rand, x []float64) { j.parts[0].Draw(r, x) }

// LogPrior returns the sum of the free parameters' log prior densities
// (the priors are shared, so counted once).
func (j *Joint) LogPrior(x []float64) float64 { return j.parts[0].LogPrior(x) }

// LogLike returns the sum over data sets of their free-spectrum log
// likelihoods, added in the order the data sets were given; -Inf when x is
// outside the model's domain or above a data set's prior range. It does not allocate in steady state.
func (j *Joint) LogLike(x []float64) float64 {
	s := 0.0
	for _, p := range j.parts {
		s += p.LogLike(x)
	}
	return s
}

// LogLikeExact is LogLike with every part's exact rule above its prior
// range (see Posterior.LogLikeExact); evidence calculations use it.
func (j *Joint) LogLikeExact(x []float64) float64 {
	s := 0.0
	for _, p := range j.parts {
		s += p.LogLikeExact(x)
	}
	return s
}

// NewLogLike returns an evaluator of LogLike with scratch of its own for
// every data set, for one goroutine at a time (sampler.LogLikeMaker).
func (j *Joint) NewLogLike() (func(x []float64) float64, error) {
	return j.newEval((*Posterior).NewLogLike)
}

// NewLogLikeExact is NewLogLike for LogLikeExact.
func (j *Joint) NewLogLikeExact() (func(x []float64) float64, error) {
	return j.newEval((*Posterior).NewLogLikeExact)
}

func (j *Joint) newEval(mk func(*Posterior) (func([]float64) float64, error)) (func(x []float64) float64, error) {
	fs := make([]func([]float64) float64, len(j.parts))
	for k, p := range j.parts {
		f, err := mk(p)
		if err != nil {
			return nil, err
		}
		fs[k] = f
	}
	return func(x []float64) float64 {
		s := 0.0
		for _, f := range fs {
			s += f(x)
		}
		return s
	}, nil
}

// Parts returns the per-data-set posteriors, in the order given, for
// per-data-set products (posterior-predictive spectra, say).
func (j *Joint) Parts() []*Posterior { return append([]*Posterior(nil), j.parts...) }

// FreeNames returns the names of the sampled parameters, in x order.
func (j *Joint) FreeNames() []string { return j.parts[0].FreeNames() }

// FreeParams returns the sampled parameters, in x order, with the priors in
// use.
func (j *Joint) FreeParams() []models.Param { return j.parts[0].FreeParams() }

// Params returns all model parameters with the priors in use.
func (j *Joint) Params() []models.Param { return j.parts[0].Params() }

// Full fills theta (one entry per model parameter) from the sampled x,
// inserting the fixed values.
func (j *Joint) Full(x []float64, theta []float64) { j.parts[0].Full(x, theta) }
