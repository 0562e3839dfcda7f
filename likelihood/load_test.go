package likelihood

import (
	"crypto/sha256"
	"encoding/hex"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"tautline/models/gw"
)

const dataDir = "../testdata/data"

// TestLoadMalformed checks that each malformed data set under
// testdata/data produces exactly the message a user should see. In the
// wanted texts "{d}" stands for the data set's directory.
func TestLoadMalformed(t *testing.T) {
	for _, tc := range []struct{ dir, want string }{
		{"bad-unsorted-freq", `likelihood: {d}/dataset.yaml: line 6: frequencies.hz[2] (bin 3): must exceed the previous bin's 3e-08 Hz (frequencies must be strictly increasing), got 2e-08`},
		{"bad-nonpositive-freq", `likelihood: {d}/dataset.yaml: line 7: frequencies.hz[0] (bin 1): must be > 0, got -1e-09`},
		{"bad-freq-not-harmonic", `likelihood: {d}/dataset.yaml: line 6: frequencies.hz[1] (bin 2): 2.0001e-08 Hz differs from 2/T = 2e-08 Hz by more than the relative tolerance 1e-06 (declare irregular frequencies if they are not harmonics of 1/T)`},
		{"bad-nan-sample", `likelihood: {d}/samples.csv: line 18: log10_rho: must be finite, got NaN`},
		{"bad-inf-span", `likelihood: {d}/dataset.yaml: line 4: span_seconds: must be finite, got +Inf`},
		{"bad-negative-density", `likelihood: {d}/grid.csv: line 5: density: must be >= 0, got -0.1`},
		{"bad-grid-order", `likelihood: {d}/grid.csv: line 8: log10_rho: the grid of bin 2 must be strictly increasing, got -7.4 after -7.2`},
		{"bad-few-samples", `likelihood: {d}/samples.csv: line 2: bin 1: 20 samples, need at least 50`},
		{"bad-sample-outside-prior", `likelihood: {d}/samples.csv: line 34: log10_rho: -4.5 lies outside the prior range [-9, -5] (log10_rho_prior, {d}/dataset.yaml line 7)`},
		{"bad-grid-outside-prior", `likelihood: {d}/grid.csv: line 12: log10_rho: -4.9 lies outside the prior range [-9, -5] (log10_rho_prior, {d}/dataset.yaml line 7)`},
		{"bad-unknown-key", `likelihood: {d}/dataset.yaml: line 3: unknown key "colour" (known keys: name, provenance, span_seconds, span_years, frequencies, log10_rho_prior, tables)`},
		{"bad-unknown-nested-key", `likelihood: {d}/dataset.yaml: line 6: unknown key "frequencies.harmonic" (known keys: harmonics, hz, irregular)`},
		{"bad-missing-file", `likelihood: {d}/dataset.yaml: line 10: tables.grid: cannot read table "nothere.csv": open {d}/nothere.csv: no such file or directory`},
		{"bad-missing-bin", `likelihood: {d}/dataset.yaml: bin 3 (3e-08 Hz) appears in none of the tables`},
		{"bad-duplicate-bin", `likelihood: {d}/gaussian.csv: line 3: bin 2: already given in {d}/grid.csv line 2; each bin takes one representation`},
		{"bad-too-many-bins", `likelihood: {d}/gaussian.csv: line 3: bin: 4 exceeds the 3 bins declared in {d}/dataset.yaml`},
		{"bad-header", `likelihood: {d}/gaussian.csv: line 1: header must be "bin,mean,sd", got "bin,mu,sigma"`},
		{"bad-prior-order", `likelihood: {d}/dataset.yaml: line 7: log10_rho_prior: lo must be below hi, got [-5, -9]`},
		{"bad-split-bin", `likelihood: {d}/samples.csv: line 33: bin 1: rows of a bin must be contiguous, but this bin already had rows from line 2`},
		{"bad-both-spans", `likelihood: {d}/dataset.yaml: line 5: span_years: give the span once, as span_seconds or span_years, not both`},
	} {
		t.Run(tc.dir, func(t *testing.T) {
			d := filepath.Join(dataDir, tc.dir)
			ds, err := Load(filepath.Join(d, "dataset.yaml"))
			want := strings.ReplaceAll(tc.want, "{d}", d)
			if err == nil {
				t.Fatalf("Load succeeded (%d bins), want error %q", len(ds.Bins), want)
			}
			if err.Error() != want {
				t.Errorf("error\n got: %s\nwant: %s", err, want)
			}
		})
	}
}

