package cosmicstrings

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"tautline/models/cosmology"
)

// bosPlateau is the radiation-era plateau of the Blanco-Pillado, Olum &
// Shlaer radiation-era density n = A t^(-3/2) x^(-5/2), x = l + Gamma Gmu t,
// l <= alpha t (A = 0.18, alpha = 0.1), summed over all modes, in pure
// radiation a = (c t)^(1/2), c = 2 H0 sqrt(Omega_r). Derivation: with
// l_k = 2k (c t)^(1/2)/f and t = T s, T = 4 k^2 c/(f Gamma Gmu)^2,
//
//	Omega^(k) = (8 pi/(3 H0^2)) Gmu^2 Gamma_k (2k/f) A c^(5/2) integral dt t x^(-5/2)
//	          = (8 pi/(3 H0^2)) Gmu^2 Gamma_k A c^2 (Gamma Gmu)^(-3/2) 2 integral_{1/eps}^inf du u^(1/2) (1+u)^(-5/2)
//	          = (128 pi/9) A Omega_r (Gamma_k/Gamma) (Gmu/Gamma)^(1/2) [1 - (1 + eps)^(-3/2)],
//
// eps = alpha/(Gamma Gmu), since d/du (u/(1+u))^(3/2) = (3/2) u^(1/2) (1+u)^(-5/2);
// the sum over k turns Gamma_k into Gamma. (128 pi/9) 0.18 = 8.04, the
// coefficient quoted for this model in the literature (from memory).
func bosPlateau(gamma, omegaR, gmu float64) float64 {
	eps := bosRadiationAlpha / (gamma * gmu)
	return 128 * math.Pi / 9 * bosRadiationA * omegaR * math.Sqrt(gmu/gamma) * (1 - math.Pow(1+eps, -1.5))
}

// TestBOSPlateau compares the high-frequency spectrum in pure radiation
// (constant degrees of freedom, t_eq infinite so only radiation-era loops
// exist) with bosPlateau, corrected for the N = 1e5 mode truncation as in
// TestPlateau.
func TestBOSPlateau(t *testing.T) {
	r := fiducialRadiation(t)
	for _, modes := range []int{0, 100000} {
		s := DefaultBOSSettings()
		s.Modes = modes
		d, err := newBOSOn(s, r)
		if err != nil {
			t.Fatal(err)
		}
		tail := 0.0
		if modes > 0 {
			tail = math.Pow(float64(modes), 1-s.Q) / ((s.Q - 1) * zeta(s.Q))
		}
		for _, gmu := range []float64{1e-14, 1e-11, 1e-9, 1e-7, 1e-4} {
			out := make([]float64, 1)
			if err := d.Omega([]float64{1e3}, gmu, 1, out); err != nil {
				t.Fatal(err)
			}
			want := bosPlateau(s.Gamma, r.omegaR, gmu) * (1 - tail)
			// 0.5 %, as for the one-scale plateau (TestPlateau): the
			// finite-age deficit at 1 kHz is below 1e-3.
			rel := out[0]/want - 1
			t.Logf("modes=%d Gmu=%g: rel %.2g", modes, gmu, rel)
			if math.Abs(rel) > 0.005 {
				t.Errorf("modes=%d Gmu=%g: Omega(1 kHz) = %.6g, plateau %.6g (rel %.2g)", modes, gmu, out[0], want, rel)
			}
		}
	}
}

// TestBOSConsistency checks the recalled coefficients against each other:
// the matter-era numerator 0.27 - 0.45 (l/t)^0.31 stays positive up to the
// cutoff l = 0.18 t (it vanishes at l/t = 0.6^(1/0.31) = 0.192); and the
// radiation-era amplitude 0.18 is that of one-scale loops with alpha = 0.1,
// F = 0.1 and C_eff = 5.4 (docs/physics.md section 3),
// F C_r (alpha + Gamma Gmu)^(3/2)/alpha = 0.171, within 6 % (the
// simulations' loops are not all born at one size).
func TestBOSConsistency(t *testing.T) {
	if num := bosMatterA - bosMatterB*math.Pow(bosMatterAlpha, bosMatterExp); !(num > 0) {
		t.Errorf("matter-era numerator at l = 0.18 t is %g, want > 0", num)
	}
	if z := math.Pow(bosMatterA/bosMatterB, 1/bosMatterExp); math.Abs(z-0.192) > 1e-3 || z < bosMatterAlpha {
		t.Errorf("numerator zero at l/t = %.4f, want 0.192 above the cutoff 0.18", z)
	}
	oneScale := 0.1 * CEffRadiation * math.Pow(bosRadiationAlpha, 1.5) / bosRadiationAlpha
	if math.Abs(oneScale/bosRadiationA-1) > 0.06 {
		t.Errorf("one-scale equivalent amplitude %.4f, BOS %.2f", oneScale, bosRadiationA)
	}
}

