package evidence

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"
)

// gaussBox is a Gaussian likelihood L(x) = prod_i N(x_i; mu_i, sigma^2) in
// the uniform prior box [lo, hi]^d. Its power posteriors factorise into
// normals of sd sigma/sqrt(beta) truncated to the box (the uniform prior at
// beta = 0), so they can be sampled exactly, and its evidence is
//
//	Z = prod_i [Phi((hi - mu_i)/sigma) - Phi((lo - mu_i)/sigma)] / (hi - lo).
type gaussBox struct {
	mu     []float64
	sigma  float64
	lo, hi float64
}

func newGaussBox(d int, half float64) gaussBox {
	g := gaussBox{mu: make([]float64, d), sigma: 1, lo: -half, hi: half}
	for i := range g.mu {
		// Off-centre means in [-1, 1], so the truncation is asymmetric.
		g.mu[i] = -1 + 2*float64(i)/math.Max(float64(d-1), 1)
	}
	return g
}

// lnZ is the closed-form log evidence, with gonum's normal CDF.
func (g gaussBox) lnZ() float64 {
	var s float64
	for _, m := range g.mu {
		p := distuv.UnitNormal.CDF((g.hi-m)/g.sigma) - distuv.UnitNormal.CDF((g.lo-m)/g.sigma)
		s += math.Log(p / (g.hi - g.lo))
	}
	return s
}

func (g gaussBox) lnL(x []float64) float64 {
	var s float64
	for i, m := range g.mu {
		d := (x[i] - m) / g.sigma
		s += -0.5*math.Log(2*math.Pi*g.sigma*g.sigma) - 0.5*d*d
	}
	return s
}

// quantile maps p in (0, 1) to the power posterior's coordinate i at beta.
func (g gaussBox) quantile(i int, beta, p float64) float64 {
	if beta == 0 {
		return g.lo + p*(g.hi-g.lo)
	}
	s := g.sigma / math.Sqrt(beta)
	pa := distuv.UnitNormal.CDF((g.lo - g.mu[i]) / s)
	pb := distuv.UnitNormal.CDF((g.hi - g.mu[i]) / s)
	q := pa + p*(pb-pa)
	q = math.Min(math.Max(q, 1e-300), 1-1e-16)
	return g.mu[i] + s*distuv.UnitNormal.Quantile(q)
}

// rung draws steps x walkers exact samples of ln L at beta. Each walker and
// coordinate follows a Gaussian-copula AR(1) chain z_t = phi z_{t-1} +
// sqrt(1 - phi^2) e_t mapped through Phi and the power posterior's quantile,
// so every sample has exactly the right law and phi sets the
// autocorrelation along steps (phi = 0: independent draws).
func (g gaussBox) rung(r *rand.Rand, beta float64, steps, walkers int, phi float64) Rung {
	d := len(g.mu)
	z := make([]float64, walkers*d)
	for i := range z {
		z[i] = r.NormFloat64()
	}
	x := make([]float64, d)
	lnL := make([]float64, steps*walkers)
	c := math.Sqrt(1 - phi*phi)
	for s := 0; s < steps; s++ {
		for w := 0; w < walkers; w++ {
			for i := 0; i < d; i++ {
				zi := &z[w*d+i]
				if s > 0 {
					*zi = phi**zi + c*r.NormFloat64()
				}
				x[i] = g.quantile(i, beta, distuv.UnitNormal.CDF(*zi))
			}
			lnL[s*walkers+w] = g.lnL(x)
		}
	}
	return Rung{Beta: beta, LnL: lnL, Steps: steps, Walkers: walkers}
}

// powerLadder returns beta_k = (k/K)^p, k = 0..K.
func powerLadder(K int, p float64) []float64 {
	b := make([]float64, K+1)
	for k := range b {
		b[k] = math.Pow(float64(k)/float64(K), p)
	}
	b[K] = 1
	return b
}

// draw samples every rung of the ladder with its own PCG stream.
func (g gaussBox) draw(seed uint64, betas []float64, steps, walkers int, phi float64) []Rung {
	rungs := make([]Rung, len(betas))
	for k, b := range betas {
		r := rand.New(rand.NewPCG(seed, uint64(k)))
		rungs[k] = g.rung(r, b, steps, walkers, phi)
	}
	return rungs
}

// drawCommon samples every rung from the same random stream (common random
// numbers), so that rung k and rung k+1 see strongly correlated draws, as
// parallel-tempering swaps correlate neighbouring rungs.
func (g gaussBox) drawCommon(seed uint64, betas []float64, steps, walkers int, phi float64) []Rung {
	rungs := make([]Rung, len(betas))
	for k, b := range betas {
		r := rand.New(rand.NewPCG(seed, 0))
		rungs[k] = g.rung(r, b, steps, walkers, phi)
	}
	return rungs
}
