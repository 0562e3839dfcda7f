package likelihood

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"tautline/models"
	"tautline/models/gw"
	"tautline/priors"
)

// Posterior is a model's posterior given a free spectrum: the priors of its
// free parameters times the free-spectrum likelihood. It has the method set
// of the sampler's Target and is safe for concurrent use.
//
// A theta outside the model's domain (Spectrum.LnOmega returns an error, for
// example outside a tabulated range) gets LogLike = -Inf: the sampler rejects
// such proposals, so the model's domain acts as a zero of the prior. Keep
// priors inside the domain so that Draw never lands outside it.
//
// A theta whose spectrum lies above the data's prior range of log10 rho in
// some bin has likelihood exactly zero (docs/physics.md section 5), so
// LogLike = -Inf there too. Draw still draws from the whole prior; the
// sampler redraws starting points until LogLike is finite, so walkers start
// in the region R where the likelihood is non-zero and never leave it. The
// evidence is then Z = P_prior(R) Z_R, with Z_R the evidence of the prior
// restricted to R (what tempered runs started in R estimate) and
// P_prior(R) estimated from prior draws (package compare).
type Posterior struct {
	model  models.Model
	params []models.Param // all, with the priors in use
	pri    []priors.Prior
	free   []int // indices into params of sampled parameters
	// lp holds, per free parameter, its prior's support and, for a
	// uniform prior, its constant log density, so that LogPrior calls no
	// math.Log for the commonest prior.
	lp    []freePrior
	fixed []float64 // full-length; fixed values, NaN for free ones
	freqs []float64
	c     []float64 // per-bin log10 rho offset: 0.5 log10(H0^2/(8 pi^4 f^5 T))
	fs    *FreeSpectrum
	// mu guards shared, the scratch of direct LogLike calls; samplers take
	// evaluators of their own (NewLogLike) and never wait on it.
	mu     sync.Mutex
	shared *scratch
}

// freePrior is a free parameter's prior as LogPrior reads it: for a
// priors.Uniform, uniform is set and c = -ln(Max - Min), the value its
// LogProb returns inside [lo, hi]; otherwise LogPrior calls pr.LogProb.
type freePrior struct {
	uniform bool
	lo, hi  float64
	c       float64
	pr      priors.Prior
}

type scratch struct {
	spec  models.Spectrum
	theta []float64
	lnO   []float64
	rho   []float64
}