// TestLoadInline covers description errors that need no files of their own.
func TestLoadInline(t *testing.T) {
	base := "name: x\nprovenance: invented\nspan_seconds: 1e8\nfrequencies:\n  harmonics: 1\nlog10_rho_prior: [-9, -5]\ntables:\n  gaussian: g.csv\n"
	gauss := "bin,mean,sd\n1,-7,0.2\n"
	for _, tc := range []struct{ name, yaml, table, want string }{
		{"valid", base, gauss, ""},
		{"years", strings.Replace(base, "span_seconds: 1e8", "span_years: 2", 1), gauss, ""},
		{"no-span", strings.Replace(base, "span_seconds: 1e8\n", "", 1), gauss, `likelihood: d.yaml: span_seconds: missing; give the time span as span_seconds or span_years`},
		{"no-name", strings.Replace(base, "name: x\n", "", 1), gauss, `likelihood: d.yaml: name: missing; it is required`},
		{"not-mapping", "- 1\n- 2\n", gauss, `likelihood: d.yaml: line 1: the description must be a mapping of keys to values`},
		{"syntax", "name: [x\n", gauss, `likelihood: d.yaml: line 1: did not find expected ',' or ']'`},
		{"empty", "", gauss, `likelihood: d.yaml: empty description; expected a mapping with keys name, provenance, span_seconds or span_years, frequencies, log10_rho_prior, tables`},
		{"freq-scalar", strings.Replace(base, "frequencies:\n  harmonics: 1\n", "frequencies: 3\n", 1), gauss, `likelihood: d.yaml: line 4: frequencies: must be a mapping`},
		{"harmonics-bad", strings.Replace(base, "harmonics: 1", "harmonics: 2.5", 1), gauss, `likelihood: d.yaml: line 5: frequencies.harmonics: must be an integer >= 1, got "2.5"`},
		{"no-tables", strings.Replace(base, "tables:\n  gaussian: g.csv\n", "", 1), gauss, `likelihood: d.yaml: tables: name at least one of tables.samples, tables.grid, tables.gaussian`},
		{"sd-zero", base, "bin,mean,sd\n1,-7,0\n", `likelihood: g.csv: line 2: sd: must be > 0, got 0`},
		{"not-number", base, "bin,mean,sd\n1,abc,0.1\n", `likelihood: g.csv: line 2: mean: must be a number, got "abc"`},
		{"field-count", base, "bin,mean,sd\n1,-7\n", `likelihood: g.csv: line 2: expected 3 fields (bin,mean,sd)`},
		{"bin-zero", base, "bin,mean,sd\n0,-7,0.1\n", `likelihood: g.csv: line 2: bin: must be an integer >= 1, got "0"`},
		{"empty-table", base, "", `likelihood: g.csv: empty table; the first row must be the header "bin,mean,sd"`},
		{"header-only", base, "bin,mean,sd\n", `likelihood: g.csv: no rows after the header`},
		{"gauss-twice", base, "bin,mean,sd\n1,-7,0.1\n1,-7,0.1\n", `likelihood: g.csv: line 3: bin 1: already given on line 2`},
		{"comment", base, "# a comment\nbin,mean,sd\n1,-7,0.2\n", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			read := func(rel string) (string, []byte, error) { return rel, []byte(tc.table), nil }
			ds, err := parse("d.yaml", []byte(tc.yaml), read)
			if tc.want == "" {
				if err != nil {
					t.Fatalf("unexpected error: %v", err)
				}
				if len(ds.Bins) != 1 || ds.Bins[0].Kind != Gaussian {
					t.Fatalf("bins = %+v, want one Gaussian bin", ds.Bins)
				}
				return
			}
			if err == nil || err.Error() != tc.want {
				t.Errorf("error\n got: %v\nwant: %s", err, tc.want)
			}
		})
	}
}

