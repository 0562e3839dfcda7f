package cosmicstrings

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"tautline/models/cosmology"
)

func loadMeta(t testing.TB) *MetastableTable {
	t.Helper()
	if len(embeddedMetaTable) == 0 {
		t.Skip("no embedded metastable table; run internal/gentable -model metastable")
	}
	tab, err := LoadMetastableTable(DefaultMetastableSettings(), t.TempDir(), BuildOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

func loadBOS(t testing.TB) *BOSTable {
	t.Helper()
	tab, err := LoadBOSTable(DefaultBOSSettings(), t.TempDir(), BuildOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

// TestBOSTableAgainstDirect: fresh random points (another seed than the
// certificate's) agree with the direct path within 0.01 in ln Omega (the
// required accuracy), and the model's Spectrum equals Table.LnOmega.
func TestBOSTableAgainstDirect(t *testing.T) {
	tab := loadBOS(t)
	if _, err := decodeBOSTable("embedded", embeddedBOSTable, DefaultBOSSettings()); err != nil {
		t.Fatalf("embedded BOS table does not match the default settings: %v", err)
	}
	d, err := NewBOSDirect(DefaultBOSSettings())
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(99, 3))
	f := []float64{1e-10, 1e-9, 3e-8, 1e-6}
	out := make([]float64, len(f))
	m := NewBOSModel(tab)
	sp, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	got := make([]float64, len(f))
	for range 30 {
		lg, lp := -14+8*rng.Float64(), -3*rng.Float64()
		if err := d.Omega(f, math.Pow(10, lg), math.Pow(10, lp), out); err != nil {
			t.Fatal(err)
		}
		if err := sp.LnOmega([]float64{lg, lp}, got); err != nil {
			t.Fatal(err)
		}
		for j := range f {
			v, _ := tab.LnOmega(lg, lp, f[j])
			if e := math.Abs(got[j] - math.Log(out[j])); e > certMaxErr || math.Abs(v-got[j]) > 1e-10 {
				t.Errorf("log10 Gmu=%.3f log10 P=%.3f f=%g: model %.5f, table %.5f, direct %.5f", lg, lp, f[j], got[j], v, math.Log(out[j]))
			}
		}
	}
	if err := sp.LnOmega([]float64{-15, 0}, got); err != ErrOutsideTable {
		t.Errorf("log10 Gmu = -15: %v", err)
	}
	if _, err := m.At([]float64{1e-3}); !errors.Is(err, ErrFrequencyOutsideTable) {
		t.Errorf("At(1e-3 Hz): %v", err)
	}
	theta := []float64{-10, -1}
	if a := testing.AllocsPerRun(50, func() { sp.LnOmega(theta, got) }); a != 0 {
		t.Errorf("BOS LnOmega allocates %g", a)
	}
}

// TestMetastableTableAgainstDirect: fresh random points inside the default
// prior box agree with the direct path within 0.01, zero spectra are -Inf
// in both, and the model is 0-alloc.
func TestMetastableTableAgainstDirect(t *testing.T) {
	tab := loadMeta(t)
	d, err := NewMetastableDirect(DefaultMetastableSettings())
	if err != nil {
		t.Fatal(err)
	}
	m := NewMetastableModel(tab)
	f := []float64{1e-10, 1e-9, 3e-8, 1e-6}
	sp, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	out, got := make([]float64, len(f)), make([]float64, len(f))
	rng := rand.New(rand.NewPCG(98, 4))
	for range 30 {
		lg, sk := -14+8*rng.Float64(), 7+2.5*rng.Float64()
		if err := d.Omega(f, math.Pow(10, lg), sk, out); err != nil {
			t.Fatal(err)
		}
		if err := sp.LnOmega([]float64{lg, sk}, got); err != nil {
			t.Fatal(err)
		}
		for j := range f {
			if out[j] == 0 && math.IsInf(got[j], -1) {
				continue
			}
			if e := math.Abs(got[j] - math.Log(out[j])); !(e <= certMaxErr) {
				t.Errorf("log10 Gmu=%.3f sqrt(kappa)=%.3f f=%g: table %.5f, direct %.5f", lg, sk, f[j], got[j], math.Log(out[j]))
			}
		}
	}
	// sqrt(kappa) = 6: t_s is so early that the cutoff is far above the band.
	if err := sp.LnOmega([]float64{-8, 6}, got); err != nil || !math.IsInf(got[0], -1) || !math.IsInf(got[3], -1) {
		t.Errorf("sqrt(kappa) = 6: %v, %v; want -Inf", got, err)
	}
	if err := sp.LnOmega([]float64{-5, 8}, got); err != ErrOutsideMetastableTable {
		t.Errorf("log10 Gmu = -5: %v", err)
	}
	theta := []float64{-10, 8.2}
	if a := testing.AllocsPerRun(50, func() { sp.LnOmega(theta, got) }); a != 0 {
		t.Errorf("metastable LnOmega allocates %g", a)
	}
}

// TestMetastableTableBelowYLo: below the table's lowest t_s (1e-7 s) the
// cutoff 2 a(t_s)/(alpha t_s) is above the band's 1e-5 Hz, so the model
// returns -Inf there without the table.
func TestMetastableTableBelowYLo(t *testing.T) {
	bg, err := cosmology.New(cosmology.Fiducial())
	if err != nil {
		t.Fatal(err)
	}
	d := &MetastableTable{s: DefaultMetastableSettings(), bg: bg}
	d.lnTLo, d.lnTHi = bg.LnTimeRange()
	if fs := math.Exp(d.lnCutoff(metaYLo * math.Ln10)); !(fs > tableFHi) {
		t.Errorf("f_* at t_s = 1e-7 s is %g Hz, want above %g", fs, tableFHi)
	}
}

func benchSpectrum(b *testing.B, sp interface {
	LnOmega(theta, out []float64) error
}, theta []float64, vary int, lo, step float64) {
	out := make([]float64, 30)
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		theta[vary] = lo + float64(i%60)*step
		if err := sp.LnOmega(theta, out); err != nil {
			b.Fatal(err)
		}
	}
}

func freqs30() []float64 {
	f := make([]float64, 30)
	for i := range f {
		f[i] = float64(i+1) / (15 * 365.25 * 86400)
	}
	return f
}

// BenchmarkBOSLnOmega30 and BenchmarkMetastableLnOmega30 compare with
// BenchmarkTableLnOmega30 (the one-scale model) on the same 30 frequencies.
func BenchmarkBOSLnOmega30(b *testing.B) {
	sp, err := NewBOSModel(loadBOS(b)).At(freqs30())
	if err != nil {
		b.Fatal(err)
	}
	benchSpectrum(b, sp, []float64{-10, -0.4}, 0, -13, 0.1)
}

func BenchmarkMetastableLnOmega30(b *testing.B) {
	sp, err := NewMetastableModel(loadMeta(b)).At(freqs30())
	if err != nil {
		b.Fatal(err)
	}
	benchSpectrum(b, sp, []float64{-10, 8.2}, 0, -13, 0.1)
}

// TestMetastableTableNearToday probes the t_s axis where the spectrum has
// its kink, t_s = t0 (just below it loops decay in the last moments, just
// above nothing decays and the spectrum is the stable one): points with
// t_s from 0.3 t0 to 3 t0 over the whole Gmu range agree with the direct
// path within 0.01 in ln Omega (the certification limit), and for t_s >= t0
// the table returns its top row, so the model equals itself at any larger
// sqrt(kappa).
func TestMetastableTableNearToday(t *testing.T) {
	tab := loadMeta(t)
	d, err := NewMetastableDirect(DefaultMetastableSettings())
	if err != nil {
		t.Fatal(err)
	}
	f := []float64{1e-10, 1e-9, 1e-8, 1e-7, 1e-6}
	sp, err := NewMetastableModel(tab).At(f)
	if err != nil {
		t.Fatal(err)
	}
	out, got, far := make([]float64, len(f)), make([]float64, len(f)), make([]float64, len(f))
	for _, lg := range []float64{-14, -13.9, -12.3, -10.1, -8.7, -6} {
		gmu := math.Pow(10, lg)
		for _, r := range []float64{0.3, 0.6, 0.9, 0.99, 1.01, 3} {
			sk := sqrtKappaOf(gmu, tab.lnTHi+math.Log(r))
			if err := d.Omega(f, gmu, sk, out); err != nil {
				t.Fatal(err)
			}
			if err := sp.LnOmega([]float64{lg, sk}, got); err != nil {
				t.Fatal(err)
			}
			for j := range f {
				if e := math.Abs(got[j] - math.Log(out[j])); !(e <= certMaxErr) {
					t.Errorf("log10 Gmu=%g t_s=%g t0 f=%g: table %.5f, direct %.5f", lg, r, f[j], got[j], math.Log(out[j]))
				}
			}
			if r > 1 {
				if err := sp.LnOmega([]float64{lg, sk + 3}, far); err != nil {
					t.Fatal(err)
				}
				for j := range f {
					if far[j] != got[j] {
						t.Errorf("log10 Gmu=%g f=%g: t_s = %g t0 gives %.8f, much later t_s %.8f; both are the stable spectrum", lg, f[j], r, got[j], far[j])
					}
				}
			}
		}
	}
}

// TestMetastableTableFixedP: the table stores ln Omega at P = 1, so the
// settings' fixed P and Kappa load the embedded table (no build) and enter
// once, as -Kappa ln P; the result agrees with the direct path, which
// applies P^-Kappa to the loop density (docs/physics.md section 3), within
// the certification limit.
func TestMetastableTableFixedP(t *testing.T) {
	if len(embeddedMetaTable) == 0 {
		t.Skip("no embedded metastable table")
	}
	s := DefaultMetastableSettings()
	s.P, s.Kappa = 0.25, 0.6
	if s.TableHash() != DefaultMetastableSettings().TableHash() {
		t.Fatal("TableHash depends on P or Kappa")
	}
	tab, err := LoadMetastableTable(s, t.TempDir(), BuildOptions{
		Progress: func(int, int) {
			t.Fatal("LoadMetastableTable builds a table for P = 0.25 instead of using the embedded one")
		},
	})
	if err != nil {
		t.Fatal(err)
	}
	d, err := NewMetastableDirect(s)
	if err != nil {
		t.Fatal(err)
	}
	f := []float64{1e-9, 1e-8, 1e-7}
	out := make([]float64, len(f))
	for _, sk := range []float64{7.7, 8.3, 9} {
		if err := d.Omega(f, 1e-9, sk, out); err != nil {
			t.Fatal(err)
		}
		for i := range f {
			v, err := tab.LnOmega(-9, sk, f[i])
			if err != nil {
				t.Fatal(err)
			}
			if e := math.Abs(v - math.Log(out[i])); !(e <= certMaxErr) {
				t.Errorf("sqrt(kappa) = %g, f = %g: table %.5f, direct %.5f", sk, f[i], v, math.Log(out[i]))
			}
		}
	}
}
