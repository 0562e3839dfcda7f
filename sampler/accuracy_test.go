package sampler

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestGaussianMoments samples multivariate normals and compares the sample
// means and covariances with the exact ones and each marginal with the
// exact normal CDF (gonum distuv.Normal).
func TestGaussianMoments(t *testing.T) {
	tests := []struct {
		name  string
		mu    []float64
		cov   [][]float64
		steps int
		moves []WeightedMove
	}{
		{
			name: "2-D correlated, rho = 0.9",
			mu:   []float64{1, -2},
			cov:  [][]float64{{1, 0.9 * 1 * 3}, {0.9 * 1 * 3, 9}},
			// 4000 steps after burn-in give about 50 tau for the stretch move
			// in 2-D (tau of order 30).
			steps: 4000,
		},
		{
			name:  "3-D unequal scales 1e-2, 1, 1e2",
			mu:    []float64{0.5, 0, -30},
			cov:   [][]float64{{1e-4, 0, 0}, {0, 1, 0}, {0, 0, 1e4}},
			steps: 4000,
		},
		{
			name:  "2-D correlated, differential evolution only",
			mu:    []float64{1, -2},
			cov:   [][]float64{{1, 0.9 * 1 * 3}, {0.9 * 1 * 3, 9}},
			steps: 4000,
			moves: []WeightedMove{{DefaultDiffEvolution(2), 1}},
		},
		{
			name:  "3-D unequal scales, stretch + differential evolution",
			mu:    []float64{0.5, 0, -30},
			cov:   [][]float64{{1e-4, 0, 0}, {0, 1, 0}, {0, 0, 1e4}},
			steps: 4000,
			moves: []WeightedMove{{Stretch{A: 2}, 0.5}, {DefaultDiffEvolution(3), 0.5}},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			g := newGaussTarget(t, tc.mu, tc.cov)
			d := len(tc.mu)
			const walkers = 32
			pos, _ := collect(t, g, Config{Walkers: walkers, Seed: 7, Moves: tc.moves}, 0, 1000, tc.steps)
			tau := maxTau(t, pos, walkers, d)
			n := float64(len(pos) / d)
			neff := n / tau
			mean := make([]float64, d)
			for i := 0; i < len(pos); i += d {
				for k := range d {
					mean[k] += pos[i+k] / n
				}
			}
			for i := range d {
				// Monte-Carlo error of a mean: sqrt(var/ESS) with ESS = N/tau;
				// 4 sigma, since six means and covariances are checked per case.
				if err, tol := math.Abs(mean[i]-tc.mu[i]), 4*math.Sqrt(tc.cov[i][i]/neff); err > tol {
					t.Errorf("mean[%d] = %.5g, want %.5g ± %.3g", i, mean[i], tc.mu[i], tol)
				}
				for j := i; j < d; j++ {
					c := 0.0
					for s := 0; s < len(pos); s += d {
						c += (pos[s+i] - mean[i]) * (pos[s+j] - mean[j])
					}
					c /= n - 1
					// Variance of a sample covariance of normal data,
					// (S_ii S_jj + S_ij^2)/N (Wishart second moments; from memory),
					// with N the effective sample size; 4 sigma as above.
					sd := math.Sqrt((tc.cov[i][i]*tc.cov[j][j] + tc.cov[i][j]*tc.cov[i][j]) / neff)
					if math.Abs(c-tc.cov[i][j]) > 4*sd {
						t.Errorf("cov[%d][%d] = %.5g, want %.5g ± %.3g", i, j, c, tc.cov[i][j], 4*sd)
					}
				}
				x := thin(param(pos, walkers, d, i), walkers, int(math.Ceil(tau)))
				nd := distuv.Normal{Mu: tc.mu[i], Sigma: math.Sqrt(tc.cov[i][i])}
				if D, p := ksPValue(x, nd.CDF); p < ksAlpha {
					t.Errorf("marginal %d: KS D = %.4g with %d draws, p = %.2g < %g", i, D, len(x), p, ksAlpha)
				}
			}
		})
	}
}

// TestMarginalsKS checks a 10-D correlated normal and a banana-shaped 2-D
// density whose marginals are known in closed form.
func TestMarginalsKS(t *testing.T) {
	t.Run("10-D correlated normal", func(t *testing.T) {
		const d = 10
		// cov = A A^T / d + 0.1 I with A of iid N(0,1) entries: a dense,
		// well-conditioned but strongly correlated covariance.
		r := rand.New(rand.NewPCG(3, 4))
		a := make([]float64, d*d)
		for i := range a {
			a[i] = r.NormFloat64()
		}
		cov := make([][]float64, d)
		mu := make([]float64, d)
		for i := range d {
			mu[i] = float64(i) - 4.5
			cov[i] = make([]float64, d)
			for j := range d {
				for k := range d {
					cov[i][j] += a[i*d+k] * a[j*d+k] / d
				}
				if i == j {
					cov[i][j] += 0.1
				}
			}
		}
		g := newGaussTarget(t, mu, cov)
		const walkers = 40
		pos, _ := collect(t, g, Config{Walkers: walkers, Seed: 11}, 0, 3000, 10000)
		tau := maxTau(t, pos, walkers, d)
		for k := range d {
			x := thin(param(pos, walkers, d, k), walkers, int(math.Ceil(tau)))
			nd := distuv.Normal{Mu: mu[k], Sigma: math.Sqrt(cov[k][k])}
			if D, p := ksPValue(x, nd.CDF); p < ksAlpha {
				t.Errorf("marginal %d: KS D = %.4g with %d draws, p = %.2g < %g", k, D, len(x), p, ksAlpha)
			}
		}
	})
	t.Run("banana", func(t *testing.T) {
		// p(x1, x2) = N(x1; 0, s^2) N(x2; b x1^2, 1): a Rosenbrock-type
		// banana whose x1 marginal is exactly N(0, s^2) and whose residual
		// x2 - b x1^2 is exactly N(0, 1) and independent of x1 (closed form
		// by construction).
		const s, b = 1.0, 1.0
		tg := funcTarget{
			dim:  2,
			draw: boxDraw(-10, 10),
			prior: func(x []float64) float64 {
				if x[0] < -10 || x[0] > 10 || x[1] < -20 || x[1] > 120 {
					return math.Inf(-1)
				}
				return 0
			},
			like: func(x []float64) float64 {
				r := x[1] - b*x[0]*x[0]
				return -0.5*x[0]*x[0]/(s*s) - 0.5*r*r
			},
		}
		const walkers = 32
		pos, _ := collect(t, tg, Config{Walkers: walkers, Seed: 5}, 0, 2000, 8000)
		tau := maxTau(t, pos, walkers, 2)
		every := int(math.Ceil(tau))
		x1 := thin(param(pos, walkers, 2, 0), walkers, every)
		x2 := thin(param(pos, walkers, 2, 1), walkers, every)
		res := make([]float64, len(x1))
		for i := range x1 {
			res[i] = x2[i] - b*x1[i]*x1[i]
		}
		for _, c := range []struct {
			name string
			x    []float64
			cdf  func(float64) float64
		}{
			{"x1 ~ N(0, s^2)", x1, distuv.Normal{Mu: 0, Sigma: s}.CDF},
			{"x2 - b x1^2 ~ N(0, 1)", res, distuv.UnitNormal.CDF},
		} {
			if D, p := ksPValue(c.x, c.cdf); p < ksAlpha {
				t.Errorf("%s: KS D = %.4g with %d draws, p = %.2g < %g", c.name, D, len(c.x), p, ksAlpha)
			}
		}
	})
}
