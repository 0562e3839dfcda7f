package main

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tautline/likelihood"
)

var updateImport = flag.Bool("update-import", false, "rewrite testdata/import/pair-a-samples.npy from the embedded demo:pair-a")

// npyV1 lays out a C-order little-endian float64 matrix (rows[i][j] is
// x[i, j]) as a .npy file of format version 1.0, by hand, following the
// NumPy format specification (NEP 1, "A simple file format for NumPy
// arrays"): the magic string "\x93NUMPY", the version bytes 1 and 0, the
// header length as a little-endian uint16, the header (a Python dict
// literal padded with spaces and ended by a newline so that magic, version,
// length and header together are a multiple of 64 bytes, as NumPy writes
// them), then the data.
func npyV1(rows [][]float64) []byte {
	cols := 0
	if len(rows) > 0 {
		cols = len(rows[0])
	}
	dict := fmt.Sprintf("{'descr': '<f8', 'fortran_order': False, 'shape': (%d, %d), }", len(rows), cols)
	pad := 64 - (10+len(dict)+1)%64
	if pad == 64 {
		pad = 0
	}
	header := dict + strings.Repeat(" ", pad) + "\n"
	var b bytes.Buffer
	b.WriteString("\x93NUMPY\x01\x00")
	binary.Write(&b, binary.LittleEndian, uint16(len(header)))
	b.WriteString(header)
	for _, r := range rows {
		for _, x := range r {
			binary.Write(&b, binary.LittleEndian, math.Float64bits(x))
		}
	}
	return b.Bytes()
}

// importInspect runs inspect --json on a data set and decodes it.
func importInspect(t *testing.T, path string) inspectOut {
	t.Helper()
	code, out, errs := runCLI(t, "inspect", "--json", path)
	if code != 0 {
		t.Fatalf("inspect %s: exit %d\n%s", path, code, errs)
	}
	var got inspectOut
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("inspect --json: %v\n%s", err, out)
	}
	return got
}

