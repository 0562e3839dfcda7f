package cosmicstrings

import (
	"math"
	"testing"

	"tautline/models/cosmology"
)

// radiationOnly is the closed-form background a(t) = (2 H0 sqrt(Omega_r) t)^(1/2)
// (pure radiation, constant degrees of freedom), with a = 1 today.
type radiationOnly struct{ h0, omegaR float64 }

func (r radiationOnly) LnAHT(lnt float64) (float64, float64) {
	return 0.5 * (math.Log(2*r.h0*math.Sqrt(r.omegaR)) + lnt), 0.5
}
func (r radiationOnly) LnTimeRange() (float64, float64) {
	return -60, -math.Log(2 * r.h0 * math.Sqrt(r.omegaR))
}
func (r radiationOnly) H0SI() float64 { return r.h0 }
func (r radiationOnly) Teq() float64  { return math.Inf(1) }

func fiducialRadiation(t testing.TB) radiationOnly {
	t.Helper()
	bg, err := cosmology.New(cosmology.Fiducial())
	if err != nil {
		t.Fatal(err)
	}
	return radiationOnly{bg.H0SI(), bg.OmegaR()}
}

// plateau is docs/physics.md section 3's radiation-era plateau,
// (128 pi/9) F C_r Omega_r (Gmu/eps) ((1+eps)^(3/2) - 1), eps = alpha/(Gamma Gmu).
func plateau(s Settings, omegaR, gmu, alpha float64) float64 {
	eps := alpha / (s.Gamma * gmu)
	return 128 * math.Pi / 9 * s.F * CEffRadiation * omegaR * gmu / eps * (math.Pow(1+eps, 1.5) - 1)
}

// rootUp returns the zero of the increasing function g in [a, b] by 200
// bisections, independently of the code's own root finder.
func rootUp(g func(float64) float64, a, b float64) float64 {
	for range 200 {
		c := 0.5 * (a + b)
		if g(c) < 0 {
			a = c
		} else {
			b = c
		}
	}
	return 0.5 * (a + b)
}
