package sampler

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// gaussTarget is a multivariate normal likelihood N(mu, cov) under a uniform
// box prior [lo, hi] wide enough (20 sigma) that the box's truncation is
// negligible.
type gaussTarget struct {
	mu, prec []float64 // prec is the d x d precision matrix, row-major
	lo, hi   []float64
	lnVol    float64
}

func newGaussTarget(t testing.TB, mu []float64, cov [][]float64) *gaussTarget {
	d := len(mu)
	c := mat.NewSymDense(d, nil)
	for i := range d {
		for j := range d {
			c.SetSym(i, j, cov[i][j])
		}
	}
	var chol mat.Cholesky
	if !chol.Factorize(c) {
		t.Fatalf("covariance not positive definite")
	}
	var p mat.SymDense
	if err := chol.InverseTo(&p); err != nil {
		t.Fatal(err)
	}
	g := &gaussTarget{mu: mu, prec: make([]float64, d*d), lo: make([]float64, d), hi: make([]float64, d)}
	for i := range d {
		for j := range d {
			g.prec[i*d+j] = p.At(i, j)
		}
		s := math.Sqrt(cov[i][i])
		g.lo[i], g.hi[i] = mu[i]-20*s, mu[i]+20*s
		g.lnVol += math.Log(g.hi[i] - g.lo[i])
	}
	return g
}

func (g *gaussTarget) Dim() int { return len(g.mu) }
func (g *gaussTarget) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = g.lo[i] + (g.hi[i]-g.lo[i])*r.Float64()
	}
}
func (g *gaussTarget) LogPrior(x []float64) float64 {
	for i, v := range x {
		if v < g.lo[i] || v > g.hi[i] {
			return math.Inf(-1)
		}
	}
	return -g.lnVol
}
func (g *gaussTarget) LogLike(x []float64) float64 {
	d := len(g.mu)
	q := 0.0
	for i := range d {
		di := x[i] - g.mu[i]
		s := 0.0
		for j := range d {
			s += g.prec[i*d+j] * (x[j] - g.mu[j])
		}
		q += di * s
	}
	return -0.5 * q
}

// funcTarget builds a Target from functions, for small test cases.
type funcTarget struct {
	dim   int
	draw  func(r *rand.Rand, x []float64)
	prior func(x []float64) float64
	like  func(x []float64) float64
}

func (f funcTarget) Dim() int                       { return f.dim }
func (f funcTarget) Draw(r *rand.Rand, x []float64) { f.draw(r, x) }
func (f funcTarget) LogPrior(x []float64) float64   { return f.prior(x) }
func (f funcTarget) LogLike(x []float64) float64    { return f.like(x) }
func boxDraw(lo, hi float64) func(*rand.Rand, []float64) {
	return func(r *rand.Rand, x []float64) {
		for i := range x {
			x[i] = lo + (hi-lo)*r.Float64()
		}
	}
}
func boxPrior(lo, hi float64) func([]float64) float64 {
	return func(x []float64) float64 {
		for _, v := range x {
			if v < lo || v > hi {
				return math.Inf(-1)
			}
		}
		return -float64(len(x)) * math.Log(hi-lo)
	}
}

// run steps a new ensemble n times and returns it.
func runSteps(t testing.TB, tg Target, cfg Config, n int) *Ensemble {
	t.Helper()
	e, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	for range n {
		if err := e.Step(); err != nil {
			t.Fatal(err)
		}
	}
	return e
}

// collect runs burn steps then keeps rung r's positions for n steps, laid
// out as History.Positions.
func collect(t testing.TB, tg Target, cfg Config, r, burn, n int) (pos []float64, e *Ensemble) {
	t.Helper()
	e = runSteps(t, tg, cfg, burn)
	pos = make([]float64, 0, n*cfg.Walkers*tg.Dim())
	for range n {
		if err := e.Step(); err != nil {
			t.Fatal(err)
		}
		pos = append(pos, e.Positions(r)...)
	}
	return pos, e
}

// param extracts parameter k from a positions chain into the diagnostic
// layout x[s*walkers+w].
func param(pos []float64, walkers, dim, k int) []float64 {
	x := make([]float64, len(pos)/dim)
	for i := range x {
		x[i] = pos[i*dim+k]
	}
	return x
}

// thin keeps every step-th step (all walkers) of x[s*walkers+w].
func thin(x []float64, walkers, every int) []float64 {
	var out []float64
	for s := 0; s*walkers < len(x); s += every {
		out = append(out, x[s*walkers:(s+1)*walkers]...)
	}
	return out
}

// maxTau returns the largest autocorrelation time over the parameters,
// failing the test if an estimate is unreliable.
func maxTau(t testing.TB, pos []float64, walkers, dim int) float64 {
	t.Helper()
	steps := len(pos) / (walkers * dim)
	m := 0.0
	for k := range dim {
		tau, err := AutocorrTime(param(pos, walkers, dim, k), steps, walkers)
		if err != nil {
			t.Fatalf("parameter %d: %v", k, err)
		}
		m = math.Max(m, tau)
	}
	return m
}

// ksPValue returns the asymptotic p-value of the one-sample
// Kolmogorov–Smirnov test of x against cdf, from the Kolmogorov
// distribution P(K > t) = 2 sum_{k>=1} (-1)^(k-1) exp(-2 k^2 t^2)
// (Kolmogorov 1933), with Stephens' (1970) finite-n correction
// t = D (sqrt(n) + 0.12 + 0.11/sqrt(n)).
func ksPValue(x []float64, cdf func(float64) float64) (d, p float64) {
	s := slices.Clone(x)
	slices.Sort(s)
	n := float64(len(s))
	for i, v := range s {
		f := cdf(v)
		d = math.Max(d, math.Max(float64(i+1)/n-f, f-float64(i)/n))
	}
	tt := d * (math.Sqrt(n) + 0.12 + 0.11/math.Sqrt(n))
	if tt < 0.2 {
		return d, 1
	}
	sum := 0.0
	for k := 1; k <= 100; k++ {
		sign := 1.0
		if k%2 == 0 {
			sign = -1
		}
		sum += sign * math.Exp(-2*float64(k*k)*tt*tt)
	}
	return d, math.Min(1, math.Max(0, 2*sum))
}

// ksAlpha is the significance level of every KS test: with fixed seeds the
// tests are deterministic, and 1e-3 keeps a correct sampler from failing
// by chance when a seed or the thinning changes.
const ksAlpha = 1e-3
