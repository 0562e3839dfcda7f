package binaries

import (
	"math"
	"strings"
	"testing"

	"tautline/models"
	"tautline/priors"
)

const fyr = 1 / (365.25 * 86400.0) // f_yr = 1/(Julian year), docs/physics.md section 1

func spec(t testing.TB, o Options, f []float64) models.Spectrum {
	t.Helper()
	m, err := New(o)
	if err != nil {
		t.Fatal(err)
	}
	s, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestClosedForm evaluates Omega_GW = (2 pi^2/(3 H0^2)) f^2 h_c^2 with h_c
// from the power law (Phinney 2001; docs/physics.md sections 4 and 5) at points
// worked out by hand; the intermediate factors are written beside each case.
// Tolerance 1e-9 relative: the hand values keep 11 significant digits.
func TestClosedForm(t *testing.T) {
	cases := []struct {
		name  string
		o     Options
		f     float64
		theta []float64
		omega float64
	}{
		// h_c = 1e-15 at f_yr; 2 pi^2/3 = 6.5797362674, f/H0 = 1.4507302992e10:
		// 6.5797362674 * (1.4507302992e10 * 1e-15)^2 = 1.3847834023e-9.
		{"A=1e-15 at f_yr", Options{}, fyr, []float64{-15, 13.0 / 3}, 1.3847834023e-9},
		// f/f_yr = 1e-8/3.1688087814e-8 = 0.315576, ^(-1/2) = 1.7801148225,
		// h_c = 10^-14.5 * 1.7801148225 = 5.6292173358e-15,
		// f h_c/H0 = 2.5771438775e-5, Omega = 6.5797362674 * 6.6416705655e-10
		// = 4.3700440696e-9.
		{"gamma=4 at 10 nHz", Options{}, 1e-8, []float64{-14.5, 4}, 4.3700440696e-9},
		// Turnover: f = 2 nHz, f_bend = 10 nHz, kappa = 10/3: (f_bend/f)^kappa
		// = 5^(10/3) = 213.7469933346, factor 1/sqrt(214.7469933346) =
		// 0.0682394; (f/f_yr)^(-2/3) = 0.0631152^(-2/3) = 6.3082760749;
		// h_c = 1e-15 * 6.3082760749 * 0.0682394 = 4.3047421774e-16;
		// Omega = 6.5797362674 * (2e-9 * 4.3047421774e-16 / 2.1842852411e-18)^2
		// = 1.0222192756e-12.
		{"turnover", Options{Turnover: true, FitTurnover: true}, 2e-9, []float64{-15, 13.0 / 3, -8, 10.0 / 3}, 1.0222192756e-12},
	}
	for _, c := range cases {
		s := spec(t, c.o, []float64{c.f})
		out := []float64{0}
		if err := s.LnOmega(c.theta, out); err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if got := math.Exp(out[0]); math.Abs(got-c.omega) > 1e-9*c.omega {
			t.Errorf("%s: Omega = %.11g, hand-worked %.11g", c.name, got, c.omega)
		}
	}
}

// TestSlopes checks the logarithmic slopes the closed form implies:
// d ln h_c / d ln f = (3 - gamma)/2, so d ln Omega / d ln f = 5 - gamma; with
// a turnover the slope is unchanged far above f_bend, gains kappa far below
// it, and at f = f_bend Omega is exactly half the plain power law.
// ln Omega is exactly linear in ln f without the turnover, so its slope from
// two points agrees to rounding (1e-9 absolute covers the cancellation in
// the difference of two values of order 20 over a span of ln 10).
func TestSlopes(t *testing.T) {
	f := []float64{1e-12, 1e-11, 1e-9, 1e-8, 1e-4, 1e-3}
	for _, gamma := range []float64{0, 13.0 / 3, 5, 7} {
		plain := spec(t, Options{}, f)
		turn := spec(t, Options{Turnover: true, FitTurnover: true}, f)
		a, b := make([]float64, len(f)), make([]float64, len(f))
		if err := plain.LnOmega([]float64{-15, gamma}, a); err != nil {
			t.Fatal(err)
		}
		// Bend at 1e-7.5 Hz, kappa = 3: by 1e-11 Hz the factor (f_bend/f)^kappa
		// is 1e10.5, and by 1e-4 Hz it is 1e-10.5, so the asymptotic slopes hold
		// to 1e-10 at both ends.
		if err := turn.LnOmega([]float64{-15, gamma, -7.5, 3}, b); err != nil {
			t.Fatal(err)
		}
		slope := func(v []float64, i, j int) float64 { return (v[j] - v[i]) / math.Log(f[j]/f[i]) }
		for i := 0; i+1 < len(f); i += 2 {
			if got := slope(a, i, i+1); math.Abs(got-(5-gamma)) > 1e-9 {
				t.Errorf("gamma=%g: d ln Omega/d ln f = %.12g on [%g, %g], want %g", gamma, got, f[i], f[i+1], 5-gamma)
			}
		}
		// Asymptotic slopes with the turnover, tolerance 1e-9: the neglected
		// (f/f_bend)^kappa or (f_bend/f)^kappa term is below 1e-10 there.
		if got := slope(b, 0, 1); math.Abs(got-(5-gamma+3)) > 1e-9 {
			t.Errorf("gamma=%g turnover: low-f slope %.12g, want %g", gamma, got, 5-gamma+3)
		}
		if got := slope(b, 4, 5); math.Abs(got-(5-gamma)) > 1e-9 {
			t.Errorf("gamma=%g turnover: high-f slope %.12g, want %g", gamma, got, 5-gamma)
		}
	}
	// At the bend the factor (1 + 1)^(-1/2) on h_c halves Omega.
	fb := []float64{math.Pow(10, -8.25)}
	p, q := []float64{0}, []float64{0}
	if err := spec(t, Options{}, fb).LnOmega([]float64{-14, 3}, p); err != nil {
		t.Fatal(err)
	}
	if err := spec(t, Options{Turnover: true, FBend: fb[0], Kappa: 2.5}, fb).LnOmega([]float64{-14, 3, -8.25, 2.5}, q); err != nil {
		t.Fatal(err)
	}
	if d := p[0] - q[0]; math.Abs(d-math.Ln2) > 1e-12 {
		t.Errorf("at f_bend: ln Omega drops by %.15g, want ln 2", d)
	}
}

func TestParams(t *testing.T) {
	m, err := New(Options{FixGamma: true})
	if err != nil {
		t.Fatal(err)
	}
	ps := m.Params()
	if len(ps) != 2 || ps[0].Name != "log10_A" || ps[1].Name != "gamma" || m.Name() != "smbhb" {
		t.Fatalf("params %v, name %q", ps, m.Name())
	}
	if fx, ok := ps[1].Prior.(priors.PointMass); !ok || fx.FixedValue() != 13.0/3 {
		t.Errorf("FixGamma: gamma prior %v, want fixed(13/3)", ps[1].Prior)
	}
	if ps[0].Prior != (priors.Uniform{Min: -18, Max: -11}) {
		t.Errorf("log10_A prior %v", ps[0].Prior)
	}
	m, err = New(Options{Turnover: true, FBend: 1e-8})
	if err != nil {
		t.Fatal(err)
	}
	ps = m.Params()
	if len(ps) != 4 || ps[2].Name != "log10_fbend" || ps[3].Name != "kappa" {
		t.Fatalf("turnover params %v", ps)
	}
	if ps[2].Prior != (priors.Fixed{Value: -8}) || ps[3].Prior != (priors.Fixed{Value: 10.0 / 3}) {
		t.Errorf("fixed turnover priors %v, %v", ps[2].Prior, ps[3].Prior)
	}
	for _, p := range ps {
		if p.Label == "" || p.Doc == "" || priors.Validate(p.Prior) != nil {
			t.Errorf("param %q incomplete: %+v", p.Name, p)
		}
	}
}

func TestErrors(t *testing.T) {
	for _, c := range []struct {
		o    Options
		want string
	}{
		{Options{H0: -1}, "H0"},
		{Options{H0: 67.4}, "gw.H0SI"},
		{Options{Turnover: true}, "FBend"},
		{Options{FitTurnover: true}, "without Turnover"},
		{Options{Turnover: true, FBend: 1e-8, Kappa: math.NaN()}, "Kappa"},
	} {
		if _, err := New(c.o); err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "binaries: ") {
			t.Errorf("New(%+v): error %v, want one mentioning %q", c.o, err, c.want)
		}
	}
	m, _ := New(Options{})
	for _, f := range [][]float64{nil, {-1}, {2e-9, 1e-9}, {math.Inf(1)}} {
		if _, err := m.At(f); err == nil {
			t.Errorf("At(%v): no error", f)
		}
	}
	s, _ := m.At([]float64{1e-9, 2e-9})
	out := make([]float64, 2)
	if err := s.LnOmega([]float64{-15}, out); err == nil {
		t.Error("short theta accepted")
	}
	if err := s.LnOmega([]float64{-15, 4}, out[:1]); err == nil {
		t.Error("short out accepted")
	}
	if err := s.LnOmega([]float64{math.NaN(), 4}, out); err == nil {
		t.Error("NaN accepted")
	}
}

