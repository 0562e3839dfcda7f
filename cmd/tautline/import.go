package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"tautline/cmd/tautline/internal/cli"
	"tautline/likelihood"
	"tautline/likelihood/importer"
	"tautline/models/gw"
)

const importHelp = `
Turns a free spectrum as it is usually distributed into a tautline data set
(a YAML description plus CSV tables in --out, written atomically), so that
inspect, fit and compare can read it. SHAPE is one of

  samples  posterior samples of log10 rho: a matrix with one row per sample
           and one column per frequency bin, as .npy, .npz (--array) or
           text (comma- or space-separated, optional header row); or, with
           --long, two columns bin,value with bins numbered from 1
  grid     densities in wide form: one column of log10 rho (--abscissa) and
           one density column per bin (text, .npy or .npz)
  summary  a table with a header row naming its columns: median with
           lower,upper (interval ends) or minus,plus (distances), and/or
           limit (a one-sided upper limit); one row per bin. A summary keeps
           three numbers of each posterior and loses the rest; the shape it
           is written as is stated in a warning.

A file cannot say everything a data set needs, so give: the time span
(--span-years or --span-seconds), the bins (--harmonics for f_i = i/T, or
--freqs-hz), and the uniform prior range of log10(rho/s) under which the
original analysis made its posteriors (--prior). The file's name and SHA-256,
and every conversion, burn-in, thinning and column choice, are appended to
the data set's provenance. Values that look like the usual mistakes (a
transposed matrix, ln rho given as log10 rho, NaN, too few samples, samples
outside the prior) are refused with the file and column named.`

// importShapes are the SHAPE arguments of import.
var importShapes = []string{"samples", "grid", "summary"}

