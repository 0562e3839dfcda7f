package main

import (
	"context"
	"fmt"
	"math"
	"os"

	"tautline/cmd/tautline/internal/cli"
	"tautline/likelihood"
	"tautline/likelihood/simulate"
	"tautline/models/gw"
	"tautline/models/registry"
	"tautline/runconfig"
)

const simulateHelp = `
Makes a synthetic free-spectrum data set: a model's spectrum seen by an
invented array of pulsars with white timing noise. In each frequency bin
f_i = i/T the residual power is drawn from its chi-squared statistics, and
the exact posterior of log10 rho under a uniform log10 rho prior is written
on a grid, in tautline's data format (a YAML description and CSV files in
--out). The result is seeded and reproducible, and its provenance line says
that it is simulated. Model parameters not given with --param take the
defaults log10_A=-14.6, gamma=13/3, log10_Gmu=log10(2e-11), log10_alpha=-1,
log10_P=0.`

func runSimulate(_ context.Context, e *env, args []string) error {
	cfg := runconfig.Default()
	fs := newFlagSet(e, "simulate", "[options] --out DIR", simulateHelp)
	runconfig.BindModel(fs, &cfg)
	var params cli.Multi
	fs.Var(&params, "param", "model parameter NAME=VALUE, e.g. log10_A=-14.6 (fractions like 13/3 allowed); repeatable")
	arr := runconfig.BindArray(fs)
	seed := fs.Uint64("seed", 1, "random seed")
	out := fs.String("out", "", "output folder (required); created if missing")
	name := fs.String("name", "simulated", "data-set name, also the YAML file's base name")
	samples := fs.Int("samples", 0, "also store this many posterior samples per bin (0: grid only)")
	if err := cli.Parse(fs, args); err != nil {
		return err
	}
	if *out == "" {
		return fmt.Errorf("%w: --out is required", errUsage)
	}
	if err := cli.First(cli.Require(fs.NArg() == 0, "unexpected argument %q", fs.Arg(0)),
		cli.Require(arr.Bins >= 1, "--bins must be >= 1, got %d", arr.Bins),
		cli.Require(arr.Bins <= simulate.MaxBins, "--bins %d is more than the %d bins a data set may hold", arr.Bins, simulate.MaxBins),
		cli.Require(*samples <= simulate.MaxSamples/max(arr.Bins, 1), "--samples %d x --bins %d is more than the %d samples a data set may store", *samples, arr.Bins, simulate.MaxSamples),
		cli.Require(arr.SpanYr > 0 && !math.IsInf(arr.SpanYr, 0), "--span-yr must be a positive number of years, got %g", arr.SpanYr)); err != nil {
		return err
	}
	m, theta, lnOmega, err := modelAt(cfg, params, gw.BinFrequencies(arr.Bins, arr.Array().Span), stderrLog(e))
	if err != nil {
		return err
	}
	ds, err := simulate.Run(lnOmega, arr.Array(), gw.H0SI(cfg.Cosmology.H0), *seed, simulate.GridOptions{Samples: *samples})
	if err != nil {
		return err
	}
	ds.Name = *name
	ds.Provenance = fmt.Sprintf("%s; model %s with %s", ds.Provenance, m.Name(), registry.DescribeTheta(m.Params(), theta))
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("output folder: %w", err)
	}
	if err := likelihood.Write(*out, *name, ds); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "wrote %d-bin simulated data set %q to %s (check it with: tautline inspect %s/%s.yaml)\n",
		len(ds.Freqs), *name, *out, *out, *name)
	return nil
}
