package cosmicstrings

import (
	"math"
	"testing"
)

// TestUnits checks docs/physics.md section 9's check values.
func TestUnits(t *testing.T) {
	tests := []struct {
		name      string
		got, want float64
		tol       float64 // relative
	}{
		// 1.35e17 kg/m at Gmu = 1e-10 (docs/physics.md section 1), quoted to 3 digits.
		{"mu(1e-10) kg/m", MassPerLength(1e-10), 1.35e17, 5e-3},
		// 0.52 mas at Gmu = 1e-10 (docs/physics.md section 9), quoted to 2 digits.
		{"separation(1e-10) mas", MaxImageSeparationMas(1e-10), 0.52, 1e-2},
		// eta ~ 1e16 GeV at Gmu = 1e-6 (common practice, order of magnitude):
		// M_Planck sqrt(1e-6) = 1.22e16 GeV, so a factor-1.3 tolerance.
		{"eta(1e-6) GeV", SymmetryBreakingScale(1e-6), 1e16, 0.3},
		// 8 pi Gmu in radians, closed form (Vilenkin 1981).
		{"deficit(1e-6) rad", DeficitAngle(1e-6), 8 * math.Pi * 1e-6, 1e-15},
		// 1 rad = 206264.806 arcsec (definition).
		{"deficit(1e-6) arcsec", DeficitAngleArcsec(1e-6), 8 * math.Pi * 1e-6 * 206264.806, 1e-8},
	}
	for _, tt := range tests {
		if rel := math.Abs(tt.got/tt.want - 1); rel > tt.tol {
			t.Errorf("%s = %.6g, want %.6g within %.2g", tt.name, tt.got, tt.want, tt.tol)
		}
	}
	// Round trips: inverses exact to rounding.
	for _, g := range []float64{1e-14, 1e-10, 1e-6} {
		for name, back := range map[string]float64{
			"mu":         GmuFromMassPerLength(MassPerLength(g)),
			"eta":        GmuFromScale(SymmetryBreakingScale(g)),
			"separation": GmuFromImageSeparationMas(MaxImageSeparationMas(g)),
		} {
			if math.Abs(back/g-1) > 1e-14 {
				t.Errorf("%s round trip at %g gives %g", name, g, back)
			}
		}
	}
	if len(ScaleCaveat) == 0 {
		t.Error("ScaleCaveat is empty")
	}
}