// importOnly names the options that apply to some shapes only.
var importOnly = []struct {
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

func runImport(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "import", "samples|grid|summary FILE --out DIR --name NAME --prior LO,HI\n"+
		"         (--span-years Y | --span-seconds S) (--harmonics N | --freqs-hz F1,F2,...) [options]", importHelp)
	out := fs.String("out", "", "output folder (required); created if missing; DIR/NAME.yaml and its tables are replaced if present")
	name := fs.String("name", "", "data-set name (required), also the base name of the files written: letters, digits, '.', '_', '-'")
	prov := fs.String("provenance", "", "one line saying where the data come from (and that they are simulated, if so); the file's name and SHA-256 are appended")
	spanYr := fs.Float64("span-years", 0, "time span T of the observations in Julian years (365.25 d); or --span-seconds")
	spanS := fs.Float64("span-seconds", 0, "time span T of the observations in s; or --span-years")
	harmonics := fs.Int("harmonics", 0, "number of bins n at f_i = i/T, i = 1..n; or --freqs-hz")
	freqsHz := fs.String("freqs-hz", "", "bin frequencies in Hz, comma-separated, increasing; each must be i/T unless --irregular")
	irregular := fs.Bool("irregular", false, "the --freqs-hz are not the harmonics i/T")
	prior := fs.String("prior", "", "LO,HI: the uniform prior range of log10(rho/s) of the original analysis (required; in log10(rho/s) whatever --unit)")
	unit := fs.String("unit", string(importer.Log10RhoS), "unit of the file's values: log10-rho-s (log10 of rho in s), log10-rho-ns (rho in ns), ln-rho-s (natural log, rho in s) or log10-psd-s3 (log10 of the residual PSD S in s^3, rho^2 = S/T)")
	array := fs.String("array", "", "samples, grid: the array of an .npz archive (empty: its only array)")
	long := fs.Bool("long", false, "samples: the text file is in long form, two columns bin,value with bins 1..n")
	columns := fs.String("columns", "", "samples, grid: comma-separated 0-based columns holding bins 1..n in bin order (default: every column in file order; for grid, every column but the abscissa)")
	columnNames := fs.String("column-names", "", "samples: pick the columns of bins 1..n by their header names instead, comma-separated")
	burnIn := fs.Float64("burn-in", 0, "samples: fraction in [0, 1) of leading rows of each column dropped as burn-in")
	thin := fs.Int("thin", 1, "samples: keep every N-th row after the burn-in")
	abscissa := fs.Int("abscissa", 0, "grid: 0-based column of log10 rho (in --unit)")
	logDensity := fs.Bool("log-density", false, "grid: the density columns hold the natural log of the density (any additive constant)")
	level := fs.Int("level", importer.Level68, "summary: central interval of the two-sided rows in percent: 68 (15.87 % to 84.13 % quantiles) or 95 (2.5 % to 97.5 %)")
	limitLevel := fs.Float64("limit-level", 0.95, "summary: probability below the upper limits, in (0.5, 1)")

	// Flags may come before, between or after SHAPE and FILE.
	var pos []string
	for {
		if err := cli.Parse(fs, args); err != nil {
			return err
		}
		if fs.NArg() == 0 {
			break
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
	if len(pos) != 2 {
		return fmt.Errorf("%w: want a shape (samples, grid or summary) and a file, got %d arguments", errUsage, len(pos))
	}
	shape, file := pos[0], pos[1]
	if !slices.Contains(importShapes, shape) {
		return fmt.Errorf("%w: shape %q: want samples, grid or summary", errUsage, shape)
	}
	set := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
	for _, o := range importOnly {
		if set[o.opt] && !slices.Contains(o.shapes, shape) {
			return fmt.Errorf("%w: --%s applies to %s imports, not %s", errUsage, o.opt, strings.Join(o.shapes, " and "), shape)
		}
	}

	meta, err := importMeta(set, *name, *prov, *spanYr, *spanS, *harmonics, *freqsHz, *irregular, *prior, *unit)
	if err != nil {
		return err
	}
	if *out == "" {
		return fmt.Errorf("%w: --out is required", errUsage)
	}
	if set["columns"] && set["column-names"] {
		return fmt.Errorf("%w: give --columns or --column-names, not both", errUsage)
	}
	cols, err := parseColumns(*columns)
	if err != nil {
		return err
	}
	if *long && *array != "" {
		return fmt.Errorf("%w: --long reads a text file; --array names an array of an .npz archive", errUsage)
	}
	if !(*burnIn >= 0 && *burnIn < 1) {
		return fmt.Errorf("%w: --burn-in %g: want a fraction in [0, 1)", errUsage, *burnIn)
	}
	if *thin < 1 {
		return fmt.Errorf("%w: --thin %d: want 1 or more", errUsage, *thin)
	}
	if *abscissa < 0 {
		return fmt.Errorf("%w: --abscissa %d: want a 0-based column number", errUsage, *abscissa)
	}
	if *level != importer.Level68 && *level != importer.Level95 {
		return fmt.Errorf("%w: --level %d: want 68 or 95", errUsage, *level)
	}
	if !(*limitLevel > 0.5 && *limitLevel < 1) {
		return fmt.Errorf("%w: --limit-level %g: want a probability in (0.5, 1)", errUsage, *limitLevel)
	}

	var ds *likelihood.Dataset
	var warning string
	switch shape {
	case "samples":
		opt := importer.MatrixOptions{Meta: meta, Columns: cols, ColumnNames: cli.SplitList(*columnNames), BurnIn: *burnIn, Thin: *thin}
		var m *importer.Matrix
		if *long {
			m, err = importer.ReadLong(file, 0)
		} else {
			m, err = importer.ReadMatrix(file, *array, 0)
		}
		if err == nil {
			ds, err = importer.FromMatrix(m, opt)
		}
	case "grid":
		ds, err = importer.ReadGrid(file, *array, 0, importer.GridOptions{Meta: meta, Abscissa: *abscissa, Columns: cols, LogDensity: *logDensity})
	case "summary":
		ds, warning, err = importer.ReadSummary(file, importer.SummaryOptions{Meta: meta, Level: *level, LimitLevel: *limitLevel})
	}
	if err != nil {
		return err
	}
	sum, err := fileSHA256(file)
	if err != nil {
		return err
	}
	source := "source file " + filepath.Base(file)
	if *array != "" {
		source = fmt.Sprintf("array %s of source file %s", *array, filepath.Base(file))
	}
	rest := strings.TrimPrefix(ds.Provenance, meta.Provenance)
	ds.Provenance = fmt.Sprintf("%s; %s (sha256 %s)%s", meta.Provenance, source, sum, rest)

	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("output folder: %w", err)
	}
	saved, err := importer.Save(*out, ds)
	if err != nil {
		return err
	}
	if warning != "" {
		fmt.Fprintf(e.stderr, "tautline import: warning: %s\n", warning)
	}
	printImported(e.stdout, shape, file, *out, saved)
	if *prov == "" {
		fmt.Fprintln(e.stdout, "note: no --provenance given; say where the data come from with --provenance TEXT")
	}
	return nil
}

// importMeta checks the options every shape needs and turns them into the
// importer's Meta.
func importMeta(set map[string]bool, name, prov string, spanYr, spanS float64, harmonics int,
	freqsHz string, irregular bool, prior, unit string) (importer.Meta, error) {
	var m importer.Meta
	if name == "" {
		return m, fmt.Errorf("%w: --name is required", errUsage)
	}
	m.Name = name
	m.Provenance = strings.TrimSpace(prov)
	if m.Provenance == "" {
		m.Provenance = "origin not stated"
	}
	if strings.ContainsAny(m.Provenance, "\r\n") {
		return m, fmt.Errorf("%w: --provenance must be one line", errUsage)
	}
	switch {
	case set["span-years"] == set["span-seconds"]:
		return m, fmt.Errorf("%w: give the time span with exactly one of --span-years and --span-seconds", errUsage)
	case set["span-years"]:
		m.Span = spanYr * gw.JulianYear
	default:
		m.Span = spanS
	}
	if !(m.Span > 0) || math.IsInf(m.Span, 0) {
		return m, fmt.Errorf("%w: the time span must be a finite number > 0", errUsage)
	}
	switch {
	case set["harmonics"] == set["freqs-hz"]:
		return m, fmt.Errorf("%w: give the bins with exactly one of --harmonics and --freqs-hz", errUsage)
	case set["harmonics"]:
		if harmonics < 1 {
			return m, fmt.Errorf("%w: --harmonics %d: want 1 or more bins", errUsage, harmonics)
		}
		if irregular {
			return m, fmt.Errorf("%w: --irregular needs the frequencies listed with --freqs-hz", errUsage)
		}
		m.Harmonics = harmonics
	default:
		f, err := parseFloatList("--freqs-hz", freqsHz, 0)
		if err != nil {
			return m, err
		}
		m.Freqs, m.Irregular = f, irregular
	}
	if prior == "" {
		return m, fmt.Errorf("%w: --prior LO,HI is required: the uniform log10(rho/s) prior range of the original analysis", errUsage)
	}
	p, err := parseFloatList("--prior", prior, 2)
	if err != nil {
		return m, err
	}
	if !(p[0] < p[1]) {
		return m, fmt.Errorf("%w: --prior %s: want LO < HI", errUsage, prior)
	}
	m.PriorMin, m.PriorMax = p[0], p[1]
	u, err := importer.ParseUnit(unit)
	if err != nil {
		return m, fmt.Errorf("%w: --unit %q: want one of log10-rho-s, log10-rho-ns, ln-rho-s, log10-psd-s3", errUsage, unit)
	}
	m.Unit = u
	return m, nil
}

// parseFloatList reads comma-separated finite numbers; want > 0 demands
// exactly that many.
func parseFloatList(opt, s string, want int) ([]float64, error) {
	parts := strings.Split(s, ",")
	if want > 0 && len(parts) != want {
		return nil, fmt.Errorf("%w: %s %q: want %d comma-separated numbers", errUsage, opt, s, want)
	}
	out := make([]float64, len(parts))
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("%w: %s: %q is not a finite number", errUsage, opt, strings.TrimSpace(p))
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
			return nil, fmt.Errorf("%w: --columns: %q is not a 0-based column number", errUsage, strings.TrimSpace(p))
		}
		out = append(out, c)
	}
	return out, nil
}

// fileSHA256 returns the hex SHA-256 of the file at path, which the importer
// has just read (so it is a regular file within the read limit).
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

// printImported says what import wrote and what to run next.
func printImported(w io.Writer, shape, file, out string, ds *likelihood.Dataset) {
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
