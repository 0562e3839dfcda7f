package cosmicstrings

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"

	"tautline/models/cosmology"
	"tautline/models/gw"
)

// plateauPairs span eps = alpha/(Gamma Gmu) from 1e-2 to 1e4.
var plateauPairs = []struct{ gmu, eps float64 }{
	{1e-10, 1e-2},
	{1e-9, 1},
	{1e-12, 1e2},
	{1e-8, 1e2},
	{1e-11, 1e4},
}

// TestPlateau compares the high-frequency spectrum in a radiation-only
// background (a = (2 H0 sqrt(Omega_r) t)^(1/2)) with constant C_eff = 5.4 and
// constant degrees of freedom against docs/physics.md section 3's closed form
// (128 pi/9) F C_r Omega_r (Gmu/eps) ((1+eps)^(3/2) - 1).
func TestPlateau(t *testing.T) {
	r := fiducialRadiation(t)
	for _, modes := range []int{0, 100000} {
		s := DefaultSettings()
		s.CEff = CEffStep // Teq is infinite here: C_eff = 5.4 throughout
		s.Modes = modes
		d, err := newDirectOn(s, r)
		if err != nil {
			t.Fatal(err)
		}
		// With N modes the plateau is reduced by the missing tail
		// sum_{k>N} k^-q / zeta(q) = N^(1-q)/((q-1) zeta(q)) (1 + O(1/N)),
		// docs/physics.md section 3.
		tail := 0.0
		if modes > 0 {
			tail = math.Pow(float64(modes), 1-s.Q) / ((s.Q - 1) * zeta(s.Q))
		}
		for _, p := range plateauPairs {
			alpha := p.eps * s.Gamma * p.gmu
			f := []float64{1e3}
			out := make([]float64, 1)
			if err := d.Omega(f, p.gmu, alpha, 1, out); err != nil {
				t.Fatal(err)
			}
			want := plateau(s, r.omegaR, p.gmu, alpha) * (1 - tail)
			// 0.5 % (the accuracy the direct path is built for). The residual finite-age deficit
			// (modes with f/k near the cutoff 2/(alpha t0)) falls as
			// (f alpha t0)^(-1/3) and is below 1e-3 at 1 kHz for these pairs.
			if rel := math.Abs(out[0]/want - 1); rel > 0.005 {
				t.Errorf("modes=%d Gmu=%g eps=%g: Omega(1 kHz) = %.6g, plateau %.6g (rel %.2g)", modes, p.gmu, p.eps, out[0], want, rel)
			} else {
				t.Logf("modes=%d Gmu=%g eps=%g: rel %.2g", modes, p.gmu, p.eps, rel)
			}
		}
	}
}

// TestZetaAndGammaSum checks zeta(q) against docs/physics.md's values (zeta(4/3) =
// 3.60094, zeta(5/3) = 2.12352 to the 6 digits quoted, zeta(2) = pi^2/6
// exactly) and that sum_k Gamma_k = Gamma, the sum done by brute force to
// 1e6 terms plus the integral tail M^(1-q)/(q-1) - M^(-q)/2.
func TestZetaAndGammaSum(t *testing.T) {
	tests := []struct {
		q, want, tol float64
	}{
		{QCusps, 3.60094, 1e-5},
		{QKinks, 2.12352, 1e-5},
		{QKinkKink, math.Pi * math.Pi / 6, 1e-13},
	}
	for _, tt := range tests {
		if got := zeta(tt.q); math.Abs(got-tt.want) > tt.tol {
			t.Errorf("zeta(%g) = %.10f, want %.10f", tt.q, got, tt.want)
		}
		const M = 1000000
		gamma := 50.0
		z := zeta(tt.q)
		var sum float64
		for k := M; k >= 1; k-- {
			sum += gamma * math.Pow(float64(k), -tt.q) / z
		}
		sum += gamma / z * (math.Pow(M, 1-tt.q)/(tt.q-1) - 0.5*math.Pow(M, -tt.q))
		// 1e-9: the next Euler-Maclaurin term is q M^(-q-1)/12 < 1e-9.
		if math.Abs(sum/gamma-1) > 1e-9 {
			t.Errorf("q=%g: sum Gamma_k = %.12g, want %g", tt.q, sum, gamma)
		}
	}
}

