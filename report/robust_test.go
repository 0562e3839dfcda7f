package report

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestDegenerateInputs runs the whole pipeline on awkward but legal input:
// a fixed parameter, NaN samples, a true value off the axes, and a single
// parameter. It must return results or errors, never panic.
func TestDegenerateInputs(t *testing.T) {
	src := rand.New(rand.NewPCG(61, 62))
	n := 2000
	a, b, c := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range a {
		a[i] = src.NormFloat64()
		b[i] = 4.2
		c[i] = src.Float64()
	}
	a[7] = math.NaN()
	inf := [2]float64{math.Inf(-1), math.Inf(1)}
	ps := []Param{{Name: "a", Bounds: inf, Samples: a}, {Name: "fixed", Bounds: inf, Samples: b}, {Name: "u", Bounds: [2]float64{0, 1}, Samples: c}}
	post, err := Analyze(ps, Options{Two: Options2D{GridPoints: 24}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if post.Marginals[1].Density.Rule != RuleFallback || post.Marginals[0].Density.Dropped != 1 {
		t.Errorf("rule %q, dropped %d", post.Marginals[1].Density.Rule, post.Marginals[0].Density.Dropped)
	}
	dir := t.TempDir()
	if _, err := CornerFigure(filepath.Join(dir, "c3"), post, []float64{100, math.NaN(), 0.5}, FigureOptions{DPI: 30, Formats: []string{"png"}}, nil); err != nil {
		t.Fatal(err)
	}
	one, err := Analyze(ps[:1], Options{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := CornerFigure(filepath.Join(dir, "c1"), one, nil, FigureOptions{DPI: 30, Formats: []string{"svg"}}, nil); err != nil {
		t.Fatal(err)
	}
}

func TestKDE1DAgainstNormal(t *testing.T) {
	// Reference: the normal density (gonum distuv). At n = 1e5 Silverman's
	// bandwidth is h = 0.09, so the smoothing bias h^2 f''/2 is below
	// 0.002 and the standard deviation sqrt(f R(K)/(n h)) below 0.004
	// (Silverman 1986, eqs. 3.18-3.19): 0.02 is a 5 sigma bound.
	const n = 100000
	d := distuv.Normal{Mu: 1, Sigma: 1, Src: rand.New(rand.NewPCG(71, 72))}
	k, err := KDE1D(drawN(d, n), [2]float64{math.Inf(-1), math.Inf(1)}, Options1D{})
	if err != nil {
		t.Fatal(err)
	}
	if k.Rule != RuleSilverman || k.Reflect != [2]bool{} {
		t.Errorf("rule %q, reflect %v", k.Rule, k.Reflect)
	}
	for x := -2.0; x <= 4; x += 0.25 {
		if got, want := k.At(x), d.Prob(x); math.Abs(got-want) > 0.02 {
			t.Errorf("density at %g = %.4f, want %.4f", x, got, want)
		}
	}
	// The histogram, normalised as a density, integrates to 1.
	var s float64
	for i, h := range k.Hist {
		s += h * (k.Edges[i+1] - k.Edges[i])
	}
	if math.Abs(s-1) > 1e-12 {
		t.Errorf("histogram integrates to %g", s)
	}
}
