package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// correlated draws n pairs from a bivariate normal with zero mean, standard
// deviations sx, sy and correlation rho; fold replaces x by |x|.
func correlated(src *rand.Rand, n int, sx, sy, rho float64, fold bool) (x, y []float64) {
	x, y = make([]float64, n), make([]float64, n)
	for i := range x {
		a, b := src.NormFloat64(), src.NormFloat64()
		x[i] = sx * a
		y[i] = sy * (rho*a + math.Sqrt(1-rho*rho)*b)
		if fold {
			x[i] = math.Abs(x[i])
		}
	}
	return x, y
}

func TestCredibleRegions2D(t *testing.T) {
	src := rand.New(rand.NewPCG(11, 12))
	inf := math.Inf(1)
	cases := []struct {
		name    string
		n       int
		fold    bool
		samples bool // SampleLevels instead of Levels
		bx      [2]float64
		masses  []float64
	}{
		// Levels: Scott's kernel inflates the covariance by 1 + n^(-1/3);
		// at n = 4e5 that moves the mass inside a level set by at most
		// 0.5 % (mass 1-(1-p)^(1+eps) for a Gaussian), leaving room
		// under the 1 % requirement for grid and Monte-Carlo error.
		{"open", 400000, false, false, [2]float64{-inf, inf}, []float64{0.68, 0.95}},
		{"open, 2-D sigma levels", 400000, false, false, [2]float64{-inf, inf}, []float64{Mass1Sigma2D, Mass2Sigma2D}},
		{"folded at x=0 (reflection)", 400000, true, false, [2]float64{0, inf}, []float64{0.68, 0.95}},
		// SampleLevels has no smoothing bias; at n = 4e4 the binomial
		// error of the enclosed fraction is 0.0023, so 1 % is 4 sigma.
		{"open, sample mass", 40000, false, true, [2]float64{-inf, inf}, []float64{0.68, 0.95}},
		{"folded, sample mass", 40000, true, true, [2]float64{0, inf}, []float64{0.68, 0.95}},
	}
	for _, c := range cases {
		x, y := correlated(src, c.n, 1, 2, 0.8, c.fold)
		d, err := KDE2D(x, y, c.bx, [2]float64{-inf, inf}, Options2D{})
		if err != nil {
			t.Fatal(err)
		}
		if c.fold && !d.Reflect[0][0] {
			t.Fatalf("%s: lower x edge not reflected", c.name)
		}
		levels := d.Levels
		if c.samples {
			levels = d.SampleLevels
		}
		lv, err := levels(c.masses)
		if err != nil {
			t.Fatal(err)
		}
		// Reference: fresh samples from the same distribution; the
		// binomial standard error of the fraction at n = 1e5 is < 0.0016.
		fx, fy := correlated(src, 100000, 1, 2, 0.8, c.fold)
		for k, m := range c.masses {
			in := 0
			for i := range fx {
				if d.At(fx[i], fy[i]) >= lv[k] {
					in++
				}
			}
			if got := float64(in) / float64(len(fx)); math.Abs(got-m) > 0.01 {
				t.Errorf("%s: level for %.3f encloses %.4f of fresh samples", c.name, m, got)
			}
		}
	}
}

func TestKDE2DErrors(t *testing.T) {
	inf := [2]float64{math.Inf(-1), math.Inf(1)}
	if _, err := KDE2D([]float64{1, 2}, []float64{1}, inf, inf, Options2D{}); err == nil {
		t.Error("length mismatch did not fail")
	}
	if _, err := KDE2D([]float64{1, 2, 3}, []float64{1, 2, 3}, [2]float64{5, 6}, inf, Options2D{}); err == nil {
		t.Error("all samples outside the bounds did not fail")
	}
	d, err := KDE2D([]float64{1, 1, 1, 1}, []float64{2, 2, 2, 2}, inf, inf, Options2D{GridPoints: 16})
	if err != nil {
		t.Fatalf("identical samples: %v", err)
	}
	if d.Rule != RuleFallback {
		t.Errorf("identical samples used rule %q", d.Rule)
	}
	if _, err := d.Levels([]float64{1.2}); err == nil {
		t.Error("mass 1.2 did not fail")
	}
}
