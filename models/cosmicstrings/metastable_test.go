package cosmicstrings

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"tautline/models/cosmology"
)

// radiationMetastable returns a metastable direct path on the pure-radiation
// background of helpers_test.go with C_eff = 5.4 throughout (the step option
// never switches there, t_eq being infinite).
func radiationMetastable(t testing.TB, modes int) (*MetastableDirect, radiationOnly) {
	t.Helper()
	r := fiducialRadiation(t)
	s := DefaultMetastableSettings()
	s.CEff = CEffStep
	s.Modes = modes
	d, err := newMetastableOn(s, r)
	if err != nil {
		t.Fatal(err)
	}
	return d, r
}

// TestMetastableF2 checks the low-frequency side of the metastable spectrum
// against the closed form its equations give in pure radiation (derived in
// docs/physics.md section 3's notation; a = (c t)^(1/2), c = 2 H0
// sqrt(Omega_r), Gamma Gmu -> 0): loops born before t_s with
// t_b = l/alpha radiate l = 2 a/f until the survival factor
// exp(-Gamma_d l t) ends them, so that
//
//	Omega^(1)(f) -> (8 pi/(3 H0^2)) Gmu^2 Gamma_1 F C_r/alpha^2 (2/f) (alpha/2)^(5/2) c^(5/4) f^(5/2)
//	                * integral_0^inf dt t^(-1/4) exp(-2 Gamma_d c^(1/2) t^(3/2)/f)
//	             = (8 pi^(3/2)/9) Gmu^2 F Gamma_1 C_r alpha^(1/2) sqrt(Omega_r) t_s f^2 / H0,
//
// and Omega = zeta(q+2) Omega^(1) after the mode sum: Omega propto f^2, the
// slope quoted by Buchmueller, Domcke & Schmitz 2021 (from memory). It holds
// for alpha^(-1/2) f_* << f << f_* alpha/(Gamma Gmu), f_* = 2 a(t_s)/(alpha t_s).
func TestMetastableF2(t *testing.T) {
	d, r := radiationMetastable(t, 100000)
	s := d.Settings()
	const gmu = 1e-16 // Gamma Gmu t_d / l = 5e-7 at the test frequencies
	for _, ts := range []float64{1e6, 1e8} {
		fStar := d.CutoffFrequency(ts)
		// f = 1e6 alpha f_*: the leading correction, from loops before t_s,
		// is about (alpha f_*/f)^(1/2) = 1e-3, and t_d = 1e4 t_s stays far
		// below today's 2.4e19 s of this background.
		f := []float64{1e6 * s.Alpha * fStar, 2e6 * s.Alpha * fStar}
		out := make([]float64, 2)
		if err := d.OmegaTs(f, gmu, ts, out); err != nil {
			t.Fatal(err)
		}
		gamma1 := s.Gamma / zeta(s.Q)
		want := 8 * math.Pow(math.Pi, 1.5) / 9 * gmu * gmu * s.F * gamma1 * CEffRadiation *
			math.Sqrt(s.Alpha) * math.Sqrt(r.omegaR) * ts * f[0] * f[0] / r.h0 * zeta(s.Q+2)
		slope := math.Log(out[1]/out[0]) / math.Ln2
		t.Logf("t_s = %g s, f_* = %.3g Hz: Omega(%.3g Hz) / closed form = %.5f, slope %.4f", ts, fStar, f[0], out[0]/want, slope)
		// 5e-3: five times the estimated leading correction.
		if math.Abs(out[0]/want-1) > 5e-3 {
			t.Errorf("t_s = %g: Omega = %.6g, closed form %.6g", ts, out[0], want)
		}
		if math.Abs(slope-2) > 0.01 {
			t.Errorf("t_s = %g: slope %.4f, want 2", ts, slope)
		}
	}
}

// TestMetastableCutoff: the spectrum vanishes exactly below
// f_* = 2 a(t_s)/(alpha t_s), the fundamental of the largest loop at t_s
// (no loop is longer, and later loops radiate at higher frequency), and is
// positive just above it; with t_s before network formation it vanishes
// everywhere.
func TestMetastableCutoff(t *testing.T) {
	d, err := NewMetastableDirect(DefaultMetastableSettings())
	if err != nil {
		t.Fatal(err)
	}
	for _, ts := range []float64{1e-3, 10, 1e6, 1e12} {
		fs := d.CutoffFrequency(ts)
		f := []float64{0.5 * fs, 0.999 * fs, 1.01 * fs, 3 * fs}
		out := make([]float64, len(f))
		if err := d.OmegaTs(f, 1e-9, ts, out); err != nil {
			t.Fatal(err)
		}
		if out[0] != 0 || out[1] != 0 || !(out[2] > 0) || !(out[3] > out[2]) {
			t.Errorf("t_s = %g s, f_* = %.3g Hz: Omega(0.5, 0.999, 1.01, 3 f_*) = %g", ts, fs, out)
		}
	}
	out := make([]float64, 1)
	if err := d.OmegaTs([]float64{1e-8}, 1e-9, 1e-40, out); err != nil || out[0] != 0 {
		t.Errorf("t_s before formation: Omega = %g, %v; want 0", out[0], err)
	}
}

