package cosmicstrings

import (
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync/atomic"
	"testing"

	"tautline/models"
)

func defaultTable(t testing.TB) *Table {
	t.Helper()
	tab, err := LoadTable(DefaultSettings(), t.TempDir(), BuildOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

// TestEmbeddedTableCurrent checks that the compiled-in table was built for
// the current default settings (and code version). If this fails, run
// go run ./models/cosmicstrings/internal/gentable -o models/cosmicstrings/defaulttable.bin
func TestEmbeddedTableCurrent(t *testing.T) {
	if _, err := decodeTable("embedded table", embeddedTable, DefaultSettings()); err != nil {
		t.Fatalf("embedded table does not match DefaultSettings(): %v", err)
	}
}

// TestTableOffGrid compares the embedded table afresh with the direct path
// at the points its interpolation serves worst: the centres of grid cells
// (half a step from the nodes in log10 Gmu, log10 alpha and ln f) near the
// corners and the middle of the domain, at two reconnection
// probabilities. ln Omega must agree within 0.01, the accuracy the table
// promises (certMaxErr). The table's stored certificate is not consulted.
func TestTableOffGrid(t *testing.T) {
	tab := defaultTable(t)
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	// Cell centres: node k sits at lo + k step, so lo + (k + 1/2) step is
	// half-way between two nodes.
	mid := func(lo, step float64, k int) float64 { return lo + (float64(k)+0.5)*step }
	nG := int(math.Round((tableGHi - tableGLo) / tableGStep))
	nA := int(math.Round((tableAHi - tableALo) / tableAStep))
	var f []float64
	for k := 3; ; k += 9 {
		v := math.Exp(math.Log(tableFLo) + (float64(k)+0.5)*tableLnFStep)
		if v > certBandHi {
			break
		}
		if v >= certBandLo {
			f = append(f, v)
		}
	}
	ref := make([]float64, len(f))
	worst := 0.0
	for _, ig := range []int{0, nG / 2, nG - 1} {
		for _, ia := range []int{0, nA / 2, nA - 1} {
			for _, lp := range []float64{0, -2.15} {
				lg, la := mid(tableGLo, tableGStep, ig), mid(tableALo, tableAStep, ia)
				if err := d.Omega(f, math.Pow(10, lg), math.Pow(10, la), math.Pow(10, lp), ref); err != nil {
					t.Fatal(err)
				}
				for j := range f {
					v, err := tab.LnOmega(lg, la, lp, f[j])
					if err != nil {
						t.Fatal(err)
					}
					e := math.Abs(v - math.Log(ref[j]))
					worst = math.Max(worst, e)
					if !(e <= certMaxErr) {
						t.Errorf("log10 Gmu=%.2f log10 alpha=%.2f log10 P=%.2f f=%.4g: table %.5f, direct %.5f", lg, la, lp, f[j], v, math.Log(ref[j]))
					}
				}
			}
		}
	}
	t.Logf("worst |table - direct| in ln Omega at %d cell centres x %d frequencies: %.3g", 18, len(f), worst)
	if len(f) < 5 {
		t.Errorf("only %d frequencies between %g and %g Hz", len(f), certBandLo, certBandHi)
	}
}

// TestEmbeddedTableReproducible recomputes 24 random grid nodes with the
// parallel builder and compares them with the embedded table, so that a
// change to the physics without regenerating the table is caught.
func TestEmbeddedTableReproducible(t *testing.T) {
	tab := defaultTable(t)
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	fresh := newEmptyTable(DefaultSettings())
	rng := rand.New(rand.NewPCG(11, 12))
	nodes := make([]int, 24)
	for i := range nodes {
		nodes[i] = rng.IntN(fresh.nG * fresh.nA)
	}
	if err := fresh.computeNodes(d, 2, nodes, nil); err != nil {
		t.Fatal(err)
	}
	for _, j := range nodes {
		for i := j * fresh.nF; i < (j+1)*fresh.nF; i++ {
			// 1e-5: float32 storage (ln Omega about -20 rounds to 2e-6)
			// and last-bit differences between platforms.
			if math.Abs(float64(fresh.data[i]-tab.data[i])) > 1e-5 {
				t.Fatalf("node %d, ln f index %d: fresh %.7f, embedded %.7f; regenerate the table", j, i-j*fresh.nF, fresh.data[i], tab.data[i])
			}
		}
	}
}

// TestTableAgainstDirect is the fast path's acceptance test: at 200 fresh
// random points inside the default prior box (Gmu 1e-14..1e-6, alpha
// 1e-5..1, P 1e-3..1) and random frequencies in 1e-10..1e-6 Hz, the table's
// ln Omega agrees with the direct path within 0.01 (the accuracy the
// table promises, certMaxErr); we also require the 99th percentile below 0.002.
func TestTableAgainstDirect(t *testing.T) {
	tab := defaultTable(t)
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(20261201, 2))
	var errs []float64
	f := make([]float64, 4)
	out := make([]float64, len(f))
	n := 200
	if testing.Short() {
		n = 40
	}
	for range n {
		lg := -14 + 8*rng.Float64()
		la := -5 + 5*rng.Float64()
		lp := -3 * rng.Float64()
		for j := range f {
			f[j] = 1e-10 * math.Pow(1e4, rng.Float64())
		}
		slices.Sort(f)
		if err := d.Omega(f, math.Pow(10, lg), math.Pow(10, la), math.Pow(10, lp), out); err != nil {
			t.Fatal(err)
		}
		for j := range f {
			v, err := tab.LnOmega(lg, la, lp, f[j])
			if err != nil {
				t.Fatal(err)
			}
			e := math.Abs(v - math.Log(out[j]))
			errs = append(errs, e)
			if e > certMaxErr {
				t.Errorf("log10 Gmu=%.3f log10 alpha=%.3f log10 P=%.3f f=%.3g: table %.5f, direct %.5f", lg, la, lp, f[j], v, math.Log(out[j]))
			}
		}
	}
	slices.Sort(errs)
	p99 := errs[int(0.99*float64(len(errs)))]
	t.Logf("table vs direct over %d comparisons: max %.3g, p99 %.3g", len(errs), errs[len(errs)-1], p99)
	if p99 > 0.002 {
		t.Errorf("p99 error %.3g > 0.002", p99)
	}
}

// TestModelSpectrum checks the Model's fast Spectrum against Table.LnOmega
// (the same interpolation computed in another order) and its domain errors.
func TestModelSpectrum(t *testing.T) {
	m := NewModel(defaultTable(t))
	if m.Name() != "strings" {
		t.Errorf("Name = %q", m.Name())
	}
	want := []string{"log10_Gmu", "log10_alpha", "log10_P"}
	bounds := [][2]float64{{-14, -6}, {-5, 0}, {-3, 0}}
	for i, p := range m.Params() {
		lo, hi := p.Prior.Bounds()
		if p.Name != want[i] || p.Label == "" || lo != bounds[i][0] || hi != bounds[i][1] {
			t.Errorf("param %d = %+v, want %s on [%g, %g]", i, p, want[i], bounds[i][0], bounds[i][1])
		}
	}
	f := []float64{2e-9, 5e-9, 1e-8, 3e-8, 1e-7}
	sp, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, len(f))
	theta := []float64{-10.3, -1.7, -0.4}
	if err := sp.LnOmega(theta, out); err != nil {
		t.Fatal(err)
	}
	for j := range f {
		v, _ := m.table.LnOmega(theta[0], theta[1], theta[2], f[j])
		// Same cubic weights, different summation order: rounding only.
		if math.Abs(out[j]-v) > 1e-10 {
			t.Errorf("f=%g: Spectrum %.12f, Table.LnOmega %.12f", f[j], out[j], v)
		}
	}
	for _, bad := range [][]float64{{-14.1, -1, 0}, {-10, 0.1, 0}, {-10, -1, 0.1}, {math.NaN(), -1, 0}} {
		if err := sp.LnOmega(bad, out); err != ErrOutsideTable {
			t.Errorf("LnOmega(%v) = %v, want ErrOutsideTable", bad, err)
		}
	}
	var _ models.Model = m
}

