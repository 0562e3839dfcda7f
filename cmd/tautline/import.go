package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"strings"

	"tautline/cmd/tautline/internal/cli"
	"tautline/likelihood/importer"
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

func runImport(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "import", "samples|grid|summary FILE --out DIR --name NAME --prior LO,HI\n"+
		"         (--span-years Y | --span-seconds S) (--harmonics N | --freqs-hz F1,F2,...) [options]", importHelp)
	var r importer.Request
	fs.StringVar(&r.Out, "out", "", "output folder (required); created if missing; DIR/NAME.yaml and its tables are replaced if present")
	fs.StringVar(&r.Name, "name", "", "data-set name (required), also the base name of the files written: letters, digits, '.', '_', '-'")
	fs.StringVar(&r.Provenance, "provenance", "", "one line saying where the data come from (and that they are simulated, if so); the file's name and SHA-256 are appended")
	fs.Float64Var(&r.SpanYears, "span-years", 0, "time span T of the observations in Julian years (365.25 d); or --span-seconds")
	fs.Float64Var(&r.SpanSeconds, "span-seconds", 0, "time span T of the observations in s; or --span-years")
	fs.IntVar(&r.Harmonics, "harmonics", 0, "number of bins n at f_i = i/T, i = 1..n; or --freqs-hz")
	fs.StringVar(&r.FreqsHz, "freqs-hz", "", "bin frequencies in Hz, comma-separated, increasing; each must be i/T unless --irregular")
	fs.BoolVar(&r.Irregular, "irregular", false, "the --freqs-hz are not the harmonics i/T")
	fs.StringVar(&r.Prior, "prior", "", "LO,HI: the uniform prior range of log10(rho/s) of the original analysis (required; in log10(rho/s) whatever --unit)")
	fs.StringVar(&r.Unit, "unit", string(importer.Log10RhoS), "unit of the file's values: log10-rho-s (log10 of rho in s), log10-rho-ns (rho in ns), ln-rho-s (natural log, rho in s) or log10-psd-s3 (log10 of the residual PSD S in s^3, rho^2 = S/T)")
	fs.StringVar(&r.Array, "array", "", "samples, grid: the array of an .npz archive (empty: its only array)")
	fs.BoolVar(&r.Long, "long", false, "samples: the text file is in long form, two columns bin,value with bins 1..n")
	fs.StringVar(&r.Columns, "columns", "", "samples, grid: comma-separated 0-based columns holding bins 1..n in bin order (default: every column in file order; for grid, every column but the abscissa)")
	fs.StringVar(&r.ColumnNames, "column-names", "", "samples: pick the columns of bins 1..n by their header names instead, comma-separated")
	fs.Float64Var(&r.BurnIn, "burn-in", 0, "samples: fraction in [0, 1) of leading rows of each column dropped as burn-in")
	fs.IntVar(&r.Thin, "thin", 1, "samples: keep every N-th row after the burn-in")
	fs.IntVar(&r.Abscissa, "abscissa", 0, "grid: 0-based column of log10 rho (in --unit)")
	fs.BoolVar(&r.LogDensity, "log-density", false, "grid: the density columns hold the natural log of the density (any additive constant)")
	fs.IntVar(&r.Level, "level", importer.Level68, "summary: central interval of the two-sided rows in percent: 68 (15.87 % to 84.13 % quantiles) or 95 (2.5 % to 97.5 %)")
	fs.Float64Var(&r.LimitLevel, "limit-level", 0.95, "summary: probability below the upper limits, in (0.5, 1)")

	// Flags may come before, between or after SHAPE and FILE.
	pos, err := cli.ParseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 2 {
		return fmt.Errorf("%w: want a shape (samples, grid or summary) and a file, got %d arguments", errUsage, len(pos))
	}
	r.Shape, r.File, r.Set = pos[0], pos[1], map[string]bool{}
	fs.Visit(func(f *flag.Flag) { r.Set[f.Name] = true })
	res, err := importer.Run(r)
	if errors.Is(err, importer.ErrRequest) {
		return fmt.Errorf("%w: %s", errUsage, strings.TrimPrefix(err.Error(), importer.ErrRequest.Error()+": "))
	}
	if err != nil {
		return err
	}
	if res.Warning != "" {
		fmt.Fprintf(e.stderr, "tautline import: warning: %s\n", res.Warning)
	}
	importer.Report(e.stdout, r.Shape, r.File, r.Out, res.Data)
	if r.Provenance == "" {
		fmt.Fprintln(e.stdout, "note: no --provenance given; say where the data come from with --provenance TEXT")
	}
	return nil
}