// importFit runs a short fit on an imported data set and checks that it
// records the data set's digest.
func importFit(t *testing.T, path, sha string) {
	t.Helper()
	dir := t.TempDir()
	code, _, errs := runCLI(t, "fit", "--data", path, "--model", "strings", "--steps", "60", "--walkers", "8",
		"--burn", "20", "--seed", "1", "--out", dir, "--log-level", "error")
	if code != 0 {
		t.Fatalf("fit --data %s: exit %d\n%s", path, code, errs)
	}
	raw, err := os.ReadFile(filepath.Join(dir, "meta.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(raw, []byte(sha)) {
		t.Errorf("fit meta.json does not record the imported data set's sha256 %s", sha)
	}
}

// normalQuantiles returns n evenly spaced quantiles of N(mu, sd) (the
// (k+0.5)/n quantiles), whose sample median is mu exactly for odd n and
// within a tiny fraction of sd for even n.
func normalQuantiles(mu, sd float64, n int) []float64 {
	out := make([]float64, n)
	for k := range out {
		p := (float64(k) + 0.5) / float64(n)
		out[k] = mu + sd*math.Sqrt2*math.Erfinv(2*p-1)
	}
	return out
}

func TestImportShapes(t *testing.T) {
	dir := t.TempDir()
	mus := []float64{-6.5, -7.1, -7.6, -8.4}
	const sd = 0.1
	// samples as .npy: 401 rows (odd, so each column's median is mu to
	// rounding), 4 bins; rows shuffled by a fixed stride so that order
	// carries nothing.
	const n = 401
	cols := make([][]float64, len(mus))
	for j, mu := range mus {
		cols[j] = normalQuantiles(mu, sd, n)
	}
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = make([]float64, len(mus))
		for j := range mus {
			rows[i][j] = cols[j][(i*97)%n] // 97 and 401 are coprime: a permutation
		}
	}
	npy := filepath.Join(dir, "free.npy")
	if err := os.WriteFile(npy, npyV1(rows), 0o644); err != nil {
		t.Fatal(err)
	}
	// the same samples as a text table with a header, columns in reverse order
	var txt strings.Builder
	txt.WriteString("d,c,b,a\n")
	for _, r := range rows {
		fmt.Fprintf(&txt, "%v,%v,%v,%v\n", r[3], r[2], r[1], r[0])
	}
	text := filepath.Join(dir, "free.csv")
	// long form: bin,value
	var lng strings.Builder
	lng.WriteString("bin,log10_rho\n")
	for j := range mus {
		for _, x := range cols[j] {
			fmt.Fprintf(&lng, "%d,%v\n", j+1, x)
		}
	}
	long := filepath.Join(dir, "long.csv")
	// wide grid: abscissa then one Gaussian density per bin, in ns
	var grd strings.Builder
	grd.WriteString("log10_rho_ns,p1,p2,p3,p4\n")
	for k := 0; k <= 600; k++ {
		x := -10 + 6*float64(k)/600
		fmt.Fprintf(&grd, "%v", x+9)
		for _, mu := range mus {
			fmt.Fprintf(&grd, ",%v", math.Exp(-0.5*(x-mu)*(x-mu)/(sd*sd)))
		}
		grd.WriteString("\n")
	}
	grid := filepath.Join(dir, "grid.csv")
	// summary: two-sided rows and one upper limit
	summ := filepath.Join(dir, "summary.txt")
	for path, s := range map[string]string{
		text: txt.String(), long: lng.String(), grid: grd.String(),
		summ: "median lower upper limit\n-6.5 -6.6 -6.4 -\n-7.1 -7.2 -6.95 -\n-7.6 -7.75 -7.5 -\n- - - -8.2\n",
	} {
		if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}

	common := []string{"--span-years", "15", "--harmonics", "4", "--prior", "-10,-4", "--provenance", "simulated test data of an invented array"}
	cases := []struct {
		name, shape, file string
		extra             []string
		kind              string
		// medians expected from inspect, and the tolerance (dex): samples
		// exact order statistics (rounding only); a grid of spacing 0.01
		// dex read by interpolation; the summary's split normal is built
		// to keep the stated median (FromSummary), to the grid spacing.
		medians []float64
		tol     float64
		stdout  []string
	}{
		{"npy", "samples", npy, nil, "samples", mus, 1e-9,
			[]string{"imported 4 bins (samples) from", "npy.yaml, ", "npy-samples.csv", "next:\n  tautline inspect ", "--model strings"}},
		{"text", "samples", text, []string{"--column-names", "a,b,c,d", "--burn-in", "0", "--thin", "1"}, "samples", mus, 1e-9, nil},
		{"long", "samples", long, []string{"--long"}, "samples", mus, 1e-9, nil},
		{"grid", "grid", grid, []string{"--unit", "log10-rho-ns", "--abscissa", "0"}, "grid", mus, 0.01, []string{"grid-grid.csv"}},
		{"summary", "summary", summ, []string{"--level", "68", "--limit-level", "0.95"}, "grid", mus[:3], 0.01, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(dir, "out")
			args := append([]string{"import", c.shape, c.file, "--out", out, "--name", c.name}, common...)
			code, stdout, stderr := runCLI(t, append(args, c.extra...)...)
			if code != 0 {
				t.Fatalf("exit %d\n%s%s", code, stdout, stderr)
			}
			for _, w := range c.stdout {
				if !strings.Contains(stdout, w) {
					t.Errorf("stdout lacks %q:\n%s", w, stdout)
				}
			}
			if c.shape == "summary" && !strings.Contains(stderr, "warning:") {
				t.Errorf("summary import printed no warning:\n%s", stderr)
			}
			path := filepath.Join(out, c.name+".yaml")
			got := importInspect(t, path)
			if !strings.Contains(stdout, got.SHA256) {
				t.Errorf("stdout does not print the digest %s:\n%s", got.SHA256, stdout)
			}
			if !strings.Contains(got.Provenance, "source file "+filepath.Base(c.file)+" (sha256 ") ||
				!strings.HasPrefix(got.Provenance, "simulated test data of an invented array; ") {
				t.Errorf("provenance does not start with the given text and name the source file: %q", got.Provenance)
			}
			if got.Total != 4 || math.Abs(got.SpanYears-15) > 1e-12 {
				t.Fatalf("got %d bins over %g yr, want 4 over 15", got.Total, got.SpanYears)
			}
			for i, m := range c.medians {
				b := got.Bins[i]
				if b.Representation != c.kind || math.Abs(b.Median-m) > c.tol {
					t.Errorf("bin %d: %s median %.5f, want %s %.5f ± %g", i+1, b.Representation, b.Median, c.kind, m, c.tol)
				}
			}
			importFit(t, path, got.SHA256)
		})
	}
}