// TestFrequencyOutsideTable: a frequency outside the table's band is
// reported as such (ErrFrequencyOutsideTable, naming the frequency and the
// band), not as parameters outside the domain; the band's edges are
// accepted.
func TestFrequencyOutsideTable(t *testing.T) {
	tab := defaultTable(t)
	m := NewModel(tab)
	for _, c := range []struct {
		f       []float64
		bad     float64 // 0: accepted
		wantMsg string
	}{
		{[]float64{1e-3}, 1e-3, "strings: frequency 0.001 Hz is outside the table's range [1e-11, 1e-05] Hz"},
		{[]float64{1e-8, 1e-12}, 1e-12, "frequency 1e-12 Hz is outside"},
		{[]float64{1e-9, 2e-5, 1e-7}, 2e-5, "frequency 2e-05 Hz is outside"},
		{[]float64{tableFLo, tableFHi}, 0, ""},
	} {
		_, err := m.At(c.f)
		if c.bad == 0 {
			if err != nil {
				t.Errorf("At(%g): %v, want the band's edges accepted", c.f, err)
			}
			continue
		}
		if !errors.Is(err, ErrFrequencyOutsideTable) || errors.Is(err, ErrOutsideTable) {
			t.Errorf("At(%g) error = %v, want ErrFrequencyOutsideTable only", c.f, err)
			continue
		}
		if msg := err.Error(); !strings.Contains(msg, c.wantMsg) || !strings.Contains(msg, "direct path") {
			t.Errorf("At(%g) error %q: want it to contain %q and point to the direct path", c.f, msg, c.wantMsg)
		}
		if _, err := tab.LnOmega(-10, -1, 0, c.bad); !errors.Is(err, ErrFrequencyOutsideTable) {
			t.Errorf("Table.LnOmega at %g Hz: %v, want ErrFrequencyOutsideTable", c.bad, err)
		}
	}
	// Parameters outside the domain keep their own error even at a bad
	// frequency.
	if _, err := tab.LnOmega(-15, -1, 0, 1e-3); err != ErrOutsideTable {
		t.Errorf("Table.LnOmega(log10 Gmu = -15, 1e-3 Hz) = %v, want ErrOutsideTable", err)
	}
}

