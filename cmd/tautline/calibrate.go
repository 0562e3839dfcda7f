package main

import (
	"context"
	"fmt"
	"io"
	"maps"
	"path/filepath"
	"strings"
	"time"

	"tautline/calibrate"
	"tautline/cmd/tautline/internal/cli"
	"tautline/likelihood/simulate"
	"tautline/models/gw"
	"tautline/models/registry"
	"tautline/runconfig"
)

const calibrateHelp = `
Checks that a model's inference is calibrated, by simulation-based
calibration (Talts et al. 2018): it draws --replicates parameter sets from
the prior, simulates a free-spectrum data set from each with the invented
array given by the array options (as tautline simulate does), fits each
with the ensemble sampler, keeps --draws posterior draws spaced by the
autocorrelation time, and ranks each true value among its draws. With a
correct likelihood, prior and sampler the ranks are uniform on 0..draws.

It writes to --out: ranks.csv (one row per replicate; numpy.loadtxt reads
it), coverage.csv/.json (how often the 50/68/95 % central intervals held
the truth, with binomial standard errors), uniformity.csv (chi-squared test
of uniform ranks per parameter), summary.json, a rank histogram per
parameter (rank_PARAM.png/.svg) with its 95 % simultaneous band (binomial
per-bin quantiles, Bonferroni over the bins), calibration.json (what the
results depend on) and replicates/ (one file per finished replicate).
--resume continues an interrupted run and gives the same bytes. A
parameter is flagged when its uniformity p-value is below --level.

--prior sets the prior of both the simulation and the fits; --fit-prior
changes only the fits' prior: a deliberately mis-specified check, which
should be flagged.`

func runCalibrate(ctx context.Context, e *env, args []string) error {
	fs := newFlagSet(e, "calibrate", "[options]", calibrateHelp)
	model := fs.String("model", "smbhb", "model: "+strings.Join(registry.Names(), ", "))
	var pri, fitPri cli.Multi
	fs.Var(&pri, "prior", "prior of one parameter in the simulation and the fits, NAME=SPEC, e.g. log10_A='uniform(-16,-13)'; repeatable; shapes: uniform(lo,hi), log-uniform(lo,hi), normal(mu,sd), truncnormal(mu,sd,lo,hi), fixed(v)")
	fs.Var(&fitPri, "fit-prior", "prior of one parameter in the fits only, NAME=SPEC (a deliberately mis-specified check); repeatable")
	fixGamma := fs.Bool("fix-gamma", false, "fix the SMBHB spectral index gamma to 13/3 (circular GW-driven binaries)")
	h0 := fs.Float64("h0", 67.4, "Hubble constant in km/s/Mpc")
	replicates := fs.Int("replicates", 100, "number of simulated data sets (N)")
	draws := fs.Int("draws", 99, "posterior draws kept per fit (L); ranks lie in 0..L, and L+1 should have divisors such as 10 or 20")
	walkers := fs.Int("walkers", 16, "ensemble walkers per fit (even, at least 2 x the sampled parameters)")
	steps := fs.Int("steps", 2000, "ensemble steps per fit")
	burn := fs.Int("burn", -1, "steps discarded per fit; -1 chooses 5 autocorrelation times or a tenth of the run, the longer")
	thin := fs.Int("thin", 0, "steps between kept draws; 0 uses the autocorrelation time, so that draws are roughly independent")
	seed := fs.Uint64("seed", 1, "run seed; replicate i uses a seed derived from it and i, so results do not depend on --workers")
	workers := fs.Int("workers", 0, "replicates fitted side by side; 0 uses every CPU")
	rankBins := fs.Int("rank-bins", 0, "bins of the rank histograms, dividing draws+1; 0 chooses at most 20 with at least 10 expected replicates each")
	level := fs.Float64("level", 0.01, "level of the uniformity test (a parameter is flagged when its p-value is below it)")
	formats := fs.String("formats", "png,svg", "figure formats: png, svg, both (comma-separated) or none")
	out := fs.String("out", "", "output folder; empty means runs/calibrate-MODEL")
	resume := fs.Bool("resume", false, "continue the calibration in --out, skipping the replicates already written")
	arr := runconfig.BindArray(fs)
	rhoMin := fs.Float64("log10-rho-min", -12, "lower end of the simulated data's log10 rho grid (rho in s)")
	rhoMax := fs.Float64("log10-rho-max", 0, "upper end of the log10 rho grid (rho in s); it must lie above what the prior predicts")
	gridPoints := fs.Int("grid-points", 1201, "points of the log10 rho grid of every bin")
	if err := cli.Parse(fs, args); err != nil {
		return err
	}
	if fs.NArg() != 0 {
		return fmt.Errorf("%w: unexpected argument %q", errUsage, fs.Arg(0))
	}
	simSpec, err := priorSpecs(pri, "--prior", "log10_A=uniform(-16,-13)")
	if err != nil {
		return err
	}
	fitSpec, err := priorSpecs(fitPri, "--fit-prior", "log10_A=uniform(-16,-13)")
	if err != nil {
		return err
	}
	figs, err := calibrate.ParseFormats(*formats)
	if err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	prob := calibrate.Problem{
		Array:    arr.Array(),
		H0:       gw.H0SI(*h0),
		Grid:     simulate.GridOptions{Min: *rhoMin, Max: *rhoMax, Points: *gridPoints},
		Describe: map[string]any{"model": *model, "fix_gamma": *fixGamma, "h0_km_s_mpc": *h0},
	}
	set := calibrate.Settings{
		Replicates: *replicates, Draws: *draws, Walkers: *walkers, Steps: *steps, Burn: *burn, Thin: *thin,
		Seed: *seed, Workers: *workers, RankBins: *rankBins, Level: *level, FigureFormats: figs, Resume: *resume,
	}
	if err := calibrate.CheckOptions(prob, set); err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	cfg := runconfig.Default()
	cfg.Model.Name, cfg.Model.FixGamma, cfg.Cosmology.H0 = *model, *fixGamma, *h0
	if prob.Model, err = registry.Build(cfg.ModelSettings(), stderrLog(e)); err != nil {
		return err
	}
	if prob.Simulate, err = registry.ResolvePriors(prob.Model, simSpec); err != nil {
		return err
	}
	both := maps.Clone(simSpec)
	maps.Copy(both, fitSpec) // the fits' own priors replace the simulation's
	if prob.Fit, err = registry.ResolvePriors(prob.Model, both); err != nil {
		return err
	}
	if *out == "" {
		*out = filepath.Join("runs", "calibrate-"+strings.ReplaceAll(*model, "+", "-"))
	}
	t0 := time.Now()
	every := max(1, *replicates/20)
	set.Out = *out
	set.Progress = func(p calibrate.Progress) {
		if p.Replicate == -1 {
			fmt.Fprintf(e.stderr, "calibrate: resuming: %d of %d replicates already in %s\n", p.Resumed, p.Total, *out)
			return
		}
		if fresh := p.Done - p.Resumed; fresh%every == 0 || p.Done == p.Total {
			el := time.Since(t0)
			left := time.Duration(float64(el) / float64(fresh) * float64(p.Total-p.Done))
			fmt.Fprintf(e.stderr, "calibrate: %d/%d replicates (%s, about %s left)\n", p.Done, p.Total,
				el.Round(100*time.Millisecond), left.Round(time.Second))
		}
	}
	res, err := calibrate.Run(ctx, prob, set)
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("%w; rerun with --resume to continue", err)
		}
		return err
	}
	printCalibration(e.stdout, prob.Model.Name(), res, *out, time.Since(t0))
	return nil
}