// NewPosterior builds the target for model m with pri[j] the prior of
// m.Params()[j] (a nil pri, or a nil entry, selects the parameter's default
// prior), data ds tabulated as fs, and Hubble constant h0 in s^-1.
// Parameters whose prior is a priors.PointMass are held at its value and
// not sampled. When m is models.Bounded, every prior's Bounds must lie
// inside the model's Domain.
func NewPosterior(m models.Model, pri []priors.Prior, ds *Dataset, fs *FreeSpectrum, h0 float64) (*Posterior, error) {
	if m == nil || ds == nil || fs == nil {
		return nil, errors.New("likelihood: NewPosterior needs a model, a data set and its free spectrum")
	}
	if !(h0 > 0) || math.IsInf(h0, 0) {
		return nil, fmt.Errorf("likelihood: H0: must be finite and > 0 (s^-1), got %g", h0)
	}
	if fs.NumBins() != len(ds.Freqs) {
		return nil, fmt.Errorf("likelihood: free spectrum has %d bins but data set %q has %d", fs.NumBins(), ds.Name, len(ds.Freqs))
	}
	if !(ds.Span > 0) {
		return nil, fmt.Errorf("likelihood: data set %q: span must be > 0, got %g", ds.Name, ds.Span)
	}
	ps := m.Params()
	if pri != nil && len(pri) != len(ps) {
		return nil, fmt.Errorf("likelihood: model %s has %d parameters but %d priors were given", m.Name(), len(ps), len(pri))
	}
	p := &Posterior{
		model:  m,
		params: make([]models.Param, len(ps)),
		pri:    make([]priors.Prior, len(ps)),
		fixed:  make([]float64, len(ps)),
		freqs:  append([]float64(nil), ds.Freqs...),
		c:      make([]float64, len(ds.Freqs)),
		fs:     fs,
	}
	for j, par := range ps {
		pr := par.Prior
		if pri != nil && pri[j] != nil {
			pr = pri[j]
		}
		if pr == nil {
			return nil, fmt.Errorf("likelihood: model %s: parameter %s has no prior", m.Name(), par.Name)
		}
		par.Prior = pr
		p.params[j] = par
		p.pri[j] = pr
		if fx, ok := pr.(priors.PointMass); ok {
			p.fixed[j] = fx.FixedValue()
		} else {
			p.fixed[j] = math.NaN()
			p.free = append(p.free, j)
			fp := freePrior{pr: pr}
			if u, ok := pr.(priors.Uniform); ok {
				fp = freePrior{uniform: true, lo: u.Min, hi: u.Max, c: u.LogProb(u.Min), pr: pr}
			}
			p.lp = append(p.lp, fp)
		}
	}
	if d, ok := m.(models.Bounded); ok {
		dom := d.Domain()
		for j, par := range p.params {
			if j >= len(dom) {
				break
			}
			lo, hi := p.pri[j].Bounds()
			if lo < dom[j][0] || hi > dom[j][1] {
				return nil, fmt.Errorf("likelihood: model %s: prior %s of %s reaches outside the model's domain [%g, %g]; narrow the prior",
					m.Name(), p.pri[j], par.Name, dom[j][0], dom[j][1])
			}
		}
	}
	for i, f := range ds.Freqs {
		p.c[i] = gw.Log10RhoOffset(f, h0, ds.Span)
	}
	var err error
	if p.shared, err = p.newScratch(); err != nil {
		return nil, fmt.Errorf("likelihood: model %s: %w", m.Name(), err)
	}
	return p, nil
}

func (p *Posterior) newScratch() (*scratch, error) {
	spec, err := p.model.At(p.freqs)
	if err != nil {
		return nil, err
	}
	n := len(p.freqs)
	s := &scratch{spec: spec, theta: make([]float64, len(p.params)), lnO: make([]float64, n), rho: make([]float64, n)}
	copy(s.theta, p.fixed)
	return s, nil
}

// Dim returns the number of sampled (non-fixed) parameters.
func (p *Posterior) Dim() int { return len(p.free) }

// Draw fills x with a draw from the priors of the free parameters.
func (p *Posterior) Draw(r *rand.Rand, x []float64) {
	for k, j := range p.free {
		x[k] = p.pri[j].Rand(r)
	}
}

// LogPrior returns the sum of the free parameters' log prior densities.
func (p *Posterior) LogPrior(x []float64) float64 {
	if len(x) != len(p.free) {
		return math.Inf(-1)
	}
	// The same terms in the same order as a sum of LogProb calls, so the
	// same result to the bit.
	s := 0.0
	for k, fp := range p.lp {
		switch {
		case !fp.uniform:
			s += fp.pr.LogProb(x[k])
		case x[k] >= fp.lo && x[k] <= fp.hi:
			s += fp.c
		default:
			s += math.Inf(-1)
		}
	}
	return s
}

// LogLike returns the free-spectrum log likelihood of the free parameters
// x: -Inf outside the model's domain and where the model lies above the
// data's prior range in some bin (unless the free spectrum was built with
// a penalty, see Options.Penalty). It is safe for concurrent use but
// serialises callers on one scratch; a sampler takes one evaluator per
// goroutine instead (NewLogLike). It does not allocate.
func (p *Posterior) LogLike(x []float64) float64 {
	p.mu.Lock()
	defer p.mu.Unlock()
	return p.logLike(p.shared, x, false)
}