// omegaKGonum integrates Omega^(k)(f) independently with gonum's fixed
// Gauss-Legendre rule in ln t, writing the formula of docs/physics.md section 3
// afresh (harmonic k explicitly, no mode identity).
func omegaKGonum(bg *cosmology.Background, s Settings, c func(lnti float64) float64, k int, f, gmu, alpha float64, n int) float64 {
	lo, hi := bg.LnTimeRange()
	h0 := bg.H0SI()
	gg := s.Gamma * gmu
	kf := float64(k)
	lnl := func(u float64) float64 { return math.Log(2*kf/f) + bg.LnA(u) }
	// lower limit: l(t) = alpha t
	a, b := lo, hi
	for range 200 {
		m := 0.5 * (a + b)
		if lnl(m)-math.Log(alpha)-m > 0 {
			a = m
		} else {
			b = m
		}
	}
	gk := s.Gamma * math.Pow(kf, -s.Q) / zeta(s.Q)
	pref := 8 * math.Pi / (3 * h0 * h0) * gmu * gmu * 2 * kf / f * s.F * gk / (alpha * (alpha + gg))
	integrand := func(u float64) float64 {
		t := math.Exp(u)
		aa := math.Exp(bg.LnA(u))
		ti := (math.Exp(lnl(u)) + gg*t) / (alpha + gg)
		ai := math.Exp(bg.LnA(math.Log(ti)))
		return t * c(math.Log(ti)) / math.Pow(ti, 4) * math.Pow(aa, 5) * math.Pow(ai/aa, 3)
	}
	// A jump of C_eff at t_i = t_eq (the step option) is integrated piecewise.
	lnTi := func(u float64) float64 { return math.Log((math.Exp(lnl(u)) + gg*math.Exp(u)) / (alpha + gg)) }
	lnTeq := math.Log(bg.Teq())
	if s.CEff == CEffStep && lnTi(b) < lnTeq && lnTi(hi) > lnTeq {
		lo2, hi2 := b, hi
		for range 200 {
			m := 0.5 * (lo2 + hi2)
			if lnTi(m) < lnTeq {
				lo2 = m
			} else {
				hi2 = m
			}
		}
		return pref * (quad.Fixed(integrand, b, lo2, n, quad.Legendre{}, 0) + quad.Fixed(integrand, lo2, hi, n, quad.Legendre{}, 0))
	}
	return pref * quad.Fixed(integrand, b, hi, n, quad.Legendre{}, 0)
}

// TestOmega1AgainstGonum re-integrates Omega^(1) and harmonics k > 1 with
// gonum quad.Fixed at increasing n, checking both the adaptive quadrature and
// the mode identity Omega^(k)(f) = (Gamma_k/Gamma_1) Omega^(1)(f/k).
func TestOmega1AgainstGonum(t *testing.T) {
	bg, err := cosmology.New(cosmology.Fiducial())
	if err != nil {
		t.Fatal(err)
	}
	for _, ceff := range []string{CEffVOS, CEffStep} {
		s := DefaultSettings()
		s.CEff = ceff
		n, err := newNetwork(s, bg)
		if err != nil {
			t.Fatal(err)
		}
		omega1VsGonum(t, s, bg, n)
	}
}

