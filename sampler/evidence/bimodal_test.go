package evidence

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// bimodal is a 2-D likelihood with no product form: a mixture of an
// elongated Gaussian and a correlated one, in the uniform prior [-6, 6]^2.
// Its power posteriors are sampled exactly by rejection from the prior with
// acceptance (L/Lmax)^beta, Lmax bounding L by the sum of the modes' peaks.
type bimodal struct{}

const bimodalHalf = 6

func (bimodal) like(x, y float64) float64 {
	// Mode 1: weight 0.7 at (-2, 1), sds 0.5 and 1.
	a := (x + 2) / 0.5
	b := y - 1
	m1 := 0.7 * math.Exp(-(a*a+b*b)/2) / (2 * math.Pi * 0.5)
	// Mode 2: weight 0.3 at (3, -2), unit sds, correlation 0.6.
	const rho = 0.6
	u, v := x-3, y+2
	q := (u*u - 2*rho*u*v + v*v) / (1 - rho*rho)
	m2 := 0.3 * math.Exp(-q/2) / (2 * math.Pi * math.Sqrt(1-rho*rho))
	return m1 + m2
}

func (bimodal) lmax() float64 {
	return 0.7/(2*math.Pi*0.5) + 0.3/(2*math.Pi*math.Sqrt(1-0.36))
}

// lnZ integrates L over the box by nested Gauss-Legendre quadrature (gonum
// quad.Fixed), doubling the order until two orders agree to 1e-12.
func (g bimodal) lnZ(t *testing.T) float64 {
	integral := func(n int) float64 {
		return quad.Fixed(func(x float64) float64 {
			return quad.Fixed(func(y float64) float64 { return g.like(x, y) }, -bimodalHalf, bimodalHalf, n, quad.Legendre{}, 0)
		}, -bimodalHalf, bimodalHalf, n, quad.Legendre{}, 0)
	}
	prev := integral(16)
	for n := 32; n <= 1024; n *= 2 {
		cur := integral(n)
		if math.Abs(cur-prev) < 1e-12*cur {
			return math.Log(cur / (2 * bimodalHalf * 2 * bimodalHalf))
		}
		prev = cur
	}
	t.Fatal("nested Gauss-Legendre did not converge")
	return 0
}

func (g bimodal) draw(seed uint64, betas []float64, steps, walkers int) []Rung {
	lmax := g.lmax()
	rungs := make([]Rung, len(betas))
	for k, beta := range betas {
		r := rand.New(rand.NewPCG(seed, uint64(k)))
		lnL := make([]float64, steps*walkers)
		for i := range lnL {
			for {
				x := bimodalHalf * (2*r.Float64() - 1)
				y := bimodalHalf * (2*r.Float64() - 1)
				l := g.like(x, y)
				if r.Float64() < math.Pow(l/lmax, beta) {
					lnL[i] = math.Log(l)
					break
				}
			}
		}
		rungs[k] = Rung{Beta: beta, LnL: lnL, Steps: steps, Walkers: walkers}
	}
	return rungs
}

// TestBimodalQuadrature checks TI and stepping-stone on a likelihood without
// closed-form evidence against nested Gauss-Legendre quadrature over the
// prior box (docs/physics.md section 7; gonum integrate/quad).
func TestBimodalQuadrature(t *testing.T) {
	var g bimodal
	truth := g.lnZ(t)
	res, err := Integrate(g.draw(700, powerLadder(20, 5), 1000, 16), Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range []struct {
		name string
		est  Estimate
	}{{"TI", res.TI}, {"TIHigher", res.TIHigher}, {"SS", res.SS}} {
		t.Logf("%-8s lnZ %.4f truth %.4f err %+.4f | mc %.4f disc %.4f total %.4f",
			e.name, e.est.LnZ, truth, e.est.LnZ-truth, e.est.MCErr, e.est.DiscErr, e.est.Total)
		// Three reported total errors, as for the Gaussian box.
		if d := math.Abs(e.est.LnZ - truth); d > 3*e.est.Total {
			t.Errorf("%s: |lnZ - truth| = %.4f exceeds 3 x total %.4f", e.name, d, e.est.Total)
		}
	}
	if res.Disagree {
		t.Errorf("TI and SS disagree at %.2f sigma on exact samples", res.DisagreeSigma)
	}
}