// TestDirectModel: the direct model agrees with the table model within the
// certified error.
func TestDirectModel(t *testing.T) {
	dm, err := NewDirectModel(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	tm := NewModel(defaultTable(t))
	f := []float64{3e-9, 3e-8}
	a, _ := dm.At(f)
	b, _ := tm.At(f)
	x, y := make([]float64, 2), make([]float64, 2)
	theta := []float64{-9.2, -2.3, -1.1}
	if err := a.LnOmega(theta, x); err != nil {
		t.Fatal(err)
	}
	if err := b.LnOmega(theta, y); err != nil {
		t.Fatal(err)
	}
	for i := range f {
		if math.Abs(x[i]-y[i]) > certMaxErr {
			t.Errorf("f=%g: direct %.5f, table %.5f", f[i], x[i], y[i])
		}
	}
	if err := a.LnOmega([]float64{-1, -1, 0}, x); err != ErrOutsidePhysical {
		t.Errorf("direct LnOmega at Gmu = 0.1: %v, want ErrOutsidePhysical", err)
	}
}

// TestTableFileRoundTrip writes, reads and rejects tampered or mismatched
// files; LoadTable rebuilds nothing when a valid cache file exists.
func TestTableFileRoundTrip(t *testing.T) {
	tab := defaultTable(t)
	dir := t.TempDir()
	path := filepath.Join(dir, "x.tbl")
	if err := tab.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	back, err := ReadTable(path, DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(back.data, tab.data) || back.Certificate() != tab.Certificate() {
		t.Error("round trip changed the table")
	}
	other := DefaultSettings()
	other.Q = QKinks
	if _, err := ReadTable(path, other); err == nil {
		t.Error("ReadTable accepted a table built for other settings")
	}
	// Kappa does not enter the table: the file serves kappa = 0.6, and the
	// table read carries that kappa.
	other = DefaultSettings()
	other.Kappa = 0.6
	if back, err := ReadTable(path, other); err != nil || back.Settings().Kappa != 0.6 {
		t.Errorf("ReadTable with Kappa = 0.6: %v", err)
	}
	b, _ := os.ReadFile(path)
	b[len(b)/2] ^= 1
	if _, err := decodeTable("tampered", b, DefaultSettings()); err == nil {
		t.Error("decodeTable accepted a corrupted file")
	}
	// A valid cache file is used as is (the embedded table is skipped).
	cp, err := CachePath(DefaultSettings(), dir)
	if err != nil {
		t.Fatal(err)
	}
	if err := tab.WriteFile(cp); err != nil {
		t.Fatal(err)
	}
	if _, err := LoadTable(DefaultSettings(), dir, BuildOptions{NoEmbedded: true}); err != nil {
		t.Fatal(err)
	}
}

func TestStepRejected(t *testing.T) {
	s := DefaultSettings()
	s.CEff = CEffStep
	if _, err := LoadTable(s, t.TempDir(), BuildOptions{}); err == nil {
		t.Error("LoadTable accepted the step C_eff")
	}
}

func TestSettingsHash(t *testing.T) {
	a := DefaultSettings()
	b := DefaultSettings()
	b.Cosmology.DOF = "" // normalised to the default
	if a.Hash() != b.Hash() {
		t.Error("empty DOF hashes differently from standard-model")
	}
	for _, c := range []struct {
		mod       func(*Settings)
		sameTable bool // the table at P = 1 is unchanged
	}{
		{func(s *Settings) { s.Q = QKinks }, false},
		{func(s *Settings) { s.Modes = 0 }, false},
		{func(s *Settings) { s.Cosmology.H0 = 70 }, false},
		{func(s *Settings) { s.Kappa = 0.6 }, true},
		{func(s *Settings) { s.Kappa = 0 }, true},
	} {
		s := DefaultSettings()
		c.mod(&s)
		if s.Hash() == a.Hash() {
			t.Errorf("settings %v hash equal to default", s)
		}
		if got := s.TableHash() == a.TableHash(); got != c.sameTable {
			t.Errorf("settings %v: table hash equal to default's: %v, want %v", s, got, c.sameTable)
		}
	}
	// Tables built before TableHash existed were keyed by Hash at kappa = 1.
	if a.TableHash() != a.Hash() {
		t.Error("TableHash of the default settings differs from Hash: the embedded table and old caches would be rebuilt")
	}
}

// TestKappaSharesTable: the table stores ln Omega at P = 1, so a model with
// kappa = 0.6 uses the embedded default table (no build, nothing cached),
// and its ln Omega is that of P = 1 shifted by exactly -0.6 ln P (the
// P^(-kappa) scaling of docs/physics.md section 3).
func TestKappaSharesTable(t *testing.T) {
	s := DefaultSettings()
	s.Kappa = 0.6
	dir := t.TempDir()
	var progress atomic.Int64
	tab, err := LoadTable(s, dir, BuildOptions{Workers: 2, Progress: func(int, int) { progress.Add(1) }})
	if err != nil {
		t.Fatal(err)
	}
	if n := progress.Load(); n != 0 {
		t.Errorf("LoadTable with Kappa = 0.6 built %d nodes, want the embedded table", n)
	}
	if files, _ := os.ReadDir(dir); len(files) != 0 {
		t.Errorf("LoadTable with Kappa = 0.6 wrote %d files to the cache, want none", len(files))
	}
	def := defaultTable(t)
	if !slices.Equal(tab.data, def.data) || tab.Certificate() != def.Certificate() {
		t.Error("Kappa = 0.6 table differs from the embedded default table")
	}
	m := NewModel(tab)
	if k := m.Settings().Kappa; k != 0.6 {
		t.Errorf("model Kappa = %g, want 0.6", k)
	}
	f := []float64{1e-9, 1e-8, 1e-7}
	sp, err := m.At(f)
	if err != nil {
		t.Fatal(err)
	}
	ref, out := make([]float64, len(f)), make([]float64, len(f))
	for _, c := range []struct{ lg, la float64 }{{-10.3, -1.7}, {-7.1, -4.2}, {-12.9, -0.3}} {
		if err := sp.LnOmega([]float64{c.lg, c.la, 0}, ref); err != nil {
			t.Fatal(err)
		}
		for _, lp := range []float64{-0.5, -1, -2.7} {
			if err := sp.LnOmega([]float64{c.lg, c.la, lp}, out); err != nil {
				t.Fatal(err)
			}
			for j := range f {
				want := ref[j] - 0.6*lp*math.Ln10
				// 1e-12: ln Omega is about -20, so a few rounding steps
				// of float64 arithmetic reach 1e-14.
				if math.Abs(out[j]-want) > 1e-12 {
					t.Errorf("log10 Gmu=%g log10 alpha=%g log10 P=%g f=%g: ln Omega %.14f, want %.14f", c.lg, c.la, lp, f[j], out[j], want)
				}
			}
		}
	}
	// Independent check: the direct path, which applies P^(-kappa) inside
	// its own mode sum, agrees within the certified 0.01.
	d, err := NewDirect(s)
	if err != nil {
		t.Fatal(err)
	}
	theta := []float64{-9.2, -2.3, -2.2}
	if err := d.Omega(f, math.Pow(10, theta[0]), math.Pow(10, theta[1]), math.Pow(10, theta[2]), ref); err != nil {
		t.Fatal(err)
	}
	if err := sp.LnOmega(theta, out); err != nil {
		t.Fatal(err)
	}
	for j := range f {
		if e := math.Abs(out[j] - math.Log(ref[j])); e > certMaxErr {
			t.Errorf("f=%g, kappa = 0.6: table %.5f, direct %.5f", f[j], out[j], math.Log(ref[j]))
		}
	}
}

// FuzzDecodeTable: the table parser never panics and rejects anything that
// is not a valid table for the default settings.
func FuzzDecodeTable(f *testing.F) {
	f.Add([]byte{})
	f.Add([]byte("TLSTRT01"))
	f.Add(embeddedTable[:200])
	f.Fuzz(func(t *testing.T, b []byte) {
		tab, err := decodeTable("fuzz", b, DefaultSettings())
		if err == nil && len(tab.data) != tab.nG*tab.nA*tab.nF {
			t.Fatal("accepted table with wrong size")
		}
	})
}

func BenchmarkTableLnOmega30(b *testing.B) {
	m := NewModel(defaultTable(b))
	f := make([]float64, 30)
	for i := range f {
		f[i] = float64(i+1) / (15 * 365.25 * 86400)
	}
	sp, err := m.At(f)
	if err != nil {
		b.Fatal(err)
	}
	out := make([]float64, len(f))
	theta := []float64{-10.3, -1.7, -0.4}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		theta[0] = -13 + float64(i%60)*0.1
		if err := sp.LnOmega(theta, out); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkLoadEmbedded(b *testing.B) {
	for b.Loop() {
		if _, err := decodeTable("embedded", embeddedTable, DefaultSettings()); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkTableBuild builds and certifies the default table on 2 workers
// (45-55 s wall on a shared 2-core machine); run with -benchtime=1x.
func BenchmarkTableBuild(b *testing.B) {
	for b.Loop() {
		if _, err := BuildTable(DefaultSettings(), BuildOptions{Workers: 2, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestCertificationCatchesErrors: a table shifted by 0.02 in ln Omega (twice
// the allowed error) must fail certification, and the intact one pass with
// the same points.
func TestCertificationCatchesErrors(t *testing.T) {
	tab := defaultTable(t)
	d, err := NewDirect(DefaultSettings())
	if err != nil {
		t.Fatal(err)
	}
	opt := BuildOptions{Workers: 2, CertPoints: 5, Seed: 7}
	if _, err := tab.certifyCells(d, opt, 20); err != nil {
		t.Fatalf("intact table failed: %v", err)
	}
	bad := *tab
	bad.data = slices.Clone(tab.data)
	for i := range bad.data {
		bad.data[i] += 0.02
	}
	if _, err := bad.certifyCells(d, opt, 20); !errors.Is(err, ErrCertification) {
		t.Errorf("shifted table: certify returned %v, want ErrCertification", err)
	}
}

// TestLoadTableCacheFailures: when the table cannot be cached (no user
// cache directory because HOME is unset, or an unwritable cache
// directory), LoadTable still builds the table in memory and returns it
// with an error wrapping ErrCacheWrite. A stand-in builder replaces the
// minute-long build; it only has to count calls.
func TestLoadTableCacheFailures(t *testing.T) {
	t.Setenv("HOME", "")
	t.Setenv("XDG_CACHE_HOME", "") // empty counts as unset for os.UserCacheDir
	if _, err := os.UserCacheDir(); err == nil {
		t.Skip("os.UserCacheDir works without HOME on this platform")
	}
	s := DefaultSettings()
	s.Q = QKinks // not the embedded table's settings: LoadTable must build
	file := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name, cacheDir string
	}{
		{"no user cache directory", ""},
		{"cache directory below a regular file", filepath.Join(file, "cache")},
	} {
		builds := 0
		builder := func(s Settings, _ BuildOptions) (*Table, error) {
			builds++
			return newEmptyTable(s), nil
		}
		tab, err := loadTable(s, c.cacheDir, BuildOptions{}, builder)
		if tab == nil || !errors.Is(err, ErrCacheWrite) || builds != 1 {
			t.Errorf("%s: table %v, error %v, %d builds; want the built table and ErrCacheWrite", c.name, tab != nil, err, builds)
			continue
		}
		if tab.Hash() != s.TableHash() {
			t.Errorf("%s: table built for hash %.12s, want %.12s", c.name, tab.Hash(), s.TableHash())
		}
	}
	// A failing build is reported as such, not as a cache problem.
	boom := errors.New("boom")
	if tab, err := loadTable(s, "", BuildOptions{}, func(Settings, BuildOptions) (*Table, error) { return nil, boom }); tab != nil || !errors.Is(err, boom) || errors.Is(err, ErrCacheWrite) {
		t.Errorf("failing build: table %v, error %v; want nil and the build's error", tab != nil, err)
	}
	// The default settings need no cache at all.
	if _, err := LoadTable(DefaultSettings(), "", BuildOptions{}); err != nil {
		t.Errorf("default settings without HOME: %v, want the embedded table", err)
	}
	// With a working cache the second load reads the file instead of
	// building again.
	dir := t.TempDir()
	builds := 0
	builder := func(s Settings, _ BuildOptions) (*Table, error) {
		builds++
		return newEmptyTable(s), nil
	}
	for range 2 {
		if _, err := loadTable(s, dir, BuildOptions{}, builder); err != nil {
			t.Fatal(err)
		}
	}
	if builds != 1 {
		t.Errorf("%d builds with a working cache, want 1", builds)
	}
}
