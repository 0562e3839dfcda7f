package likelihood

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"
)

// samplesCSV writes n samples of bin 1 spread evenly over [a, b].
func samplesCSV(n int, a, b float64) string {
	var sb strings.Builder
	sb.WriteString("bin,log10_rho\n")
	for k := range n {
		fmt.Fprintf(&sb, "1,%.17g\n", a+(b-a)*float64(k)/float64(n-1))
	}
	return sb.String()
}

// TestDoubtfulInputs pins the decision taken on each input that is
// syntactically valid but doubtful, with the exact message a user sees:
// a refusal, or an acceptance ("" want) with the warning recorded.
func TestDoubtfulInputs(t *testing.T) {
	desc := func(span, prior, kind string) string {
		return "name: x\nprovenance: invented\n" + span + "\nfrequencies:\n  harmonics: 1\nlog10_rho_prior: " + prior + "\ntables:\n  " + kind + ": t.csv\n"
	}
	const sec, prior = "span_seconds: 1e8", "[-9, -5]"
	gauss := "bin,mean,sd\n1,-7,0.2\n"
	grid2 := "bin,log10_rho,density\n1,-9,0.1\n1,-5,0.2\n"
	for _, tc := range []struct {
		name, yaml, table, want string
		warn                    string // the one warning wanted, if any
	}{
		// Prior ranges so wide that no table can span them (the KDE
		// table build allocated by ceil(width) and panicked on them).
		{"prior 2e308 wide", desc(sec, "[-1e308, 1e308]", "gaussian"), gauss,
			"likelihood: d.yaml: line 6: log10_rho_prior: [-1e+308, 1e+308] is more than 1000 decades wide; the prior of log10 rho under which free spectra are made spans a few decades, e.g. [-9, -5]", ""},
		{"prior 2e12 wide", desc(sec, "[-1e12, 1e12]", "gaussian"), gauss,
			"likelihood: d.yaml: line 6: log10_rho_prior: [-1e+12, 1e+12] is more than 1000 decades wide; the prior of log10 rho under which free spectra are made spans a few decades, e.g. [-9, -5]", ""},
		{"prior 1001 decades", desc(sec, "[-1000, 1]", "gaussian"), gauss,
			"likelihood: d.yaml: line 6: log10_rho_prior: [-1000, 1] is more than 1000 decades wide; the prior of log10 rho under which free spectra are made spans a few decades, e.g. [-9, -5]", ""},
		{"prior of exactly 1000 decades", desc(sec, "[-999, 1]", "gaussian"), gauss, "", ""},
		{"samples spread under 1e-6 of the prior", desc(sec, "[-500, 400]", "samples"), samplesCSV(60, -7, -7+8e-4),
			"likelihood: t.csv: line 2: bin 1: the samples spread over 0.0008 dex, less than 1e-06 of the prior range [-500, 400]; no density table over that range can resolve them: narrow the prior (log10_rho_prior, d.yaml line 6)", ""},
		{"samples spread just above 1e-6 of the prior", desc(sec, "[-500, 400]", "samples"), samplesCSV(60, -7, -7+1e-3), "", ""},
		// Spans outside [1 day, 1000 yr] are unit mistakes.
		{"span of 1e30 s", desc("span_seconds: 1.0e30", prior, "gaussian"), gauss,
			"likelihood: d.yaml: line 3: span_seconds: 1e+30 s is outside the supported range [86400 s (1 day), 3.15576e+10 s (1000 yr)]", ""},
		{"span of 1e-9 yr", desc("span_years: 1.0e-9", prior, "gaussian"), gauss,
			"likelihood: d.yaml: line 3: span_years: 1e-09 yr is outside the supported range [0.002738 yr (1 day), 1000 yr]", ""},
		{"span of 1001 yr", desc("span_years: 1001", prior, "gaussian"), gauss,
			"likelihood: d.yaml: line 3: span_years: 1001 yr is outside the supported range [0.002738 yr (1 day), 1000 yr]", ""},
		{"span of one day", desc("span_seconds: 86400", prior, "gaussian"), gauss, "", ""},
		{"span of 1000 yr", desc("span_years: 1000", prior, "gaussian"), gauss, "", ""},
		{"span just under a day", desc("span_seconds: 86399", prior, "gaussian"), gauss,
			"likelihood: d.yaml: line 3: span_seconds: 86399 s is outside the supported range [86400 s (1 day), 3.15576e+10 s (1000 yr)]", ""},
		// yaml.v3 reads 100_000_000 as 1e8 (YAML 1.1 digit separators),
		// YAML 1.2 as a string: refused rather than read one way.
		{"underscored span", desc("span_seconds: 100_000_000", prior, "gaussian"), gauss,
			`likelihood: d.yaml: line 3: span_seconds: must be a number, got "100_000_000": YAML readers disagree on "_" between digits (YAML 1.1 drops it, YAML 1.2 reads a string); write 100000000`, ""},
		{"underscored float in the prior", desc(sec, "[-9, -5_0]", "gaussian"), gauss,
			`likelihood: d.yaml: line 6: log10_rho_prior[1]: must be a number, got "-5_0": YAML readers disagree on "_" between digits (YAML 1.1 drops it, YAML 1.2 reads a string); write -50`, ""},
		{"quoted underscored span", desc(`span_seconds: "1_0e7"`, prior, "gaussian"), gauss,
			`likelihood: d.yaml: line 3: span_seconds: must be a number, got "1_0e7": YAML readers disagree on "_" between digits (YAML 1.1 drops it, YAML 1.2 reads a string); write 10e7`, ""},
		// Hexadecimal and octal are integers in YAML 1.2 too: accepted.
		{"hex span", desc("span_seconds: 0x5F5E100", prior, "gaussian"), gauss, "", ""},
		{"octal span", desc("span_seconds: 0o575360400", prior, "gaussian"), gauss, "", ""},
		// A grid of two points is a density all the same: accepted, with
		// a warning, since a truncated table looks just like it.
		{"grid bin of two points", desc(sec, prior, "grid"), grid2, "",
			"t.csv: line 2: bin 1: the grid has only 2 points, so its log density is taken as a straight line between them; check that the table is complete"},
		// A byte-order mark before the header is dropped.
		{"BOM before the header", desc(sec, prior, "gaussian"), "\ufeff" + gauss, "", ""},
		{"BOM before a comment", desc(sec, prior, "gaussian"), "\ufeff# made by a spreadsheet\n" + gauss, "", ""},
		{"BOM inside the table", desc(sec, prior, "gaussian"), "bin,mean,sd\n\ufeff1,-7,0.2\n",
			`likelihood: t.csv: line 2: bin: must be an integer >= 1, got "\ufeff1"`, ""},
		// Quoted fields (RFC 4180) are plain values once unquoted.
		{"quoted fields", desc(sec, prior, "gaussian"), "\"bin\",\"mean\",\"sd\"\n\"1\",\"-7\",\" 0.2\"\n", "", ""},
		{"quoted field with a comma", desc(sec, prior, "gaussian"), "bin,mean,sd\n1,\"-7,5\",0.2\n",
			`likelihood: t.csv: line 2: mean: must be a number, got "-7,5"`, ""},
		// An empty field is no number: refused, never read as 0.
		{"empty value", desc(sec, prior, "gaussian"), "bin,mean,sd\n1,,0.2\n",
			`likelihood: t.csv: line 2: mean: must be a number, got ""`, ""},
		{"blank value", desc(sec, prior, "gaussian"), "bin,mean,sd\n1,-7,  \n",
			`likelihood: t.csv: line 2: sd: must be a number, got ""`, ""},
		{"empty bin", desc(sec, prior, "gaussian"), "bin,mean,sd\n,-7,0.2\n",
			`likelihood: t.csv: line 2: bin: must be an integer >= 1, got ""`, ""},
		{"quoted empty value", desc(sec, prior, "gaussian"), "bin,mean,sd\n1,\"\",0.2\n",
			`likelihood: t.csv: line 2: mean: must be a number, got ""`, ""},
		// Blank lines between rows carry nothing and are skipped.
		{"blank lines", desc(sec, prior, "gaussian"), "bin,mean,sd\n\n\n1,-7,0.2\n\n", "", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			read := func(rel string) (string, []byte, error) { return rel, []byte(tc.table), nil }
			ds, err := parse("d.yaml", []byte(tc.yaml), read)
			if tc.want == "" {
				if err != nil {
					t.Fatalf("unexpected error: %v", err)
				}
				// An accepted data set must build its tables without
				// panicking and score finitely.
				checkParsed(t, ds)
				var want []string
				if tc.warn != "" {
					want = []string{tc.warn}
				}
				if !slices.Equal(ds.Warnings, want) {
					t.Errorf("warnings\n got: %q\nwant: %q", ds.Warnings, want)
				}
				return
			}
			if err == nil || err.Error() != tc.want {
				t.Errorf("error\n got: %v\nwant: %s", err, tc.want)
			}
		})
	}
}

