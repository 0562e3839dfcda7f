package evidence

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestNewPriorMass checks ln p and its error against the binomial
// distribution of gonum (distuv.Binomial: Var(k) = M p (1 - p)) propagated
// to ln p by the delta method, sd(ln p) = sd(k) / (M p).
func TestNewPriorMass(t *testing.T) {
	for _, c := range []struct{ draws, inside int }{
		{100000, 100000}, {100000, 84000}, {20000, 3000}, {10, 1},
	} {
		pm, err := NewPriorMass(c.draws, c.inside)
		if err != nil {
			t.Fatal(err)
		}
		p := float64(c.inside) / float64(c.draws)
		b := distuv.Binomial{N: float64(c.draws), P: p}
		want := math.Sqrt(b.Variance()) / (float64(c.draws) * p)
		// Both are the same closed form: rounding only.
		if math.Abs(pm.LnP-math.Log(p)) > 1e-15 || math.Abs(pm.Err-want) > 1e-12*(want+1e-300) {
			t.Errorf("%d of %d: ln p %g ± %g, want %g ± %g", c.inside, c.draws, pm.LnP, pm.Err, math.Log(p), want)
		}
	}
	if _, err := NewPriorMass(1000, 0); !errors.Is(err, ErrNoPriorMass) {
		t.Errorf("0 of 1000: error %v, want ErrNoPriorMass", err)
	}
	for _, c := range [][2]int{{0, 0}, {10, 11}, {10, -1}} {
		if _, err := NewPriorMass(c[0], c[1]); err == nil {
			t.Errorf("%d of %d draws accepted", c[1], c[0])
		}
	}
}

// TestIntegratePriorMass checks that Options.PriorMass shifts every
// estimate by ln p and adds its error to each budget, and that Advise takes
// it off the target.
func TestIntegratePriorMass(t *testing.T) {
	rungs := newGaussBox(2, 5).draw(1, powerLadder(12, 5), 400, 16, 0.5)
	plain, err := Integrate(rungs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	pm, _ := NewPriorMass(20000, 5000)
	with, err := Integrate(rungs, Options{PriorMass: &pm})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		a, b Estimate
	}{{"TI", plain.TI, with.TI}, {"TIHigher", plain.TIHigher, with.TIHigher}, {"SS", plain.SS, with.SS}} {
		if math.Abs(c.b.LnZ-(c.a.LnZ+pm.LnP)) > 1e-12 || c.b.PriorMassErr != pm.Err || math.Abs(c.b.Total-(c.a.Total+pm.Err)) > 1e-12 {
			t.Errorf("%s: %+v with prior mass %+v, from %+v", c.name, c.b, pm, c.a)
		}
	}
	if with.PriorMass == nil || *with.PriorMass != pm || with.DisagreeSigma != plain.DisagreeSigma {
		t.Errorf("prior mass recorded %+v, disagreement %g vs %g", with.PriorMass, with.DisagreeSigma, plain.DisagreeSigma)
	}
	if a := Advise(with, pm.Err/2); a.Done || a.StepsFactor != 1 || len(a.Insert) != 0 {
		t.Errorf("a target below the prior-mass error: %+v, want no steps or rungs", a)
	}
}