// bosOmegaKGonum integrates harmonic k of the BOS spectrum with gonum's
// fixed Gauss-Legendre rule, from the densities as published: the
// radiation-era loops in the form 0.18 t_b^(-3/2) x^(-5/2) (a_b/a)^3 and the
// matter-era ones (0.27 - 0.45 (l/t)^0.31)/(t^2 x^2).
func bosOmegaKGonum(bg *cosmology.Background, s BOSSettings, k int, f, gmu float64, m int) float64 {
	lo, hi := bg.LnTimeRange()
	lnTeq := math.Log(bg.Teq())
	gg := s.Gamma * gmu
	kf := float64(k)
	length := func(u float64) float64 { return 2 * kf / f * math.Exp(bg.LnA(u)) }
	root := rootUp
	pref := 8 * math.Pi / (3 * bg.H0SI() * bg.H0SI()) * gmu * gmu * s.Gamma * math.Pow(kf, -s.Q) / zeta(s.Q) * 2 * kf / f
	rad := func(u float64) float64 {
		t := math.Exp(u)
		x := length(u) + gg*t
		tb := x / (0.1 + gg)
		return t * math.Pow(bg.A(t), 5) * 0.18 * math.Pow(tb, -1.5) * math.Pow(x, -2.5) * math.Pow(bg.A(tb)/bg.A(t), 3)
	}
	mat := func(u float64) float64 {
		t := math.Exp(u)
		l := length(u)
		x := l + gg*t
		return t * math.Pow(bg.A(t), 5) * (0.27 - 0.45*math.Pow(l/t, 0.31)) / (t * t * x * x)
	}
	birth := func(u float64) float64 { return math.Log((length(u) + gg*math.Exp(u)) / (0.1 + gg)) }
	var sum float64
	// radiation-born: t_b <= t and t_b <= t_eq
	r0 := root(func(u float64) float64 { return u - birth(u) }, lo, hi)
	r1 := math.Min(hi, root(func(u float64) float64 { return birth(u) - lnTeq }, lo, hi))
	if r1 > r0 {
		sum += quad.Fixed(rad, r0, r1, m, quad.Legendre{}, 0)
	}
	// matter era: t >= t_eq, l <= 0.18 t
	m0 := math.Max(lnTeq, root(func(u float64) float64 { return math.Log(0.18) + u - math.Log(length(u)) }, lo, hi))
	if hi > m0 {
		sum += quad.Fixed(mat, m0, hi, m, quad.Legendre{}, 0)
	}
	return pref * sum
}

// TestBOSAgainstGonum compares the adaptive path's harmonics (through the
// mode identity) with gonum quad.Fixed on the fiducial background (Aghanim et al. 2020).
func TestBOSAgainstGonum(t *testing.T) {
	bg, err := cosmology.New(cosmology.Fiducial())
	if err != nil {
		t.Fatal(err)
	}
	s := DefaultBOSSettings()
	d, err := newBOSOn(s, bg)
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		gmu, f float64
		k      int
	}{
		{1e-10, 1e-8, 1}, {1e-14, 1e-7, 1}, {1e-6, 1e-12, 1}, {1e-8, 3e-9, 3},
		{1e-12, 1e-6, 17}, {1e-10, 1e-8, 250}, {1e-11, 2e-11, 1}, {1e-9, 1e-13, 1},
	}
	for _, c := range cases {
		var prev, cur float64
		for _, m := range []int{512, 1024, 2048} {
			prev, cur = cur, bosOmegaKGonum(bg, s, c.k, c.f, c.gmu, m)
		}
		if math.Abs(cur/prev-1) > 1e-7 {
			t.Errorf("%+v: gonum quad.Fixed not converged: %.10g vs %.10g", c, prev, cur)
		}
		d.p.set(c.gmu, d.population(c.gmu, true, true), 1)
		v := d.p.omega1(math.Log(c.f/float64(c.k))) * math.Pow(float64(c.k), -s.Q)
		// 1e-6: ten times the adaptive rule's relative tolerance.
		if math.Abs(v/cur-1) > 1e-6 {
			t.Errorf("%+v: adaptive %.10g, gonum %.10g (rel %.2g)", c, v, cur, v/cur-1)
		}
	}
}

// TestBOSReconnection: Omega propto P^(-kappa), exactly.
func TestBOSReconnection(t *testing.T) {
	s := DefaultBOSSettings()
	s.Kappa = 0.6
	d, err := NewBOSDirect(s)
	if err != nil {
		t.Fatal(err)
	}
	f := []float64{1e-9, 1e-8}
	a, b := make([]float64, 2), make([]float64, 2)
	if err := d.Omega(f, 1e-10, 1, a); err != nil {
		t.Fatal(err)
	}
	if err := d.Omega(f, 1e-10, 0.01, b); err != nil {
		t.Fatal(err)
	}
	for i := range f {
		if want := math.Pow(0.01, -0.6); math.Abs(b[i]/a[i]/want-1) > 1e-12 {
			t.Errorf("Omega(P=0.01)/Omega(P=1) = %.12g, want %.12g", b[i]/a[i], want)
		}
	}
	out := make([]float64, 1)
	for _, c := range [][2]float64{{-1, 1}, {1e-10, 0}, {1e-10, 2}, {1, 1}} {
		if err := d.Omega([]float64{1e-9}, c[0], c[1], out); err == nil {
			t.Errorf("Omega(Gmu=%g, P=%g) succeeded", c[0], c[1])
		}
	}
	bad := DefaultBOSSettings()
	bad.Gamma = 0
	if _, err := NewBOSDirect(bad); err == nil {
		t.Error("Gamma = 0 accepted")
	}
}