func TestImportRefused(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "m.npy")
	rows := make([][]float64, 60)
	for i := range rows {
		rows[i] = []float64{-7 + 0.001*float64(i), -8 + 0.001*float64(i)}
	}
	if err := os.WriteFile(good, npyV1(rows), 0o644); err != nil {
		t.Fatal(err)
	}
	nan := filepath.Join(dir, "nan.npy")
	rows[7] = []float64{-7, math.NaN()}
	if err := os.WriteFile(nan, npyV1(rows), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	base := func(extra ...string) []string {
		return append([]string{"import", "samples", good, "--out", out, "--name", "x", "--span-years", "15", "--harmonics", "2", "--prior", "-10,-4"}, extra...)
	}
	drop := func(args []string, opt string, hasValue bool) []string {
		i := slices.Index(args, opt)
		n := 1
		if hasValue {
			n = 2
		}
		return slices.Delete(slices.Clone(args), i, i+n)
	}
	cases := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"import"}, 2, "want a shape (samples, grid or summary) and a file, got 0 arguments"},
		{[]string{"import", "samples"}, 2, "got 1 arguments"},
		{[]string{"import", "matrix", good}, 2, `shape "matrix": want samples, grid or summary`},
		{[]string{"import", "--bogus"}, 2, "flag provided but not defined: -bogus"},
		{drop(base(), "--name", true), 2, "--name is required"},
		{drop(base(), "--out", true), 2, "--out is required"},
		{drop(base(), "--span-years", true), 2, "exactly one of --span-years and --span-seconds"},
		{base("--span-seconds", "1e9"), 2, "exactly one of --span-years and --span-seconds"},
		{base("--span-years", "-1"), 2, "time span must be a finite number > 0"},
		{drop(base(), "--harmonics", true), 2, "exactly one of --harmonics and --freqs-hz"},
		{base("--freqs-hz", "1e-9"), 2, "exactly one of --harmonics and --freqs-hz"},
		{base("--harmonics", "0"), 2, "--harmonics 0: want 1 or more bins"},
		{base("--irregular"), 2, "--irregular needs the frequencies listed with --freqs-hz"},
		{append(drop(base(), "--harmonics", true), "--freqs-hz", "1e-9,x"), 2, `--freqs-hz: "x" is not a finite number`},
		{drop(base(), "--prior", true), 2, "--prior LO,HI is required"},
		{base("--prior", "-10"), 2, `--prior "-10": want 2 comma-separated numbers`},
		{base("--prior", "-4,-10"), 2, "want LO < HI"},
		{base("--prior", "-10,inf"), 2, `--prior: "inf" is not a finite number`},
		{base("--unit", "dex"), 2, `--unit "dex": want one of`},
		{base("--provenance", "a\nb"), 2, "--provenance must be one line"},
		{base("--columns", "0,-1"), 2, `--columns: "-1" is not a 0-based column number`},
		{base("--columns", "0,1", "--column-names", "a,b"), 2, "give --columns or --column-names, not both"},
		{base("--long", "--array", "x"), 2, "--long reads a text file"},
		{base("--burn-in", "1"), 2, "--burn-in 1: want a fraction in [0, 1)"},
		{base("--thin", "0"), 2, "--thin 0: want 1 or more"},
		{base("--level", "90"), 2, "--level applies to summary imports, not samples"},
		{base("--abscissa", "1"), 2, "--abscissa applies to grid imports, not samples"},
		{[]string{"import", "summary", good, "--long"}, 2, "--long applies to samples imports, not summary"},
		{[]string{"import", "grid", good, "--thin", "2"}, 2, "--thin applies to samples imports, not grid"},
		// the work fails (exit 1) with the importer's sentence naming the file
		{base("--name", "../x"), 1, `data set name "../x"`},
		{base("--harmonics", "3"), 1, "m.npy"},
		{base("--prior", "-7.5,-4"), 1, "m.npy"},
		{base("--unit", "ln-rho-s"), 1, "m.npy"},
		{append(base(), "--columns", "0,5"), 1, "m.npy"},
		{[]string{"import", "samples", nan, "--out", out, "--name", "x", "--span-years", "15", "--harmonics", "2", "--prior", "-10,-4"}, 1, "nan.npy"},
		{[]string{"import", "samples", filepath.Join(dir, "missing.npy"), "--out", out, "--name", "x", "--span-years", "15", "--harmonics", "2", "--prior", "-10,-4"}, 1, "missing.npy"},
	}
	for _, c := range cases {
		code, stdout, stderr := runCLI(t, c.args...)
		if code != c.code || !strings.Contains(stderr, c.want) {
			t.Errorf("tautline %s: exit %d, want %d; stderr does not contain %q:\n%s%s",
				strings.Join(c.args, " "), code, c.code, c.want, stdout, stderr)
		}
		if lines := strings.Count(strings.TrimSpace(stderr), "\n"); code == 1 && lines != 0 {
			t.Errorf("tautline %s: want a one-line error, got\n%s", strings.Join(c.args, " "), stderr)
		}
	}
	if code, stdout, _ := runCLI(t, "import", "--help"); code != 0 || !strings.Contains(stdout, "--span-years float") {
		t.Errorf("import --help: exit %d, want 0 and the options:\n%s", code, stdout)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("refused imports left %s behind (err %v)", out, err)
	}
}