// TestMetastableReducesToStable: with t_s at or after today nothing decays,
// and the metastable spectrum is the stable one-scale spectrum of Direct at
// the same alpha (sqrt(kappa) = 9.5 gives t_s > t0 for every Gmu in the
// default prior; 12 is far beyond). For sqrt(kappa) = 9 and Gmu = 1e-10,
// t_s = 0.56 t0: in 1e-9..1e-6 Hz the spectrum differs from the stable one
// by less than 1 %.
func TestMetastableReducesToStable(t *testing.T) {
	for _, ceff := range []string{CEffVOS, CEffStep} {
		ms := DefaultMetastableSettings()
		ms.CEff = ceff
		md, err := NewMetastableDirect(ms)
		if err != nil {
			t.Fatal(err)
		}
		sd, err := NewDirect(ms.Settings)
		if err != nil {
			t.Fatal(err)
		}
		f := []float64{1e-11, 1e-10, 1e-9, 1e-8, 1e-7, 1e-6}
		a, b := make([]float64, len(f)), make([]float64, len(f))
		for _, gmu := range []float64{1e-14, 1e-10, 1e-6} {
			if err := sd.Omega(f, gmu, ms.Alpha, 1, b); err != nil {
				t.Fatal(err)
			}
			for _, sk := range []float64{9.5, 12} {
				if err := md.Omega(f, gmu, sk, a); err != nil {
					t.Fatal(err)
				}
				for i := range f {
					// 1e-6: ten times the quadrature tolerance (the two
					// paths order the same arithmetic differently).
					if math.Abs(a[i]/b[i]-1) > 1e-6 {
						t.Errorf("%s Gmu=%g sqrt(kappa)=%g f=%g: metastable %.8g, stable %.8g", ceff, gmu, sk, f[i], a[i], b[i])
					}
				}
			}
		}
	}
	md, _ := NewMetastableDirect(DefaultMetastableSettings())
	sd, _ := NewDirect(DefaultSettings())
	f := []float64{1e-9, 1e-8, 1e-7, 1e-6}
	a, b := make([]float64, len(f)), make([]float64, len(f))
	if err := md.Omega(f, 1e-10, 9, a); err != nil {
		t.Fatal(err)
	}
	if err := sd.Omega(f, 1e-10, 0.1, 1, b); err != nil {
		t.Fatal(err)
	}
	for i := range f {
		// 1 %: loops born after 0.56 t0 radiate in the band only through
		// harmonics above k = 1e4 (their fundamental is below 1e-16 Hz).
		if r := a[i] / b[i]; math.Abs(r-1) > 0.01 {
			t.Errorf("sqrt(kappa) = 9, f = %g: metastable/stable = %.5f, want within 1 %%", f[i], r)
		}
	}
}

// metaOmegaKGonum integrates harmonic k of the metastable spectrum with
// gonum's fixed Gauss-Legendre rule in ln t, written afresh from the loop
// density of the one-scale model times the survival factor.
func metaOmegaKGonum(bg *cosmology.Background, n *network, s MetastableSettings, k int, f, gmu, ts float64, m int) float64 {
	lo, hi := bg.LnTimeRange()
	gg := s.Gamma * gmu
	kf := float64(k)
	gd := 1 / (ts * ts)
	length := func(u float64) float64 { return 2 * kf / f * math.Exp(bg.LnA(u)) }
	birth := func(u float64) float64 { return (length(u) + gg*math.Exp(u)) / (s.Alpha + gg) }
	root := rootUp
	// t_b <= t, t_b <= t_s, survival factor above e^-60
	u0 := root(func(u float64) float64 { return u - math.Log(birth(u)) }, lo, hi)
	u1 := math.Min(hi, root(func(u float64) float64 { return math.Log(birth(u)) - math.Log(ts) }, lo, hi))
	lts := math.Log(ts)
	expo := func(u float64) float64 {
		dt := math.Exp(u) - ts
		if dt <= 0 {
			return 0
		}
		return gd * (length(u)*dt + 0.5*gg*dt*dt)
	}
	if lts < u1 {
		u1 = math.Min(u1, root(func(u float64) float64 { return expo(u) - 60 }, lts, u1))
	}
	gk := s.Gamma * math.Pow(kf, -s.Q) / zeta(s.Q)
	pref := 8 * math.Pi / (3 * bg.H0SI() * bg.H0SI()) * gmu * gmu * gk * 2 * kf / f
	integrand := func(u float64) float64 {
		t := math.Exp(u)
		tb := birth(u)
		nl := s.F * n.cEff(math.Log(tb)) / (s.Alpha * (s.Alpha + gg)) / math.Pow(tb, 4) * math.Pow(bg.A(tb)/bg.A(t), 3)
		return t * math.Pow(bg.A(t), 5) * nl * math.Exp(-expo(u))
	}
	if !(u1 > u0) {
		return 0
	}

	if lts > u0 && lts < u1 {
		return pref * (quad.Fixed(integrand, u0, lts, m, quad.Legendre{}, 0) + quad.Fixed(integrand, lts, u1, m, quad.Legendre{}, 0))
	}
	return pref * quad.Fixed(integrand, u0, u1, m, quad.Legendre{}, 0)
}

