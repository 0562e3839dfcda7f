package evidence

import (
	"math"
	"sort"
	"testing"
)

// TestAdviseLoop follows the advice as the command's error-target loop
// would, on the Gaussian box (closed-form evidence, see gaussBox), and
// checks that it reaches the target with the truth inside the reported
// total, starting once from a coarse ladder (discretisation-limited) and
// once from too few steps (Monte-Carlo-limited).
func TestAdviseLoop(t *testing.T) {
	tests := []struct {
		name          string
		K             int
		steps         int
		target        float64
		wantRungs     bool // the first advice must add rungs
		wantMoreSteps bool // the first advice must add steps
	}{
		{"coarse ladder", 4, 1000, 0.05, true, false},
		{"few steps", 20, 40, 0.01, false, true},
	}
	g := newGaussBox(2, 10)
	truth := g.lnZ()
	for i, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			betas := powerLadder(tc.K, 5)
			steps := tc.steps
			for iter := 0; ; iter++ {
				res, err := Integrate(g.draw(uint64(400+10*i+iter), betas, steps, 16, 0), Options{})
				if err != nil {
					t.Fatal(err)
				}
				adv := Advise(res, tc.target)
				t.Logf("iter %d: %d rungs x %d steps: lnZ %.4f (err %+.4f) mc %.4f disc %.4f -> %s",
					iter, len(betas), steps, res.TIHigher.LnZ, res.TIHigher.LnZ-truth, res.TIHigher.MCErr, res.TIHigher.DiscErr, adv.Reason)
				if iter == 0 {
					if got := len(adv.Insert) > 0; got != tc.wantRungs {
						t.Errorf("first advice inserts %d rungs, want rungs: %v", len(adv.Insert), tc.wantRungs)
					}
					if got := adv.StepsFactor > 1; got != tc.wantMoreSteps {
						t.Errorf("first advice steps factor %g, want more steps: %v", adv.StepsFactor, tc.wantMoreSteps)
					}
				}
				if adv.Done {
					// Reference: closed-form evidence; the reported total is an
					// error bar (Monte-Carlo part one sigma), so allow 3 of it.
					if d := math.Abs(res.TIHigher.LnZ - truth); d > 3*res.TIHigher.Total {
						t.Errorf("converged with |lnZ - truth| = %.4f > 3 x total %.4f", d, res.TIHigher.Total)
					}
					return
				}
				if iter == 6 {
					t.Fatalf("not converged after %d iterations", iter)
				}
				for _, b := range adv.Insert {
					if j := sort.SearchFloat64s(betas, b); j < len(betas) && betas[j] == b {
						t.Fatalf("advice inserts existing beta %g", b)
					}
				}
				betas = append(betas, adv.Insert...)
				sort.Float64s(betas)
				steps = int(math.Ceil(float64(steps) * adv.StepsFactor))
			}
		})
	}
}

// TestAdviseCases checks the bookkeeping of Advise on hand-made results.
func TestAdviseCases(t *testing.T) {
	mk := func(mc, disc float64) Result {
		ivs := []Interval{
			{Lo: 0, Hi: 0.01, DiscShare: disc * 0.01},
			{Lo: 0.01, Hi: 0.1, DiscShare: disc * 0.75}, // the bend: largest share
			{Lo: 0.1, Hi: 1, DiscShare: disc * 0.24},
		}
		return Result{TIHigher: Estimate{MCErr: mc, DiscErr: disc, Total: mc + disc}, Intervals: ivs}
	}
	t.Run("done", func(t *testing.T) {
		a := Advise(mk(0.01, 0.01), 0.05)
		if !a.Done || a.StepsFactor != 1 || len(a.Insert) != 0 {
			t.Errorf("got %+v, want done", a)
		}
	})
	t.Run("monte carlo", func(t *testing.T) {
		// MC 0.2, disc 0: (0.2 / 0.1)^2 = 4 more steps, nothing inserted.
		a := Advise(mk(0.2, 0), 0.1)
		if a.Done || a.StepsFactor != 4 || len(a.Insert) != 0 {
			t.Errorf("got %+v, want 4x steps only", a)
		}
	})
	t.Run("discretisation", func(t *testing.T) {
		// Disc 0.4 with budget 0.1 - 0.001: the bend holds 3/4 of it and is
		// split first, at the geometric mean of 0.01 and 0.1.
		a := Advise(mk(0.001, 0.4), 0.1)
		if a.Done || len(a.Insert) == 0 || a.StepsFactor != 1 {
			t.Fatalf("got %+v, want rungs only", a)
		}
		if a.Hotspots[0].Lo != 0.01 || a.Hotspots[0].Hi != 0.1 {
			t.Errorf("worst interval %+v, want [0.01, 0.1]", a.Hotspots[0])
		}
		found := false
		for _, b := range a.Insert {
			found = found || math.Abs(b-math.Sqrt(0.001)) < 1e-15
		}
		if !found {
			t.Errorf("insertions %v lack sqrt(0.01*0.1)", a.Insert)
		}
		if !sort.Float64sAreSorted(a.Insert) {
			t.Errorf("insertions %v not sorted", a.Insert)
		}
	})
	t.Run("noise", func(t *testing.T) {
		// Disc 0.05 within 2 of its noise 0.03: steps only, by
		// (total / target)^2 = (0.1 / 0.05)^2 = 4.
		r := mk(0.05, 0.05)
		r.TIHigher.DiscNoise = 0.03
		a := Advise(r, 0.05)
		if a.Done || len(a.Insert) != 0 || a.StepsFactor != 4 {
			t.Errorf("got %+v, want 4x steps only", a)
		}
	})
	t.Run("bad target", func(t *testing.T) {
		for _, tg := range []float64{0, -1, math.NaN(), math.Inf(1)} {
			if a := Advise(mk(1, 1), tg); a.Done || len(a.Insert) != 0 {
				t.Errorf("target %g: got %+v", tg, a)
			}
		}
	})
}
