package gw

import (
	"math"
	"testing"
)

// Hand-worked reference numbers. Each was computed step by step, with the
// intermediate factors written out beside it so that a reader can redo them
// (most to ten or eleven significant digits; H0^2 to eight, which the final
// values were not rounded from). The tolerance 1e-9 relative covers the
// rounding of the final values, quoted to eleven digits.
const relTol = 1e-9

func near(got, want, rel float64) bool { return math.Abs(got-want) <= rel*math.Abs(want) }

var (
	h0   = H0SI(67.4)
	span = 15 * 365.25 * 86400.0 // 15 Julian years = 473364000 s
)

func TestHandWorked(t *testing.T) {
	cases := []struct {
		name      string
		got, want float64
	}{
		// Julian year: 365.25 d * 86400 s/d = 31557600 s exactly (IAU
		// definition of the Julian year).
		{"JulianYear", JulianYear, 31557600},
		// 1/(365.25 * 86400) = 1/31557600 = 3.1688087814e-8 Hz.
		{"FYear", FYear, 3.1688087814e-8},
		// 67.4 km/s/Mpc = 67400 m/s / 3.0856775814913673e22 m
		// = 2.1842852411e-18 s^-1 (docs/physics.md section 1 quotes 2.1843e-18).
		{"H0SI", H0SI(67.4), 2.1842852411e-18},
		// f = f_yr, h_c = 1e-15: 2 pi^2/3 = 6.5797362674, f/H0 =
		// 3.1688087814e-8 / 2.1842852411e-18 = 1.4507302992e10, squared
		// 2.1046184011e20; 6.5797362674 * 2.1046184011e20 * 1e-30 = 1.3847834023e-9.
		{"OmegaFromHc", OmegaFromHc(FYear, 1e-15, h0), 1.3847834023e-9},
		// Omega = 1e-9 at f = 2 nHz: h_c = (H0/(pi f)) sqrt(1.5 Omega)
		// = (2.1842852411e-18 / 6.2831853072e-9) * sqrt(1.5e-9)
		// = 3.4763979324e-10 * 3.8729833462e-5 = 1.3464031297e-14.
		{"HcFromOmega", HcFromOmega(2e-9, 1e-9, h0), 1.3464031297e-14},
		// h_c = 1e-15 at f = 1e-8 Hz: 12 pi^2 = 118.4352528131,
		// S = 1e-30 / (118.4352528131 * 1e-24) = 8.4434319702e-9 s^3.
		{"PSDFromHc", PSDFromHc(1e-8, 1e-15), 8.4434319702e-9},
		// Inverse of the above: sqrt(118.4352528131 * 1e-24 * 8.4434319702e-9)
		// = sqrt(1e-30) = 1e-15.
		{"HcFromPSD", HcFromPSD(1e-8, 8.4434319702e-9), 1e-15},
		// 8.4434319702e-9 s^3 / 473364000 s = 1.7837080915e-17 s^2.
		{"Rho2FromPSD", Rho2FromPSD(8.4434319702e-9, span), 1.7837080915e-17},
		// 1.7837080915e-17 * 473364000 = 8.4434319702e-9.
		{"PSDFromRho2", PSDFromRho2(1.7837080915e-17, span), 8.4434319702e-9},
		// Omega = 1e-9, f = 2e-9 Hz, T = 473364000 s: 8 pi^4 = 779.2727282720,
		// f^5 = 3.2e-44, H0^2 = 4.7711021e-36;
		// rho^2 = 4.7711021e-36 * 1e-9 / (779.2727282720 * 3.2e-44 * 473364000)
		// = 4.0418856293e-13 s^2.
		{"Rho2FromOmega", Rho2FromOmega(2e-9, 1e-9, h0, span), 4.0418856293e-13},
		{"OmegaFromRho2", OmegaFromRho2(2e-9, 4.0418856293e-13, h0, span), 1e-9},
		// log10 rho = log10(4.0418856293e-13)/2 = -12.3934159796/2 = -6.1967079898.
		{"Log10RhoFromLnOmega", Log10RhoFromLnOmega(2e-9, math.Log(1e-9), h0, span), -6.1967079898},
		// Offset = log10 rho at Omega = 1: rho^2 = 4.0418856293e-13 / 1e-9
		// = 4.0418856293e-4, half its log10 = -3.3934159796/2 = -1.6967079898.
		{"Log10RhoOffset", Log10RhoOffset(2e-9, h0, span), -1.6967079898},
		{"LnOmegaFromLog10Rho", LnOmegaFromLog10Rho(2e-9, -6.1967079898, h0, span), math.Log(1e-9)},
	}
	for _, c := range cases {
		rel := relTol
		if c.name == "Log10RhoFromLnOmega" || c.name == "LnOmegaFromLog10Rho" || c.name == "Log10RhoOffset" {
			// Logarithms: ten written digits of a number of order 10 are an
			// absolute 1e-10, i.e. about 1e-11 relative.
			rel = 1e-10
		}
		if !near(c.got, c.want, rel) {
			t.Errorf("%s = %.12g, hand-worked %.12g", c.name, c.got, c.want)
		}
	}
}