// TestMetastableAgainstGonum re-integrates harmonics of the metastable
// spectrum with gonum quad.Fixed and compares with the adaptive
// Gauss-Kronrod path through the mode identity
// Omega^(k)(f) = k^-q Omega^(1)(f/k).
func TestMetastableAgainstGonum(t *testing.T) {
	bg, err := cosmology.New(cosmology.Fiducial())
	if err != nil {
		t.Fatal(err)
	}
	s := DefaultMetastableSettings()
	n, err := newNetwork(s.Settings, bg)
	if err != nil {
		t.Fatal(err)
	}
	d := n.metastable(s)
	cases := []struct {
		gmu, sk, f float64
		k          int
	}{
		{1e-10, 8, 1e-10, 1},
		{1e-10, 8, 1e-9, 5},
		{1e-7, 7.8, 1e-8, 1},
		{1e-12, 8.3, 3e-9, 40},
		{1e-7, 8.6, 1e-9, 1},
	}
	for _, c := range cases {
		ts := DecayTime(c.gmu, c.sk)
		var prev, cur float64
		for _, m := range []int{512, 1024, 2048} {
			prev, cur = cur, metaOmegaKGonum(bg, n, s, c.k, c.f, c.gmu, ts, m)
		}
		// The fixed rule has converged when doubling n changes < 1e-7.
		if math.Abs(cur/prev-1) > 1e-7 {
			t.Errorf("%+v: gonum quad.Fixed not converged: %.10g vs %.10g", c, prev, cur)
		}
		d.set(c.gmu, math.Log(ts))
		v := d.p.omega1(math.Log(c.f/float64(c.k))) * math.Pow(float64(c.k), -s.Q)
		// 1e-6: ten times the adaptive rule's relative tolerance.
		if math.Abs(v/cur-1) > 1e-6 {
			t.Errorf("%+v: adaptive %.10g, gonum %.10g (rel %.2g)", c, v, cur, v/cur-1)
		}
	}
}

// TestDecayTime checks t_s = sqrt(2 pi/Gmu) exp(pi kappa/2) t_Planck by hand:
// for Gmu = 1e-7 and sqrt(kappa) = 8, sqrt(2 pi 1e7) = 7926.65,
// exp(32 pi) = exp(100.531) = 4.5713e43, t_Planck = 5.39125e-44 s (CODATA
// 2018), so t_s = 1.9535e4 s.
func TestDecayTime(t *testing.T) {
	want := math.Sqrt(2*math.Pi*1e7) * math.Exp(32*math.Pi) * 5.391247e-44
	if got := DecayTime(1e-7, 8); math.Abs(got/want-1) > 1e-5 {
		t.Errorf("DecayTime(1e-7, 8) = %.6g s, want %.6g s", got, want)
	}
	if math.Abs(want/1.9535e4-1) > 1e-3 {
		t.Errorf("hand value %.6g differs from 1.9535e4", want)
	}
}

func TestMetastableBadInput(t *testing.T) {
	d, err := NewMetastableDirect(DefaultMetastableSettings())
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, 1)
	for _, c := range []struct{ f, gmu, sk float64 }{
		{1e-9, -1, 8}, {1e-9, 1e-10, math.NaN()}, {1e-9, 1e-10, -1}, {-1, 1e-10, 8}, {math.Inf(1), 1e-10, 8},
	} {
		if err := d.Omega([]float64{c.f}, c.gmu, c.sk, out); err == nil {
			t.Errorf("Omega(%g, %g, %g) succeeded", c.f, c.gmu, c.sk)
		}
	}
	for _, mod := range []func(*MetastableSettings){
		func(s *MetastableSettings) { s.Alpha = 0 },
		func(s *MetastableSettings) { s.P = 1.5 },
		func(s *MetastableSettings) { s.Q = 0.5 },
	} {
		s := DefaultMetastableSettings()
		mod(&s)
		if _, err := NewMetastableDirect(s); err == nil {
			t.Errorf("settings %v accepted", s)
		}
	}
}
