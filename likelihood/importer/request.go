package importer

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"tautline/likelihood"
	"tautline/models/gw"
)

// ErrRequest marks a Request that cannot be carried out as stated: a
// missing or contradictory option (the caller's command line is at
// fault, not the file).
var ErrRequest = errors.New("importer: malformed request")

// Shapes are the shapes of file an import reads.
func Shapes() []string { return []string{"samples", "grid", "summary"} }

// shapeOnly names the options that apply to some shapes only.
var shapeOnly = []struct {
	opt    string
	shapes []string
}{
	{"array", []string{"samples", "grid"}},
	{"long", []string{"samples"}},
	{"columns", []string{"samples", "grid"}},
	{"column-names", []string{"samples"}},
	{"burn-in", []string{"samples"}},
	{"thin", []string{"samples"}},
	{"abscissa", []string{"grid"}},
	{"log-density", []string{"grid"}},
	{"level", []string{"summary"}},
	{"limit-level", []string{"summary"}},
}

// Request is one import as a command line states it: the shape and file,
// and the values of the options, named in messages as --NAME. Set holds
// the names of the options given (without dashes), because some must be
// given exactly one of (the span, the bins) and some apply to one shape.
type Request struct {
	Shape, File, Out, Name, Provenance string
	SpanYears, SpanSeconds             float64
	Harmonics                          int
	FreqsHz                            string
	Irregular                          bool
	Prior, Unit                        string
	Array                              string
	Long                               bool
	Columns, ColumnNames               string
	BurnIn                             float64
	Thin, Abscissa                     int
	LogDensity                         bool
	Level                              int
	LimitLevel                         float64
	Set                                map[string]bool
}

// Result is a finished import: the data set as saved (with its digest),
// and a warning about how a summary was rebuilt ("" for none).
type Result struct {
	Data    *likelihood.Dataset
	Warning string
}

// usage returns an ErrRequest error.
func usage(format string, args ...any) error {
	return fmt.Errorf("%w: %s", ErrRequest, fmt.Sprintf(format, args...))
}

// Run checks r, reads its file, appends the file's name and SHA-256 to the
// provenance and saves the data set in r.Out (created if missing).
// Errors caused by the options wrap ErrRequest.
func Run(r Request) (*Result, error) {
	if !slices.Contains(Shapes(), r.Shape) {
		return nil, usage("shape %q: want samples, grid or summary", r.Shape)
	}
	for _, o := range shapeOnly {
		if r.Set[o.opt] && !slices.Contains(o.shapes, r.Shape) {
			return nil, usage("--%s applies to %s imports, not %s", o.opt, strings.Join(o.shapes, " and "), r.Shape)
		}
	}
	meta, err := r.meta()
	if err != nil {
		return nil, err
	}
	cols, err := r.check()
	if err != nil {
		return nil, err
	}
	var ds *likelihood.Dataset
	var warning string
	switch r.Shape {
	case "samples":
		opt := MatrixOptions{Meta: meta, Columns: cols, ColumnNames: splitList(r.ColumnNames), BurnIn: r.BurnIn, Thin: r.Thin}
		var m *Matrix
		if r.Long {
			m, err = ReadLong(r.File, 0)
		} else {
			m, err = ReadMatrix(r.File, r.Array, 0)
		}
		if err == nil {
			ds, err = FromMatrix(m, opt)
		}
	case "grid":
		ds, err = ReadGrid(r.File, r.Array, 0, GridOptions{Meta: meta, Abscissa: r.Abscissa, Columns: cols, LogDensity: r.LogDensity})
	case "summary":
		ds, warning, err = ReadSummary(r.File, SummaryOptions{Meta: meta, Level: r.Level, LimitLevel: r.LimitLevel})
	}
	if err != nil {
		return nil, err
	}
	sum, err := fileSHA256(r.File)
	if err != nil {
		return nil, err
	}
	source := "source file " + filepath.Base(r.File)
	if r.Array != "" {
		source = fmt.Sprintf("array %s of source file %s", r.Array, filepath.Base(r.File))
	}
	rest := strings.TrimPrefix(ds.Provenance, meta.Provenance)
	ds.Provenance = fmt.Sprintf("%s; %s (sha256 %s)%s", meta.Provenance, source, sum, rest)
	if err := os.MkdirAll(r.Out, 0o755); err != nil {
		return nil, fmt.Errorf("output folder: %w", err)
	}
	saved, err := Save(r.Out, ds)
	if err != nil {
		return nil, err
	}
	return &Result{Data: saved, Warning: warning}, nil
}

