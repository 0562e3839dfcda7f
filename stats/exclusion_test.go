package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestExclusionCurve(t *testing.T) {
	// y | x is half-normal with scale s(x) = 1 + x, x uniform on [0, 2];
	// the closed-form conditional 95 % limit at x is s(x) Phi^-1(0.975),
	// and within a slice the mixture quantile is solved by bisection on
	// the averaged half-normal CDF erf(y / (sqrt2 s)).
	const n = 200000
	src := rand.New(rand.NewPCG(21, 22))
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = 2 * src.Float64()
		y[i] = (1 + x[i]) * math.Abs(src.NormFloat64())
	}
	edges := LinearEdges(0, 2, 8)
	pts, err := ExclusionCurve(x, y, edges, 0.95, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, pt := range pts {
		cdf := func(v float64) float64 {
			// Average over the slice by the midpoint rule (64 points).
			var c float64
			for j := range 64 {
				s := 1 + pt.Lo + (pt.Hi-pt.Lo)*(float64(j)+0.5)/64
				c += math.Erf(v / (math.Sqrt2 * s))
			}
			return c / 64
		}
		lo, hi := 0.0, 20.0
		for range 100 {
			if m := (lo + hi) / 2; cdf(m) < 0.95 {
				lo = m
			} else {
				hi = m
			}
		}
		want := lo
		// 4 binomial standard errors of the 95 % quantile in the slice;
		// the density there is approximated by the half-normal at the
		// slice centre (distuv).
		s := 1 + pt.X
		f := 2 * distuv.Normal{Mu: 0, Sigma: s}.Prob(want)
		tol := 4 * math.Sqrt(0.95*0.05/float64(pt.N)) / f
		if math.Abs(pt.Limit-want) > tol {
			t.Errorf("slice %.2f: limit %.4f, want %.4f ± %.4f (n=%d)", pt.X, pt.Limit, want, tol, pt.N)
		}
	}
	// Too few samples: the limit is withheld.
	few, err := ExclusionCurve(x[:100], y[:100], edges, 0.95, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, pt := range few {
		if !math.IsNaN(pt.Limit) {
			t.Errorf("slice with %d < %d samples got limit %g", pt.N, MinSlice(0.95), pt.Limit)
		}
	}
	if _, err := ExclusionCurve(x, y, []float64{1, 0}, 0.95, 0); err == nil {
		t.Error("decreasing edges did not fail")
	}
}
