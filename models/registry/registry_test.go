package registry

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"tautline/models"
	"tautline/models/cosmicstrings"
)

// defaults are the settings the command line starts from.
func defaults(name string) Settings {
	return Settings{
		Name:      name,
		Binaries:  Binaries{Turnover: "none"},
		Strings:   Strings{Q: 4.0 / 3, Gamma: 50, F: 0.1, CEff: "vos", Kappa: 1, Modes: 100000, DOF: "standard-model"},
		Cosmology: Cosmology{H0: 67.4, OmegaM: 0.315, TCMB: 2.7255, Neff: 3.046},
	}
}

func names(m models.Model) []string {
	var out []string
	for _, p := range m.Params() {
		out = append(out, p.Name)
	}
	return out
}

// TestBuild checks every entry of the table against the parameter lists
// the models document (models/binaries and models/cosmicstrings, and
// docs/physics.md sections 2 and 3): the sum lists the strings' parameters
// first.
func TestBuild(t *testing.T) {
	for _, c := range []struct {
		name     string
		turnover string
		want     []string
		data     string
	}{
		{"smbhb", "none", []string{"log10_A", "gamma"}, "demo:smbhb"},
		{"smbhb", "fit", []string{"log10_A", "gamma", "log10_fbend", "kappa"}, "demo:smbhb"},
		{"strings", "none", []string{"log10_Gmu", "log10_alpha", "log10_P"}, "demo:strings"},
		{"strings+smbhb", "none", []string{"log10_Gmu", "log10_alpha", "log10_P", "log10_A", "gamma"}, "demo:strings"},
		{"strings-metastable", "none", []string{"log10_Gmu", "sqrt_kappa_m"}, "demo:strings"},
		{"strings-metastable+smbhb", "none", []string{"log10_Gmu", "sqrt_kappa_m", "log10_A", "gamma"}, "demo:strings"},
		{"strings-bos", "none", []string{"log10_Gmu", "log10_P"}, "demo:strings"},
		{"strings-bos+smbhb", "none", []string{"log10_Gmu", "log10_P", "log10_A", "gamma"}, "demo:strings"},
	} {
		s := defaults(c.name)
		s.Binaries.Turnover = c.turnover
		m, err := Build(s, nil)
		if err != nil {
			t.Fatalf("%s (turnover %s): %v", c.name, c.turnover, err)
		}
		if m.Name() != c.name || !slices.Equal(names(m), c.want) {
			t.Errorf("%s (turnover %s): model %s with %v, want %v", c.name, c.turnover, m.Name(), names(m), c.want)
		}
		if got := DefaultData(c.name); got != c.data {
			t.Errorf("DefaultData(%s) = %s, want %s", c.name, got, c.data)
		}
	}
	if !slices.Equal(Names(), []string{"smbhb", "strings", "strings+smbhb", "strings-metastable", "strings-metastable+smbhb", "strings-bos", "strings-bos+smbhb"}) {
		t.Errorf("Names() = %v", Names())
	}
}

// TestBuildErrors checks that settings a user can get wrong are ErrUsage
// errors naming the setting.
func TestBuildErrors(t *testing.T) {
	for _, c := range []struct {
		what string
		edit func(*Settings)
		want string
	}{
		{"unknown model", func(s *Settings) { s.Name = "loops" }, `model "loops": unknown`},
		{"H0 out of range", func(s *Settings) { s.Cosmology.H0 = 0 }, "cosmology"},
		{"Omega_m of 1", func(s *Settings) { s.Cosmology.OmegaM = 1 }, "cosmology"},
		{"fixed turnover without f_bend", func(s *Settings) { s.Binaries.Turnover = "fixed" }, "--f-bend"},
		{"unknown turnover", func(s *Settings) { s.Binaries.Turnover = "soft" }, `--turnover "soft"`},
		{"metastable alpha above 1", func(s *Settings) { s.Name, s.Strings.Alpha = "strings-metastable", 2 }, "Alpha must be in (0, 1]"},
		{"metastable P above 1", func(s *Settings) { s.Name, s.Strings.P = "strings-metastable", 1.5 }, "P must be in (0, 1]"},
		{"metastable step C_eff", func(s *Settings) { s.Name, s.Strings.CEff = "strings-metastable", "step" }, "no table"},
		{"metastable direct", func(s *Settings) { s.Name, s.Strings.Direct = "strings-metastable", true }, "no direct-quadrature model"},
		{"BOS direct", func(s *Settings) { s.Name, s.Strings.Direct = "strings-bos", true }, "no direct-quadrature model"},
		{"BOS Gamma", func(s *Settings) { s.Name, s.Strings.Gamma = "strings-bos", -1 }, "Gamma must be in (0, 1e4)"},
	} {
		s := defaults("smbhb")
		c.edit(&s)
		_, err := Build(s, nil)
		if !errors.Is(err, ErrUsage) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want a usage error mentioning %q", c.what, err, c.want)
		}
	}
}