// TestWidePriorInMemory checks that data sets built in memory with an
// unusable prior range are refused by Validate, and so by NewFreeSpectrum,
// instead of panicking while the tables are allocated.
func TestWidePriorInMemory(t *testing.T) {
	samples := make([]float64, 100)
	for k := range samples {
		samples[k] = -7 + 0.01*float64(k)
	}
	for _, tc := range []struct {
		name   string
		lo, hi float64
		bin    Bin
		want   string
	}{
		{"2e308 wide", -1e308, 1e308, Bin{Kind: Samples, Samples: samples},
			`likelihood: data set "m": prior range: [-1e+308, 1e+308] is more than 1000 decades wide; the prior of log10 rho under which free spectra are made spans a few decades, e.g. [-9, -5]`},
		{"2e12 wide", -1e12, 1e12, Bin{Kind: Gaussian, Mean: -7, SD: 0.2},
			`likelihood: data set "m": prior range: [-1e+12, 1e+12] is more than 1000 decades wide; the prior of log10 rho under which free spectra are made spans a few decades, e.g. [-9, -5]`},
		{"narrow samples", -600, 300, Bin{Kind: Samples, Samples: []float64{-7, -7 + 1e-4, -7 + 2e-4}},
			`likelihood: data set "m": bin 1 (samples): 3 samples, need at least 50`},
		{"samples spread under 1e-6", -600, 300, Bin{Kind: Samples, Samples: scaled(samples, 1e-5)},
			`likelihood: data set "m": bin 1 (samples): the samples spread over 9.9e-06 dex, less than 1e-06 of the prior range [-600, 300]; no density table over that range can resolve them: narrow the prior`},
	} {
		ds := &Dataset{Name: "m", Span: 1e8, Freqs: []float64{1e-8}, PriorMin: tc.lo, PriorMax: tc.hi, Bins: []Bin{tc.bin}}
		if err := ds.Validate(); err == nil || err.Error() != tc.want {
			t.Errorf("%s: Validate\n got: %v\nwant: %s", tc.name, err, tc.want)
		}
		if _, err := NewFreeSpectrum(ds, Options{}); err == nil || err.Error() != tc.want {
			t.Errorf("%s: NewFreeSpectrum\n got: %v\nwant: %s", tc.name, err, tc.want)
		}
	}
}

// scaled maps s affinely about its first element, shrinking its spread by f.
func scaled(s []float64, f float64) []float64 {
	out := make([]float64, len(s))
	for k, x := range s {
		out[k] = s[0] + f*(x-s[0])
	}
	return out
}

// TestTableCellsCap checks the guard on the table's size: bins x table
// points beyond maxTableCells are refused before anything is allocated.
func TestTableCellsCap(t *testing.T) {
	n := maxTableCells/(1<<22) + 1
	ds := &Dataset{Name: "c", Span: 1e8, PriorMin: -9, PriorMax: -5}
	for i := range n {
		ds.Freqs = append(ds.Freqs, float64(i+1)/ds.Span)
		ds.Bins = append(ds.Bins, Bin{Kind: Gaussian, Mean: -7, SD: 0.2})
	}
	want := fmt.Sprintf("likelihood: %d bins of %d table points is more than the %d table cells supported", n, 1<<22, maxTableCells)
	if _, err := NewFreeSpectrum(ds, Options{TableSize: 1 << 22}); err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
	if math.MaxInt/(1<<22) < n {
		t.Fatal("test sizes overflow int")
	}
}