// check refuses shape options out of range and returns the columns.
func (r Request) check() ([]int, error) {
	if r.Out == "" {
		return nil, usage("--out is required")
	}
	if r.Set["columns"] && r.Set["column-names"] {
		return nil, usage("give --columns or --column-names, not both")
	}
	cols, err := parseColumns(r.Columns)
	if err != nil {
		return nil, err
	}
	switch {
	case r.Long && r.Array != "":
		return nil, usage("--long reads a text file; --array names an array of an .npz archive")
	case !(r.BurnIn >= 0 && r.BurnIn < 1):
		return nil, usage("--burn-in %g: want a fraction in [0, 1)", r.BurnIn)
	case r.Thin < 1:
		return nil, usage("--thin %d: want 1 or more", r.Thin)
	case r.Abscissa < 0:
		return nil, usage("--abscissa %d: want a 0-based column number", r.Abscissa)
	case r.Level != Level68 && r.Level != Level95:
		return nil, usage("--level %d: want 68 or 95", r.Level)
	case !(r.LimitLevel > 0.5 && r.LimitLevel < 1):
		return nil, usage("--limit-level %g: want a probability in (0.5, 1)", r.LimitLevel)
	}
	return cols, nil
}

// meta checks the options every shape needs and turns them into a Meta.
func (r Request) meta() (Meta, error) {
	var m Meta
	if r.Name == "" {
		return m, usage("--name is required")
	}
	m.Name = r.Name
	m.Provenance = strings.TrimSpace(r.Provenance)
	if m.Provenance == "" {
		m.Provenance = "origin not stated"
	}
	if strings.ContainsAny(m.Provenance, "\r\n") {
		return m, usage("--provenance must be one line")
	}
	switch {
	case r.Set["span-years"] == r.Set["span-seconds"]:
		return m, usage("give the time span with exactly one of --span-years and --span-seconds")
	case r.Set["span-years"]:
		m.Span = r.SpanYears * gw.JulianYear
	default:
		m.Span = r.SpanSeconds
	}
	if !(m.Span > 0) || math.IsInf(m.Span, 0) {
		return m, usage("the time span must be a finite number > 0")
	}
	switch {
	case r.Set["harmonics"] == r.Set["freqs-hz"]:
		return m, usage("give the bins with exactly one of --harmonics and --freqs-hz")
	case r.Set["harmonics"]:
		if r.Harmonics < 1 {
			return m, usage("--harmonics %d: want 1 or more bins", r.Harmonics)
		}
		if r.Irregular {
			return m, usage("--irregular needs the frequencies listed with --freqs-hz")
		}
		m.Harmonics = r.Harmonics
	default:
		f, err := parseFloatList("--freqs-hz", r.FreqsHz, 0)
		if err != nil {
			return m, err
		}
		m.Freqs, m.Irregular = f, r.Irregular
	}
	if r.Prior == "" {
		return m, usage("--prior LO,HI is required: the uniform log10(rho/s) prior range of the original analysis")
	}
	p, err := parseFloatList("--prior", r.Prior, 2)
	if err != nil {
		return m, err
	}
	if !(p[0] < p[1]) {
		return m, usage("--prior %s: want LO < HI", r.Prior)
	}
	m.PriorMin, m.PriorMax = p[0], p[1]
	u, err := ParseUnit(r.Unit)
	if err != nil {
		return m, usage("--unit %q: want one of log10-rho-s, log10-rho-ns, ln-rho-s, log10-psd-s3", r.Unit)
	}
	m.Unit = u
	return m, nil
}

// parseFloatList reads comma-separated finite numbers; want > 0 demands
// exactly that many.
func parseFloatList(opt, s string, want int) ([]float64, error) {
	parts := strings.Split(s, ",")
	if want > 0 && len(parts) != want {
		return nil, usage("%s %q: want %d comma-separated numbers", opt, s, want)
	}
	out := make([]float64, len(parts))
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, usage("%s: %q is not a finite number", opt, strings.TrimSpace(p))
		}
		out[i] = x
	}
	return out, nil
}

// parseColumns reads --columns; "" means nil (every column).
func parseColumns(s string) ([]int, error) {
	if s == "" {
		return nil, nil
	}
	var out []int
	for _, p := range strings.Split(s, ",") {
		c, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || c < 0 {
			return nil, usage("--columns: %q is not a 0-based column number", strings.TrimSpace(p))
		}
		out = append(out, c)
	}
	return out, nil
}

// splitList splits a comma-separated list, trimming blanks and dropping
// empty entries.
func splitList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

// fileSHA256 returns the hex SHA-256 of the file at path, which the
// readers have just read (so it is a regular file within the read limit).
func fileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("%s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// Report says what an import wrote and what to run next.
func Report(w io.Writer, shape, file, out string, ds *likelihood.Dataset) {
	desc := filepath.Join(out, ds.Name+".yaml")
	files := []string{desc}
	seen := map[likelihood.Representation]bool{}
	for _, b := range ds.Bins {
		if !seen[b.Kind] {
			seen[b.Kind] = true
			files = append(files, filepath.Join(out, ds.Name+"-"+b.Kind.String()+".csv"))
		}
	}
	fmt.Fprintf(w, "imported %d bins (%s) from %s\n", len(ds.Bins), shape, file)
	fmt.Fprintf(w, "wrote %s\n", strings.Join(files, ", "))
	fmt.Fprintf(w, "data set %q: span %.4g yr, log10 rho prior [%g, %g], sha256 %s\n",
		ds.Name, ds.Span/gw.JulianYear, ds.PriorMin, ds.PriorMax, ds.SHA256)
	fmt.Fprintf(w, "next:\n  tautline inspect %s\n  tautline fit --data %s --model strings\n", desc, desc)
}