// TestImportDemoMatrix keeps testdata/import/pair-a-samples.npy, the
// embedded demo:pair-a as a samples matrix (one row per sample, one column
// per bin), in step with the demo, and imports it back: the samples must
// come back bit for bit. Regenerate with
// `go test ./cmd/tautline -run TestImportDemoMatrix -update-import`.
func TestImportDemoMatrix(t *testing.T) {
	demo, err := loadData("demo:pair-a")
	if err != nil {
		t.Fatal(err)
	}
	n := len(demo.Bins[0].Samples)
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = make([]float64, len(demo.Bins))
		for j, b := range demo.Bins {
			if len(b.Samples) != n {
				t.Fatalf("demo bin %d has %d samples, bin 1 %d", j+1, len(b.Samples), n)
			}
			rows[i][j] = b.Samples[i]
		}
	}
	want := npyV1(rows)
	path := filepath.Join("..", "..", "testdata", "import", "pair-a-samples.npy")
	if *updateImport {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, want, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Fatalf("%s is not demo:pair-a as a matrix; regenerate it with -update-import", path)
	}
	out := t.TempDir()
	code, stdout, stderr := runCLI(t, "import", "samples", path, "--out", out, "--name", "pair-a",
		"--span-years", "12", "--harmonics", "20", "--prior", "-10,-4",
		"--provenance", "simulated data: demo:pair-a as a samples matrix")
	if code != 0 {
		t.Fatalf("exit %d\n%s%s", code, stdout, stderr)
	}
	back, err := likelihood.Load(filepath.Join(out, "pair-a.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if back.Span != demo.Span || !slices.Equal(back.Freqs, demo.Freqs) {
		t.Errorf("span or frequencies differ from the demo's: %g s, %v", back.Span, back.Freqs)
	}
	for j, b := range back.Bins {
		if !slices.Equal(b.Samples, demo.Bins[j].Samples) {
			t.Fatalf("bin %d: samples differ from the demo's", j+1)
		}
	}
}