func TestLoadTiny(t *testing.T) {
	path := filepath.Join(dataDir, "tiny", "dataset.yaml")
	ds, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if ds.Name != "tiny" || ds.Span != 1e8 || ds.PriorMin != -9 || ds.PriorMax != -5 || ds.Irregular {
		t.Errorf("header fields wrong: %+v", ds)
	}
	// The files say f_i = i/T with T = 1e8 s.
	if want := []float64{1e-8, 2e-8, 3e-8}; !reflect.DeepEqual(ds.Freqs, want) {
		t.Errorf("Freqs = %v, want %v", ds.Freqs, want)
	}
	kinds := []Representation{Samples, Grid, Gaussian}
	for i, b := range ds.Bins {
		if b.Kind != kinds[i] {
			t.Errorf("bin %d: kind %v, want %v", i+1, b.Kind, kinds[i])
		}
	}
	if n := len(ds.Bins[0].Samples); n != 60 {
		t.Errorf("bin 1: %d samples, want the file's 60", n)
	}
	if n := len(ds.Bins[1].Grid); n != 11 {
		t.Errorf("bin 2: %d grid points, want the file's 11", n)
	}
	if ds.Bins[2].Mean != -6.5 || ds.Bins[2].SD != 0.25 {
		t.Errorf("bin 3: mean, sd = %g, %g, want -6.5, 0.25", ds.Bins[2].Mean, ds.Bins[2].SD)
	}
	// The digest is SHA-256 over the description then the tables in the
	// order samples, grid, gaussian (crypto/sha256 as the reference).
	h := sha256.New()
	for _, f := range []string{"dataset.yaml", "samples.csv", "grid.csv", "gaussian.csv"} {
		b, err := os.ReadFile(filepath.Join(dataDir, "tiny", f))
		if err != nil {
			t.Fatal(err)
		}
		h.Write(b)
	}
	if want := hex.EncodeToString(h.Sum(nil)); ds.SHA256 != want {
		t.Errorf("SHA256 = %s, want %s", ds.SHA256, want)
	}
	if ds.Path != path {
		t.Errorf("Path = %q, want %q", ds.Path, path)
	}

	fds, err := LoadFS(os.DirFS(dataDir), "tiny/dataset.yaml")
	if err != nil {
		t.Fatal(err)
	}
	fds.Path = ds.Path
	if !reflect.DeepEqual(fds, ds) {
		t.Errorf("LoadFS and Load disagree")
	}
}

func TestWriteRoundTrip(t *testing.T) {
	ds, err := Load(filepath.Join(dataDir, "tiny", "dataset.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	irr := *ds
	irr.Irregular = true
	irr.Freqs = []float64{1e-8, 2.5e-8, 3e-8}
	yr := *ds
	yr.Span = 3 * gw.JulianYear
	yr.Freqs = []float64{1 / yr.Span, 2 / yr.Span, 3 / yr.Span}
	yr.Provenance = "quotes \" and unicode µ: invented"
	for _, tc := range []struct {
		name string
		ds   *Dataset
	}{{"harmonics", ds}, {"irregular", &irr}, {"years", &yr}} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			if err := Write(dir, "out", tc.ds); err != nil {
				t.Fatal(err)
			}
			got, err := Load(filepath.Join(dir, "out.yaml"))
			if err != nil {
				t.Fatal(err)
			}
			got.Path, got.SHA256 = tc.ds.Path, tc.ds.SHA256
			if !reflect.DeepEqual(got, tc.ds) {
				t.Errorf("round trip changed the data set:\n got %+v\nwant %+v", got, tc.ds)
			}
			ents, _ := os.ReadDir(dir)
			for _, e := range ents {
				if strings.HasPrefix(e.Name(), ".") {
					t.Errorf("temporary file %s left behind", e.Name())
				}
			}
		})
	}
	bad := *ds
	bad.Bins = ds.Bins[:2]
	if err := Write(t.TempDir(), "out", &bad); err == nil {
		t.Error("Write accepted 2 bins for 3 frequencies")
	}
}

