package compare

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// cutGauss is a one-dimensional target with part of its prior at zero
// likelihood: prior uniform on [-a, a], likelihood N(x; 0, sigma) for
// x <= c and exactly zero above c. Its evidence is, with Phi the normal
// distribution function (gonum distuv.UnitNormal),
//
//	Z = (Phi(c/sigma) - Phi(-a/sigma)) / (2a),
//
// and the prior mass of the non-zero region is (c + a) / (2a).
type cutGauss struct{ a, sigma, c float64 }

func (g cutGauss) Dim() int                       { return 1 }
func (g cutGauss) Draw(r *rand.Rand, x []float64) { x[0] = g.a * (2*r.Float64() - 1) }
func (g cutGauss) LogPrior(x []float64) float64 {
	if math.Abs(x[0]) > g.a {
		return math.Inf(-1)
	}
	return -math.Log(2 * g.a)
}
func (g cutGauss) LogLike(x []float64) float64 {
	if x[0] > g.c {
		return math.Inf(-1)
	}
	z := x[0] / g.sigma
	return -0.5*z*z - math.Log(g.sigma*math.Sqrt(2*math.Pi))
}

func (g cutGauss) lnZ() float64 {
	return math.Log((distuv.UnitNormal.CDF(g.c/g.sigma) - distuv.UnitNormal.CDF(-g.a/g.sigma)) / (2 * g.a))
}

// penalised is cutGauss whose LogLike has a finite stand-in above c, the
// way a likelihood.Posterior with a penalty has, and whose LogLikeExact is
// the exact rule.
type penalised struct {
	cutGauss
	penalty float64
}

func (g penalised) LogLike(x []float64) float64 {
	if x[0] > g.c {
		return g.cutGauss.LogLike([]float64{g.c}) - g.penalty*(1+x[0]-g.c)
	}
	return g.cutGauss.LogLike(x)
}
func (g penalised) LogLikeExact(x []float64) float64 { return g.cutGauss.LogLike(x) }

// TestZeroLikelihoodRegion checks Z = P_prior(R) Z_R on cutGauss against its
// closed form: the prior mass within its stated error (4 sigma keeps the
// test from failing by chance), ln Z within its stated total error plus 1e-3
// and, through ExactLiker, a target with a finite penalty gives the same
// ln Z whatever the penalty.
func TestZeroLikelihoodRegion(t *testing.T) {
	base := cutGauss{a: 10, sigma: 1, c: -0.5} // half the likelihood's mass cut off
	s := DefaultSettings()
	s.Steps, s.Workers = 1500, 1
	run := func(tg Model) (lnZ, total float64, pm float64, pmErr float64) {
		s.Out = t.TempDir()
		p := Problem{DataName: "toy", DataSHA256: "0", Reference: tg.Name, ID: "toy", Models: []Model{tg}}
		res, err := Run(context.Background(), p, s)
		if err != nil {
			t.Fatal(err)
		}
		r := res.Rows[0]
		if r.PriorMass == nil {
			t.Fatal("no prior mass recorded")
		}
		return r.TI.LnZ, r.TI.Total, r.PriorMass.LnP, r.PriorMass.Err
	}
	lnZ, total, lnP, lnPErr := run(Model{Name: "cut", Target: base, Params: []string{"x"}, Priors: []string{"uniform(-10, 10)"}})
	wantP := math.Log((base.c + base.a) / (2 * base.a))
	if d := math.Abs(lnP - wantP); d > 4*lnPErr {
		t.Errorf("ln P(R) %.5f ± %.5f, closed form %.5f", lnP, lnPErr, wantP)
	}
	if d := math.Abs(lnZ - base.lnZ()); d > total+1e-3 {
		t.Errorf("ln Z %.4f ± %.4f, closed form %.4f", lnZ, total, base.lnZ())
	}
	for _, pen := range []float64{10, 1e5} {
		got, _, _, _ := run(Model{Name: "cut", Target: penalised{base, pen}, Params: []string{"x"}, Priors: []string{"uniform(-10, 10)"}})
		// The same samples: the penalty never enters.
		if got != lnZ {
			t.Errorf("penalty %g: ln Z %.6f, exact %.6f", pen, got, lnZ)
		}
	}
}

// TestNoPriorMass checks the refusal when no prior draw has a non-zero
// likelihood.
func TestNoPriorMass(t *testing.T) {
	s := DefaultSettings()
	s.Out, s.PriorDraws = t.TempDir(), 1000
	tg := cutGauss{a: 10, sigma: 1, c: -20}
	p := Problem{DataName: "toy", DataSHA256: "0", Reference: "none", ID: "toy",
		Models: []Model{{Name: "none", Target: tg, Params: []string{"x"}, Priors: []string{"uniform(-10, 10)"}}}}
	_, err := Run(context.Background(), p, s)
	if err == nil {
		t.Fatal("no error for a likelihood that is zero on every prior draw")
	}
	t.Log(err)
}