func TestResolvePriors(t *testing.T) {
	m, err := Build(defaults("smbhb"), nil)
	if err != nil {
		t.Fatal(err)
	}
	ps, err := ResolvePriors(m, map[string]string{"log10_A": "uniform(-16, -13)"})
	if err != nil {
		t.Fatal(err)
	}
	// uniform(-16, -13) has bounds -16 and -13 by definition.
	if lo, hi := ps[0].Bounds(); lo != -16 || hi != -13 {
		t.Errorf("log10_A prior bounds [%g, %g], want [-16, -13]", lo, hi)
	}
	if ps[1].String() != m.Params()[1].Prior.String() {
		t.Errorf("gamma prior %s, want the default %s", ps[1], m.Params()[1].Prior)
	}
	if _, err := ResolvePriors(m, map[string]string{"log10_Gmu": "uniform(-12, -8)"}); !errors.Is(err, ErrUsage) {
		t.Errorf("prior of a parameter the model lacks: %v, want a usage error", err)
	}
	if _, err := ResolvePriors(m, map[string]string{"gamma": "uniform(1)"}); err == nil || !strings.HasPrefix(err.Error(), "model.priors.gamma") {
		t.Errorf("malformed prior: %v, want an error naming model.priors.gamma", err)
	}
}

func TestParseNumber(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"13/3", 13.0 / 3, true}, // the circular-binary index gamma = 13/3 (Phinney 2001)
		{" -14.6 ", -14.6, true},
		{"1e-9", 1e-9, true},
		{"1/0", 0, false},
		{"nan", 0, false},
		{"inf", 0, false},
		{"x", 0, false},
	} {
		got, err := ParseNumber(c.in)
		if (err == nil) != c.ok || (c.ok && got != c.want) {
			t.Errorf("ParseNumber(%q) = %g, %v; want %g (ok %v)", c.in, got, err, c.want, c.ok)
		}
	}
}

func TestParamValues(t *testing.T) {
	m, err := Build(defaults("smbhb"), nil)
	if err != nil {
		t.Fatal(err)
	}
	theta, err := ParamValues(m, []string{"log10_A=-15"})
	if err != nil {
		t.Fatal(err)
	}
	if theta[0] != -15 || theta[1] != 13.0/3 {
		t.Errorf("ParamValues = %v, want [-15 13/3]", theta)
	}
	for _, bad := range []string{"log10_A", "log10_Gmu=-10", "gamma=x"} {
		if _, err := ParamValues(m, []string{bad}); !errors.Is(err, ErrUsage) {
			t.Errorf("ParamValues(%q): %v, want a usage error", bad, err)
		}
	}
	s := defaults("smbhb")
	s.Binaries.Turnover = "fit"
	mt, err := Build(s, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := ParamValues(mt, nil); err == nil || !strings.Contains(err.Error(), "log10_fbend has no default") {
		t.Errorf("turnover parameters without defaults: %v", err)
	}
}

// FuzzParseNumber checks that ParseNumber never panics and accepts only
// finite numbers.
func FuzzParseNumber(f *testing.F) {
	for _, s := range []string{"13/3", "-14.6", "1/0", "nan", "1e400", "/", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		x, err := ParseNumber(s)
		if err == nil && (math.IsNaN(x) || math.IsInf(x, 0)) && !strings.Contains(s, "/") {
			t.Errorf("ParseNumber(%q) = %g", s, x)
		}
	})
}

// lnOmega builds the model named in s and evaluates it at theta.
func lnOmega(t *testing.T, s Settings, f, theta []float64) []float64 {
	t.Helper()
	m, err := Build(s, nil)
	if err != nil {
		t.Fatalf("%s: %v", s.Name, err)
	}
	sp, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, len(f))
	if err := sp.LnOmega(theta, out); err != nil {
		t.Fatalf("%s at %v: %v", s.Name, theta, err)
	}
	return out
}

