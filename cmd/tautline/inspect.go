package main

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"text/tabwriter"

	"tautline/cmd/tautline/internal/cli"
	"tautline/models/gw"
	"tautline/runconfig"
)

const inspectHelp = `
Reads a free-spectrum data set (its YAML description and the CSV files it
names), checks it, and prints one row per frequency bin: the frequency, the
median and central 68 % interval of log10 rho (rho in seconds), and how the
bin's posterior is given (samples, grid or gaussian). DATA is a path or
demo:NAME, an embedded simulated demo (DEMOS); with
several, each is printed in turn (--json: a list). Any problem is reported
with the file, line and field at fault, and the exit status is 1.`

// inspectRow is one bin in `inspect --json`.
type inspectRow struct {
	Bin            int     `json:"bin"` // harmonic number i of f_i = i/T, from 1 as in the data files
	FrequencyHz    float64 `json:"frequency_hz"`
	Median         float64 `json:"log10_rho_median"`
	Lo68           float64 `json:"log10_rho_lo68"`
	Hi68           float64 `json:"log10_rho_hi68"`
	Representation string  `json:"representation"`
}

// inspectOut is the whole `inspect --json` document.
type inspectOut struct {
	Name          string       `json:"name"`
	Provenance    string       `json:"provenance"`
	SpanSeconds   float64      `json:"span_s"`
	SpanYears     float64      `json:"span_yr"`
	PriorLog10Rho [2]float64   `json:"prior_log10_rho"`
	SHA256        string       `json:"sha256"`
	Bins          []inspectRow `json:"bins"`
	Total         int          `json:"total_bins"`
	Warnings      []string     `json:"warnings,omitempty"`
}

func runInspect(_ context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "inspect", "[--json] DATA [DATA...]", strings.ReplaceAll(inspectHelp, "DEMOS", strings.Join(runconfig.Demos(), ", ")))
	asJSON := fs.Bool("json", false, "print JSON instead of a table (a list of documents for several data sets)")
	if err := cli.Parse(fs, args); err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return fmt.Errorf("%w: want at least one data set, got 0 arguments", errUsage)
	}
	var outs []inspectOut
	for _, spec := range fs.Args() {
		ds, err := loadData(spec)
		if err != nil {
			return err
		}
		out := inspectOut{
			Name: ds.Name, Provenance: ds.Provenance, SpanSeconds: ds.Span, SpanYears: ds.Span / gw.JulianYear,
			PriorLog10Rho: [2]float64{ds.PriorMin, ds.PriorMax}, SHA256: ds.SHA256, Warnings: ds.Warnings,
		}
		for _, b := range ds.Summary() {
			out.Bins = append(out.Bins, inspectRow{
				Bin: b.Index + 1, FrequencyHz: b.Freq, Median: b.Median, Lo68: b.Lo68, Hi68: b.Hi68, Representation: b.Kind.String(),
			})
		}
		out.Total = len(out.Bins)
		outs = append(outs, out)
	}
	if *asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		if len(outs) == 1 {
			return enc.Encode(outs[0])
		}
		return enc.Encode(outs)
	}
	for i, out := range outs {
		if i > 0 {
			fmt.Fprintln(e.stdout)
		}
		fmt.Fprintf(e.stdout, "%s\n%s\nspan %.4g yr (%.6g s); log10 rho prior [%g, %g]; sha256 %s\n\n",
			out.Name, out.Provenance, out.SpanYears, out.SpanSeconds, out.PriorLog10Rho[0], out.PriorLog10Rho[1], short(out.SHA256))
		tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "i\tfrequency [Hz]\tlog10 rho median\t68% low\t68% high\trepresentation\t")
		for _, r := range out.Bins {
			fmt.Fprintf(tw, "%d\t%.6e\t%.3f\t%.3f\t%.3f\t%s\t\n", r.Bin, r.FrequencyHz, r.Median, r.Lo68, r.Hi68, r.Representation)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
		fmt.Fprintf(e.stdout, "\ntotal: %d bins\n", out.Total)
		for _, w := range out.Warnings {
			fmt.Fprintf(e.stdout, "warning: %s\n", w)
		}
	}
	return nil
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}