func omega1VsGonum(t *testing.T, s Settings, bg *cosmology.Background, n *network) {
	d := n.direct()
	cases := []struct {
		gmu, alpha, f float64
		k             int
	}{
		{1e-10, 0.1, 1e-8, 1},
		{1e-14, 1e-5, 1e-7, 1},
		{1e-6, 1, 1e-12, 1},
		{1e-8, 1e-3, 3e-9, 3},
		{1e-12, 0.01, 1e-6, 17},
		{1e-10, 0.1, 1e-8, 250},
		// Loops born around t_eq (the step option's jump).
		{1e-11, 0.1, 1e-11, 1},
		{1e-8, 0.01, 1e-12, 2},
	}
	for _, c := range cases {
		var prev, cur float64
		for _, m := range []int{256, 512, 1024} {
			prev, cur = cur, omegaKGonum(bg, s, n.cEff, c.k, c.f, c.gmu, c.alpha, m)
		}
		// The fixed rule has converged when doubling n changes < 1e-7.
		if math.Abs(cur/prev-1) > 1e-7 {
			t.Errorf("%s %+v: gonum quad.Fixed not converged: %.10g vs %.10g", s.CEff, c, prev, cur)
		}
		v, _ := d.Omega1(c.f/float64(c.k), c.gmu, c.alpha)
		v *= math.Pow(float64(c.k), -s.Q)
		// 1e-6: ten times the adaptive rule's relative tolerance 1e-7.
		if math.Abs(v/cur-1) > 1e-6 {
			t.Errorf("%s %+v: Gamma_k/Gamma_1 Omega^(1)(f/k) = %.10g, gonum Omega^(k)(f) = %.10g (rel %.2g)", s.CEff, c, v, cur, v/cur-1)
		}
	}
}

// TestModeSumConvergence checks the Euler-Maclaurin mode sum against a brute
// force sum over all 1e5 modes (same Omega^(1) grid), and the grid spacing
// by halving it twice. Together with TestOmega1AgainstGonum these bound the
// direct path's error.
func TestModeSumConvergence(t *testing.T) {
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	fine := d.Clone()
	fine.step = d.step / 4
	f := []float64{1e-10, 1e-9, 1e-8, 1e-7, 1e-6}
	got, ref := make([]float64, len(f)), make([]float64, len(f))
	var worstEM, worstGrid float64
	defer func() {
		t.Logf("worst relative error: Euler-Maclaurin vs brute force %.2g, grid 0.04 vs 0.01 %.2g", worstEM, worstGrid)
	}()
	for _, p := range [][2]float64{{1e-10, 0.1}, {1e-14, 1e-5}, {1e-6, 1e-5}, {1e-12, 1}} {
		if err := d.Omega(f, p[0], p[1], 1, got); err != nil {
			t.Fatal(err)
		}
		q := d.n.s.Q
		for i, fi := range f {
			var brute float64
			for k := d.n.s.Modes; k >= 1; k-- {
				v, _ := d.om1Interp(math.Log(fi / float64(k)))
				brute += math.Pow(float64(k), -q) * v
			}
			// 5e-5: the trapezoidal rule on the 0.04 grid in y = ln(f - f_low)
			// (error about h^2/12 of the tail, measured 2e-5 at worst, at
			// Gmu = 1e-6, alpha = 1e-5 where Omega^(1) peaks just above its
			// cutoff).
			rel := math.Abs(got[i]/brute - 1)
			worstEM = math.Max(worstEM, rel)
			if rel > 5e-5 {
				t.Errorf("Gmu=%g alpha=%g f=%g: Euler-Maclaurin %.8g, brute force %.8g (rel %.2g)", p[0], p[1], fi, got[i], brute, rel)
			}
		}
		if err := fine.Omega(f, p[0], p[1], 1, ref); err != nil {
			t.Fatal(err)
		}
		for i := range f {
			// 5e-5: the accuracy we claim for the direct path (measured 1.5e-5
			// at worst; cubic interpolation error falls as h^4).
			rel := math.Abs(got[i]/ref[i] - 1)
			worstGrid = math.Max(worstGrid, rel)
			if rel > 5e-5 {
				t.Errorf("Gmu=%g alpha=%g f=%g: grid 0.04 gives %.8g, grid 0.01 %.8g (rel %.2g)", p[0], p[1], f[i], got[i], ref[i], rel)
			}
		}
	}
}

