package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"strconv"
	"text/tabwriter"

	"tautline/cmd/tautline/internal/cli"
	"tautline/models/gw"
	"tautline/models/registry"
	"tautline/runconfig"
)

const spectrumHelp = `
Prints a model's spectrum at chosen frequencies: f [Hz], Omega_GW (per
logarithmic frequency interval, today), the characteristic strain h_c, the
one-sided timing-residual power spectral density S(f) [s^3], and log10 rho
[rho in s] for an array of time span --span-yr. Frequencies come from --freqs
or a logarithmic grid (--fmin, --fmax, --n). Use it to check a curve against a
published one. Model parameters not given with --param take the defaults
log10_A=-14.6, gamma=13/3, log10_Gmu=log10(2e-11), log10_alpha=-1, log10_P=0.`

// spectrumRow is one frequency of `spectrum --format json`.
type spectrumRow struct {
	F        float64 `json:"f_hz"`
	Omega    float64 `json:"omega_gw"`
	Hc       float64 `json:"h_c"`
	PSD      float64 `json:"psd_s3"`
	Log10Rho float64 `json:"log10_rho"`
}

func runSpectrum(_ context.Context, e *env, args []string) error {
	cfg := runconfig.Default()
	fs := newFlagSet(e, "spectrum", "[options]", spectrumHelp)
	runconfig.BindModel(fs, &cfg)
	var params cli.Multi
	fs.Var(&params, "param", "model parameter NAME=VALUE, e.g. log10_Gmu=-10 (fractions like 13/3 allowed); repeatable")
	freqList := fs.String("freqs", "", "comma-separated frequencies in Hz; overrides --fmin/--fmax/--n")
	fmin := fs.Float64("fmin", 1e-9, "lowest frequency of the logarithmic grid, Hz")
	fmax := fs.Float64("fmax", 1e-7, "highest frequency of the logarithmic grid, Hz")
	n := fs.Int("n", 30, "number of grid frequencies")
	spanYr := fs.Float64("span-yr", 15, "array time span T in years, for log10 rho")
	format := fs.String("format", "table", "output format: table, csv or json")
	if err := cli.Parse(fs, args); err != nil {
		return err
	}
	if fs.NArg() != 0 {
		return fmt.Errorf("%w: unexpected argument %q", errUsage, fs.Arg(0))
	}
	freqs, err := runconfig.Frequencies(*freqList, *fmin, *fmax, *n)
	if err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	if *spanYr <= 0 {
		return fmt.Errorf("%w: --span-yr must be > 0, got %g", errUsage, *spanYr)
	}
	m, theta, ln, err := modelAt(cfg, params, freqs, stderrLog(e))
	if err != nil {
		return err
	}
	h0 := gw.H0SI(cfg.Cosmology.H0)
	span := *spanYr * gw.JulianYear
	rows := make([]spectrumRow, len(freqs))
	for i, f := range freqs {
		r := &rows[i]
		r.F = f
		r.Omega, r.Hc, r.PSD, r.Log10Rho = gw.Forms(f, ln[i], h0, span)
	}
	switch *format {
	case "json":
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(struct {
			Model  string             `json:"model"`
			Params map[string]float64 `json:"params"`
			SpanYr float64            `json:"span_yr"`
			H0     float64            `json:"h0_km_s_mpc"`
			Rows   []spectrumRow      `json:"spectrum"`
		}{m.Name(), registry.ParamMap(m, theta), *spanYr, cfg.Cosmology.H0, rows})
	case "csv":
		w := csv.NewWriter(e.stdout)
		_ = w.Write([]string{"f_hz", "omega_gw", "h_c", "psd_s3", "log10_rho"})
		for _, r := range rows {
			_ = w.Write([]string{g(r.F), g(r.Omega), g(r.Hc), g(r.PSD), g(r.Log10Rho)})
		}
		w.Flush()
		return w.Error()
	case "table":
		fmt.Fprintf(e.stdout, "# model %s: %s; span %g yr; H0 %g km/s/Mpc\n", m.Name(), registry.DescribeTheta(m.Params(), theta), *spanYr, cfg.Cosmology.H0)
		tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "f [Hz]\tOmega_GW\th_c\tS(f) [s^3]\tlog10 rho [s]\t")
		for _, r := range rows {
			fmt.Fprintf(tw, "%.5e\t%.5e\t%.5e\t%.5e\t%.4f\t\n", r.F, r.Omega, r.Hc, r.PSD, r.Log10Rho)
		}
		return tw.Flush()
	}
	return fmt.Errorf("%w: --format %q: want table, csv or json", errUsage, *format)
}

func g(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