// TestStringModelSpectra evaluates the string models the registry builds
// against references outside the registry:
//   - strings-metastable with t_s after today (sqrt(kappa) = 9.5 at
//     Gmu = 1e-10; docs/physics.md section 21) is the stable one-scale
//     spectrum at alpha = 0.1, P = 1: the two certified tables, each
//     within 0.01 of the same direct path, agree within 0.02;
//   - strings-bos matches cosmicstrings.BOSDirect (its quadrature) within
//     the certification limit 0.01 (docs/physics.md section 22);
//   - the fixed P of strings-metastable and the sampled P of strings-bos
//     enter exactly as -kappa ln P (section 3), checked with kappa = 0.6;
//   - strings-bos+smbhb is the log-sum-exp of its parts (models.Sum).
func TestStringModelSpectra(t *testing.T) {
	f := []float64{2e-9, 1e-8, 3e-8}
	stable := lnOmega(t, defaults("strings"), f, []float64{-10, -1, 0})
	meta := lnOmega(t, defaults("strings-metastable"), f, []float64{-10, 9.5})
	for i := range f {
		// 0.02: twice the certification limit of each table.
		if math.Abs(meta[i]-stable[i]) > 0.02 {
			t.Errorf("f = %g: metastable with t_s > t0 %.5f, stable %.5f", f[i], meta[i], stable[i])
		}
	}

	s := defaults("strings-metastable")
	s.Strings.Kappa, s.Strings.P = 0.6, 0.25
	metaP := lnOmega(t, s, f, []float64{-10, 8.3})
	meta1 := lnOmega(t, defaults("strings-metastable"), f, []float64{-10, 8.3})
	for i := range f {
		// exact up to rounding: the table adds -kappa ln P
		if d := metaP[i] - meta1[i]; math.Abs(d+0.6*math.Log(0.25)) > 1e-12 {
			t.Errorf("f = %g: metastable P = 0.25, kappa = 0.6 shifts ln Omega by %.6g, want %.6g", f[i], d, -0.6*math.Log(0.25))
		}
	}

	d, err := cosmicstrings.NewBOSDirect(BOSSettings(defaults("strings-bos")))
	if err != nil {
		t.Fatal(err)
	}
	want := make([]float64, len(f))
	if err := d.Omega(f, 1e-10, 0.1, want); err != nil {
		t.Fatal(err)
	}
	sb := defaults("strings-bos")
	sb.Strings.Kappa = 0.6
	bos := lnOmega(t, sb, f, []float64{-10, -1})
	for i := range f {
		// The direct path uses kappa = 1 (the default): rescale to 0.6.
		w := math.Log(want[i]) - 0.4*math.Log(10)
		if math.Abs(bos[i]-w) > 0.01 {
			t.Errorf("f = %g: strings-bos %.5f, direct %.5f", f[i], bos[i], w)
		}
	}

	bin := lnOmega(t, defaults("smbhb"), f, []float64{-14.6, 13.0 / 3})
	bos1 := lnOmega(t, defaults("strings-bos"), f, []float64{-10, -1})
	both := lnOmega(t, defaults("strings-bos+smbhb"), f, []float64{-10, -1, -14.6, 13.0 / 3})
	for i := range f {
		hi, lo := math.Max(bos1[i], bin[i]), math.Min(bos1[i], bin[i])
		if w := hi + math.Log1p(math.Exp(lo-hi)); math.Abs(both[i]-w) > 1e-12 {
			t.Errorf("f = %g: strings-bos+smbhb %.12g, log-sum-exp of the parts %.12g", f[i], both[i], w)
		}
	}
}

// TestMetastableDefaults: settings without Alpha and P (as older callers
// give them) take alpha = 0.1 and P = 1.
func TestMetastableDefaults(t *testing.T) {
	ms := MetastableSettings(defaults("strings-metastable"))
	if ms.Alpha != 0.1 || ms.P != 1 {
		t.Errorf("alpha = %g, P = %g; want 0.1 and 1", ms.Alpha, ms.P)
	}
	s := defaults("strings-metastable")
	s.Strings.Alpha, s.Strings.P = 0.05, 0.5
	if ms := MetastableSettings(s); ms.Alpha != 0.05 || ms.P != 0.5 {
		t.Errorf("alpha = %g, P = %g; want 0.05 and 0.5", ms.Alpha, ms.P)
	}
}