// TestReconnectionScaling: Omega propto P^(-kappa) (docs/physics.md section 3).
func TestReconnectionScaling(t *testing.T) {
	for _, kappa := range []float64{1, 0.6} {
		s := DefaultSettings()
		s.Kappa = kappa
		d, err := NewDirect(s)
		if err != nil {
			t.Fatal(err)
		}
		f := []float64{1e-9, 1e-8}
		a, b := make([]float64, 2), make([]float64, 2)
		if err := d.Omega(f, 1e-10, 0.1, 1, a); err != nil {
			t.Fatal(err)
		}
		if err := d.Omega(f, 1e-10, 0.1, 0.01, b); err != nil {
			t.Fatal(err)
		}
		for i := range f {
			// Exact up to rounding.
			if want := math.Pow(0.01, -kappa); math.Abs(b[i]/a[i]/want-1) > 1e-12 {
				t.Errorf("kappa=%g: Omega(P=0.01)/Omega(P=1) = %.12g, want %.12g", kappa, b[i]/a[i], want)
			}
		}
	}
}

// TestPhysicalShape: for Gmu = 1e-10, alpha = 0.1, P = 1 the spectrum rises
// below the nHz band and flattens towards the plateau at high frequency, and
// standard-model degrees of freedom lower the high-frequency plateau by
// about Gdof = 0.39 relative to constant ones (docs/physics.md section 3).
func TestPhysicalShape(t *testing.T) {
	sm, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	cs := DefaultSettings()
	cs.Cosmology.DOF = cosmology.DOFConstant
	cd, err := NewDirect(cs)
	if err != nil {
		t.Fatal(err)
	}
	f := []float64{1e-12, 1e-11, 1e-10, 1e-9, 1, 1e1, 1e2, 1e3, 1e4}
	a, b := make([]float64, len(f)), make([]float64, len(f))
	if err := sm.Omega(f, 1e-10, 0.1, 1, a); err != nil {
		t.Fatal(err)
	}
	if err := cd.Omega(f, 1e-10, 0.1, 1, b); err != nil {
		t.Fatal(err)
	}
	for i := range 3 {
		if !(a[i+1] > a[i]) {
			t.Errorf("not rising below the band: Omega(%g) = %g >= Omega(%g) = %g", f[i], a[i], f[i+1], a[i+1])
		}
	}
	// Constant dof: flat to 0.5 % per decade above 1 Hz (the plateau).
	// Standard-model dof: still falling slowly, because the cusp harmonics
	// (weights k^-4/3 up to k = 1e5) reach down to f/1e5 where Gdof is
	// larger; the slope must stay between 0 and 0.05 per decade.
	for i := 5; i < len(f); i++ {
		if math.Abs(b[i]/b[i-1]-1) > 0.005 {
			t.Errorf("constant dof: not flat: Omega(%g)/Omega(%g) = %.4f", f[i], f[i-1], b[i]/b[i-1])
		}
		slope := -math.Log(a[i]/a[i-1]) / math.Ln10
		if !(slope >= 0 && slope < 0.05) {
			t.Errorf("standard-model dof: slope %.4f per decade at %g Hz", slope, f[i])
		}
	}
	// The fundamental mode at 10 kHz is emitted above 1e6 GeV, where Gdof
	// = (106.75/3.38)(3.93/106.75)^(4/3) = 0.39; 3 % covers C_eff's weak
	// dependence on the expansion history.
	v1, _ := sm.Omega1(1e4, 1e-10, 0.1)
	v2, _ := cd.Omega1(1e4, 1e-10, 0.1)
	t.Logf("Omega^(1) standard-model / constant at 10 kHz: %.4f; full sum %.4f", v1/v2, a[len(a)-1]/b[len(b)-1])
	if math.Abs(v1/v2/0.39-1) > 0.03 {
		t.Errorf("dof suppression of Omega^(1) %.4f, want about 0.39", v1/v2)
	}
}