// priorSpecs reads repeated NAME=SPEC options.
func priorSpecs(list []string, flagName, example string) (map[string]string, error) {
	m, err := registry.ParseSpecs(list)
	if err != nil {
		return nil, fmt.Errorf("%w: %s %v, e.g. %s", errUsage, flagName, err, example)
	}
	return m, nil
}

func printCalibration(w io.Writer, model string, res *calibrate.Result, out string, took time.Duration) {
	fmt.Fprintf(w, "simulation-based calibration of %s: %d replicates, %d draws each, ranks in %d bins (95 %% simultaneous band: %d..%d replicates per bin)\n",
		model, len(res.Replicates), res.Draws, res.RankBins, res.Band.Lo, res.Band.Hi)
	fmt.Fprintf(w, "%-14s %-15s %-15s %-15s %-9s %s\n", "parameter", "cover 50%", "cover 68%", "cover 95%", "p(unif)", "verdict")
	for _, p := range res.Params {
		fmt.Fprintf(w, "%-14s", p.Name)
		for _, c := range p.Coverage {
			fmt.Fprintf(w, " %-15s", fmt.Sprintf("%.2f ± %.2f", c.Fraction, c.StdErr))
		}
		u := p.Uniformity
		verdict := "ranks uniform"
		if u.Flagged {
			verdict = fmt.Sprintf("FLAGGED: ranks not uniform at level %g", u.Level)
		}
		if n := len(u.OutsideBand); n > 0 {
			verdict += fmt.Sprintf("; %d bins outside the band", n)
		}
		fmt.Fprintf(w, " %-9.3g %s\n", u.P, verdict)
	}
	if len(res.Params) > 0 {
		var nom []string
		for _, c := range res.Params[0].Coverage {
			nom = append(nom, fmt.Sprintf("%.3g", c.Nominal))
		}
		fmt.Fprintf(w, "(a calibrated posterior covers %s of replicates with %d draws)\n", strings.Join(nom, " / "), res.Draws)
	}
	for _, wn := range res.Warnings {
		fmt.Fprintf(w, "warning: %s\n", wn)
	}
	fmt.Fprintf(w, "wrote %s to %s (%s)\n", strings.Join(res.Files, ", "), out, took.Round(100*time.Millisecond))
}
