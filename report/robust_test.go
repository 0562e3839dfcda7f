package report

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"testing"

	"tautline/stats"
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
	ps := []stats.Param{{Name: "a", Bounds: inf, Samples: a}, {Name: "fixed", Bounds: inf, Samples: b}, {Name: "u", Bounds: [2]float64{0, 1}, Samples: c}}
	post, err := stats.Analyze(ps, stats.Options{Two: stats.Options2D{GridPoints: 24}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if post.Marginals[1].Density.Rule != stats.RuleFallback || post.Marginals[0].Density.Dropped != 1 {
		t.Errorf("rule %q, dropped %d", post.Marginals[1].Density.Rule, post.Marginals[0].Density.Dropped)
	}
	dir := t.TempDir()
	if _, err := CornerFigure(filepath.Join(dir, "c3"), post, []float64{100, math.NaN(), 0.5}, FigureOptions{DPI: 30, Formats: []string{"png"}}, nil); err != nil {
		t.Fatal(err)
	}
	one, err := stats.Analyze(ps[:1], stats.Options{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := CornerFigure(filepath.Join(dir, "c1"), one, nil, FigureOptions{DPI: 30, Formats: []string{"svg"}}, nil); err != nil {
		t.Fatal(err)
	}
}