func TestSummary(t *testing.T) {
	// Samples 0, 1, ..., 100: the linear-interpolation quantile at p is 100p
	// exactly (closed form for equally spaced order statistics).
	s := make([]float64, 101)
	for k := range s {
		s[k] = -9 + 0.04*float64(100-k) // unsorted on purpose
	}
	// A grid density that is a normal N(-7, 0.3) on a 0.001-dex grid; its
	// piecewise-linear quantiles approach distuv.Normal's.
	var g, d []float64
	for x := -9.0; x <= -5.0+1e-9; x += 0.001 {
		g = append(g, x)
		d = append(d, math.Exp(-0.5*(x+7)*(x+7)/0.09))
	}
	ds := &Dataset{
		Name: "s", Span: 1e8, Freqs: []float64{1e-8, 2e-8, 3e-8}, PriorMin: -9, PriorMax: -5,
		Bins: []Bin{{Kind: Samples, Samples: s}, {Kind: Grid, Grid: g, Density: d}, {Kind: Gaussian, Mean: -6.5, SD: 0.25}},
	}
	sum := ds.Summary()
	nGrid := distuv.Normal{Mu: -7, Sigma: 0.3}
	nGauss := distuv.Normal{Mu: -6.5, Sigma: 0.25}
	// The "68 %" levels, Phi(-1) and Phi(1), from gonum's normal.
	pLo68, pHi68 := distuv.UnitNormal.CDF(-1), distuv.UnitNormal.CDF(1)
	for _, tc := range []struct {
		name     string
		got      float64
		want     float64
		tol      float64
		whyTheTo string
	}{
		{"samples median", sum[0].Median, -7, 1e-12, "exact order statistic"},
		{"samples lo68", sum[0].Lo68, -9 + 4*pLo68, 1e-12, "closed form for equally spaced samples"},
		{"samples hi68", sum[0].Hi68, -9 + 4*pHi68, 1e-12, "closed form"},
		// Normal truncated at -6.7 and +5 sd: the mass removed is below 1e-11.
		{"grid median", sum[1].Median, nGrid.Quantile(0.5), 1e-6, "grid spacing 1e-3: linear-density error O(h^2/sigma^2) ~ 1e-5 relative in mass"},
		{"grid lo68", sum[1].Lo68, nGrid.Quantile(pLo68), 1e-5, "same"},
		{"grid hi68", sum[1].Hi68, nGrid.Quantile(pHi68), 1e-5, "same"},
		// Normal truncated at -10 and +6 sd: quantile shift below 1e-8.
		{"gauss median", sum[2].Median, nGauss.Quantile(0.5), 1e-8, "truncation at 6 sd"},
		{"gauss lo68", sum[2].Lo68, nGauss.Quantile(pLo68), 1e-8, "truncation at 6 sd"},
		{"gauss hi68", sum[2].Hi68, nGauss.Quantile(pHi68), 1e-8, "truncation at 6 sd"},
	} {
		if math.Abs(tc.got-tc.want) > tc.tol {
			t.Errorf("%s = %.10g, want %.10g (tol %g: %s)", tc.name, tc.got, tc.want, tc.tol, tc.whyTheTo)
		}
	}
	for i, b := range sum {
		if b.Index != i || b.Freq != ds.Freqs[i] || b.Kind != ds.Bins[i].Kind {
			t.Errorf("summary %d bookkeeping wrong: %+v", i, b)
		}
	}
}

func TestRepresentationString(t *testing.T) {
	for r, want := range map[Representation]string{Samples: "samples", Grid: "grid", Gaussian: "gaussian", 7: "Representation(7)"} {
		if r.String() != want {
			t.Errorf("%d.String() = %q, want %q", int(r), r.String(), want)
		}
	}
}