func TestDirectBadInput(t *testing.T) {
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, 1)
	for _, c := range []struct {
		f             []float64
		gmu, alpha, p float64
	}{
		{[]float64{1e-9}, -1, 0.1, 1},
		{[]float64{1e-9}, 1e-10, 0, 1},
		{[]float64{1e-9}, 1e-10, 0.1, 2},
		{[]float64{-1e-9}, 1e-10, 0.1, 1},
		{[]float64{math.NaN()}, 1e-10, 0.1, 1},
	} {
		if err := d.Omega(c.f, c.gmu, c.alpha, c.p, out); err == nil {
			t.Errorf("Omega(%v, %g, %g, %g) succeeded, want error", c.f, c.gmu, c.alpha, c.p)
		}
	}
	bad := DefaultSettings()
	bad.Q = 1
	if _, err := NewDirect(bad); err == nil {
		t.Error("NewDirect with q = 1 succeeded")
	}
}

func BenchmarkDirect30(b *testing.B) {
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		b.Fatal(err)
	}
	f := make([]float64, 30)
	for i := range f {
		f[i] = float64(i+1) / (15 * gw.JulianYear)
	}
	out := make([]float64, len(f))
	for b.Loop() {
		if err := d.Omega(f, 1e-10, 0.1, 1, out); err != nil {
			b.Fatal(err)
		}
	}
}

// TestEulerMaclaurinTail checks the mode sum's Euler-Maclaurin tail
// (docs/physics.md section 12; Abramowitz & Stegun 23.1.30) against the
// brute-force sum of all 1e5 modes on the same interpolated Omega^(1), on a
// grid four times finer than the default so that the trapezoidal rule of
// the tail integral (error about h^2/12, h = 0.01) stays near 5e-7. The
// tolerance, 1e-6 relative, is below the derivative term
// (g'(N) - g'(K))/12 at most points (up to 1.7e-5 here): an error in that
// term, a wrong sign say, changes the sum by twice its size and fails. The
// test requires that some point has a derivative term of at least five
// times the tolerance, so that it keeps that power. Points whose summand
// has its kink (the harmonic k = f/f_low below which Omega^(1)(f/k) is
// zero) within three octaves of K = 32 are left out: the formula assumes a
// smooth summand, and its remainder there is not small (measured 4e-6 at
// Gmu = 1e-6, alpha = 1e-5, f = 1e-10 Hz, where Omega^(1) peaks just above
// its cutoff at k = 217); TestModeSumConvergence covers them with its 5e-5.
func TestEulerMaclaurinTail(t *testing.T) {
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	d.step /= 4
	const tol = 1e-6
	f := []float64{1e-10, 1e-9, 1e-8, 1e-7, 1e-6}
	got := make([]float64, len(f))
	q := d.n.s.Q
	lnK := math.Log(exactModes)
	var largest float64 // largest |derivative term| / sum among the points checked
	for _, p := range [][2]float64{{1e-10, 0.1}, {1e-14, 1e-5}, {1e-6, 1e-5}, {1e-12, 1}} {
		if err := d.Omega(f, p[0], p[1], 1, got); err != nil {
			t.Fatal(err)
		}
		for i, fi := range f {
			if fi/d.fLow < 8*exactModes {
				continue
			}
			var brute float64
			for k := d.n.s.Modes; k >= 1; k-- {
				v, _ := d.om1Interp(math.Log(fi / float64(k)))
				brute += math.Pow(float64(k), -q) * v
			}
			// g'(K) of g(k) = k^(-q) Omega^(1)(f/k); g'(N) is negligible.
			v, dv := d.om1Interp(math.Log(fi) - lnK)
			deriv := math.Abs(math.Exp(-(q+1)*lnK)*(q*v+dv)) / 12 / brute
			largest = math.Max(largest, deriv)
			if rel := math.Abs(got[i]/brute - 1); rel > tol {
				t.Errorf("Gmu=%g alpha=%g f=%g: Euler-Maclaurin %.10g, brute force %.10g (rel %.2g; derivative term %.2g)", p[0], p[1], fi, got[i], brute, rel, deriv)
			}
		}
	}
	if largest < 5*tol {
		t.Errorf("largest derivative term %.2g: the points no longer test it at tolerance %g", largest, tol)
	}
}