// TestIdentities checks the relations of docs/physics.md section 5: every
// conversion undone by its inverse, and the chained route
// Omega -> h_c -> S -> rho^2 equal to the direct formula. Tolerance 1e-13
// relative: each side is a handful of float64 operations (a few ulp each).
func TestIdentities(t *testing.T) {
	for _, f := range []float64{1e-10, 2e-9, FYear, 1e-7, 1e-3} {
		for _, omega := range []float64{1e-15, 1e-9, 3e-6} {
			hc := HcFromOmega(f, omega, h0)
			if got := OmegaFromHc(f, hc, h0); !near(got, omega, 1e-13) {
				t.Errorf("f=%g: Omega->h_c->Omega: %g -> %g", f, omega, got)
			}
			s := PSDFromHc(f, hc)
			if got := HcFromPSD(f, s); !near(got, hc, 1e-13) {
				t.Errorf("f=%g: h_c->S->h_c: %g -> %g", f, hc, got)
			}
			chained := Rho2FromPSD(s, span)
			direct := Rho2FromOmega(f, omega, h0, span)
			if !near(chained, direct, 1e-13) {
				t.Errorf("f=%g Omega=%g: rho^2 chained %g, direct %g", f, omega, chained, direct)
			}
			if got := PSDFromRho2(chained, span); !near(got, s, 1e-13) {
				t.Errorf("f=%g: S->rho^2->S: %g -> %g", f, s, got)
			}
			if got := OmegaFromRho2(f, direct, h0, span); !near(got, omega, 1e-13) {
				t.Errorf("f=%g: Omega->rho^2->Omega: %g -> %g", f, omega, got)
			}
			// Log route against log10 of the direct formula; absolute 1e-12
			// on a number of order 10.
			lr := Log10RhoFromLnOmega(f, math.Log(omega), h0, span)
			if want := 0.5 * math.Log10(direct); math.Abs(lr-want) > 1e-12 {
				t.Errorf("f=%g Omega=%g: log10 rho %g, direct %g", f, omega, lr, want)
			}
			// The precomputed offset of a likelihood plus ln Omega/(2 ln 10)
			// is the log route (same absolute 1e-12).
			c := Log10RhoOffset(f, h0, span)
			if got := c + math.Log(omega)/(2*math.Ln10); math.Abs(got-lr) > 1e-12 {
				t.Errorf("f=%g Omega=%g: offset route %g, log route %g", f, omega, got, lr)
			}
			if got := LnOmegaFromLog10Rho(f, lr, h0, span); math.Abs(got-math.Log(omega)) > 1e-12 {
				t.Errorf("f=%g: log route inverse: %g, want %g", f, got, math.Log(omega))
			}
		}
	}
	// The constant ln(8 pi^4) written as a literal.
	if got := math.Log(8 * math.Pow(math.Pi, 4)); math.Abs(got-ln8Pi4) > 1e-15 {
		t.Errorf("ln8Pi4 = %.17g, math.Log gives %.17g", ln8Pi4, got)
	}
}