func TestValidate(t *testing.T) {
	ok := func() *Dataset {
		return &Dataset{Name: "v", Span: 1e8, Freqs: []float64{1e-8, 2e-8}, PriorMin: -9, PriorMax: -5,
			Bins: []Bin{{Kind: Gaussian, Mean: -7, SD: 0.2}, {Kind: Grid, Grid: []float64{-9, -7, -5}, Density: []float64{0, 1, 0}}}}
	}
	for _, tc := range []struct {
		name string
		edit func(*Dataset)
		want string
	}{
		{"valid", func(*Dataset) {}, ""},
		{"span", func(d *Dataset) { d.Span = math.Inf(1) }, `likelihood: data set "v": span: must be a finite number of seconds > 0, got +Inf`},
		{"span-short", func(d *Dataset) { d.Span = 3600; d.Freqs = []float64{1.0 / 3600, 2.0 / 3600} }, `likelihood: data set "v": span: 3600 s is outside the supported range [86400 s (1 day), 3.15576e+10 s (1000 yr)]`},
		{"span-long", func(d *Dataset) { d.Span = 1e12; d.Irregular = true }, `likelihood: data set "v": span: 1e+12 s is outside the supported range [86400 s (1 day), 3.15576e+10 s (1000 yr)]`},
		{"prior", func(d *Dataset) { d.PriorMax = math.NaN() }, `likelihood: data set "v": prior range: need finite lo < hi, got [-9, NaN]`},
		{"count", func(d *Dataset) { d.Bins = d.Bins[:1] }, `likelihood: data set "v": 1 bins for 2 frequencies`},
		{"harmonic", func(d *Dataset) { d.Freqs[1] = 2.1e-8 }, `likelihood: data set "v": bin 2: frequency: 2.1e-08 Hz differs from 2/T = 2e-08 Hz by more than the relative tolerance 1e-06 (declare irregular frequencies if they are not harmonics of 1/T)`},
		{"irregular", func(d *Dataset) { d.Freqs[1] = 2.1e-8; d.Irregular = true }, ""},
		{"order", func(d *Dataset) { d.Freqs[1] = 1e-9; d.Irregular = true }, `likelihood: data set "v": bin 2: frequency: must exceed the previous bin's 1e-08 Hz (frequencies must be strictly increasing), got 1e-09`},
		{"sd", func(d *Dataset) { d.Bins[0].SD = 0 }, `likelihood: data set "v": bin 1 (gaussian): sd: must be finite and > 0, got 0`},
		{"mean", func(d *Dataset) { d.Bins[0].Mean = -4 }, `likelihood: data set "v": bin 1 (gaussian): mean: must be finite and inside the prior range [-9, -5], got -4`},
		{"grid-order", func(d *Dataset) { d.Bins[1].Grid[1] = -9 }, `likelihood: data set "v": bin 2 (grid): grid point 1: grid must be strictly increasing, got -9 after -9`},
		{"grid-neg", func(d *Dataset) { d.Bins[1].Density[2] = -1 }, `likelihood: data set "v": bin 2 (grid): density 2: must be >= 0, got -1`},
		{"grid-mass", func(d *Dataset) { d.Bins[1].Density[1] = 0 }, `likelihood: data set "v": bin 2 (grid): density has no positive mass`},
		{"samples", func(d *Dataset) { d.Bins[1] = Bin{Kind: Samples, Samples: make([]float64, 10)} }, `likelihood: data set "v": bin 2 (samples): 10 samples, need at least 50`},
		{"kind", func(d *Dataset) { d.Bins[1].Kind = 9 }, `likelihood: data set "v": bin 2 (Representation(9)): unknown representation 9: no data`},
	} {
		d := ok()
		tc.edit(d)
		err := d.Validate()
		if (tc.want == "" && err != nil) || (tc.want != "" && (err == nil || err.Error() != tc.want)) {
			t.Errorf("%s: error\n got: %v\nwant: %s", tc.name, err, tc.want)
		}
	}
}