func TestNoAlloc(t *testing.T) {
	f := make([]float64, 30)
	for i := range f {
		f[i] = float64(i+1) / (15 * 365.25 * 86400)
	}
	s := spec(t, Options{Turnover: true, FitTurnover: true}, f)
	out := make([]float64, len(f))
	theta := []float64{-14.6, 13.0 / 3, -8.5, 10.0 / 3}
	if n := testing.AllocsPerRun(100, func() { _ = s.LnOmega(theta, out) }); n != 0 {
		t.Errorf("LnOmega allocates %v times per call", n)
	}
}

// BenchmarkLnOmega30 evaluates the plain power law at 30 bins f_i = i/T of
// a 15-year span.
func BenchmarkLnOmega30(b *testing.B) {
	for _, turnover := range []bool{false, true} {
		name := "powerlaw"
		theta := []float64{-14.6, 13.0 / 3}
		if turnover {
			name, theta = "turnover", append(theta, -8.5, 10.0/3)
		}
		b.Run(name, func(b *testing.B) {
			f := make([]float64, 30)
			for i := range f {
				f[i] = float64(i+1) / (15 * 365.25 * 86400)
			}
			s := spec(b, Options{Turnover: turnover, FitTurnover: turnover}, f)
			out := make([]float64, len(f))
			b.ReportAllocs()
			for b.Loop() {
				if err := s.LnOmega(theta, out); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