// LogLikeExact is LogLike with the exact rule above the prior range (-Inf)
// whatever penalty the free spectrum carries: evidence calculations use it
// (docs/physics.md section 7), so that ln Z depends on no tuning constant.
func (p *Posterior) LogLikeExact(x []float64) float64 {
	p.mu.Lock()
	defer p.mu.Unlock()
	return p.logLike(p.shared, x, true)
}

// NewLogLike returns an evaluator of LogLike with scratch of its own, for
// one goroutine at a time (sampler.LogLikeMaker); the model's At is called
// here, once, and its error returned.
func (p *Posterior) NewLogLike() (func(x []float64) float64, error) { return p.newEval(false) }

// NewLogLikeExact is NewLogLike for LogLikeExact.
func (p *Posterior) NewLogLikeExact() (func(x []float64) float64, error) { return p.newEval(true) }

func (p *Posterior) newEval(exact bool) (func(x []float64) float64, error) {
	s, err := p.newScratch()
	if err != nil {
		return nil, fmt.Errorf("likelihood: model %s: %w", p.model.Name(), err)
	}
	return func(x []float64) float64 { return p.logLike(s, x, exact) }, nil
}

func (p *Posterior) logLike(s *scratch, x []float64, exact bool) float64 {
	if len(x) != len(p.free) {
		return math.Inf(-1)
	}
	for k, j := range p.free {
		s.theta[j] = x[k]
	}
	if err := s.spec.LnOmega(s.theta, s.lnO); err != nil {
		return math.Inf(-1)
	}
	const half = 0.5 / math.Ln10
	for i, lo := range s.lnO {
		s.rho[i] = half*lo + p.c[i]
	}
	if exact {
		return p.fs.LogLikeExact(s.rho)
	}
	return p.fs.LogLike(s.rho)
}

// Log10Rho writes log10 rho_i(theta) (rho in s) at the data's bins into dst
// for the free parameters x and returns it; it returns an error outside the
// model's domain. It is meant for posterior-predictive products, not for
// hot loops.
func (p *Posterior) Log10Rho(x, dst []float64) ([]float64, error) {
	if len(x) != len(p.free) {
		return nil, fmt.Errorf("likelihood: %d free parameters, got %d values", len(p.free), len(x))
	}
	s, err := p.newScratch()
	if err != nil {
		return nil, err
	}
	for k, j := range p.free {
		s.theta[j] = x[k]
	}
	if err := s.spec.LnOmega(s.theta, s.lnO); err != nil {
		return nil, err
	}
	if len(dst) < len(s.lnO) {
		dst = make([]float64, len(s.lnO))
	}
	dst = dst[:len(s.lnO)]
	for i, lo := range s.lnO {
		dst[i] = 0.5*lo/math.Ln10 + p.c[i]
	}
	return dst, nil
}

// FreeNames returns the names of the sampled parameters, in x order.
func (p *Posterior) FreeNames() []string {
	out := make([]string, len(p.free))
	for k, j := range p.free {
		out[k] = p.params[j].Name
	}
	return out
}

// FreeParams returns the sampled parameters, in x order, with the priors in
// use.
func (p *Posterior) FreeParams() []models.Param {
	out := make([]models.Param, len(p.free))
	for k, j := range p.free {
		out[k] = p.params[j]
	}
	return out
}

// Params returns all model parameters with the priors in use.
func (p *Posterior) Params() []models.Param { return append([]models.Param(nil), p.params...) }

// Full fills theta (one entry per model parameter) from the sampled x,
// inserting the fixed values.
func (p *Posterior) Full(x []float64, theta []float64) {
	copy(theta, p.fixed)
	for k, j := range p.free {
		if k < len(x) && j < len(theta) {
			theta[j] = x[k]
		}
	}
}

// FreeSpectrum returns the likelihood tables in use.
func (p *Posterior) FreeSpectrum() *FreeSpectrum { return p.fs }
