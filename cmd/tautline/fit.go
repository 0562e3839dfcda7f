package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/sirupsen/logrus"

	"tautline/chains"
	"tautline/report"
	"tautline/runconfig"
	"tautline/rundir"
	"tautline/sampler"
)

const fitHelp = `
Samples the posterior of a model's parameters given a free-spectrum data set
with an affine-invariant ensemble sampler (stretch move), and writes to --out:
chain.csv (every walker at every step: step, walker, ln_post, ln_like, then
the sampled parameters), posterior.npy (burned-in, thinned samples, one row per
sample, columns as in meta.json), summary.json, checkpoint.bin and meta.json
(the full resolved configuration, seed, data checksum, diagnostics, timings).
It ends with a summary: median and 68 % interval per parameter, acceptance
and convergence diagnostics. With no options it fits the SMBHB power law to
the embedded simulated demo data. --until runs until the convergence criteria
hold; --resume continues a run that was stopped or killed, and gives the same
chain bytes as a run that never stopped.`

func runFit(ctx context.Context, e *env, args []string) error {
	var resume bool
	cfg, rf, _, err := resolveConfig(e, "fit", "[options]", fitHelp, args, runconfig.Default, bindConfig, func(fs *flag.FlagSet) {
		fs.BoolVar(&resume, "resume", false, "continue the run in --out from its checkpoint (same configuration required)")
	})
	if err != nil {
		return err
	}
	if rf.printConfig {
		fmt.Fprint(e.stdout, runconfig.Marshal(cfg))
		return nil
	}
	lg, err := newLogger(e.stderr, rf.logLevel, rf.logFormat)
	if err != nil {
		return err
	}
	if cfg.Output.Dir == "" {
		cfg.Output.Dir = filepath.Join("runs", "fit-"+strings.ReplaceAll(cfg.Model.Name, "+", "-"))
	}
	return fit(ctx, e, lg, cfg, resume)
}

// untilDefaultCap is the step cap of an --until run that names no --steps.
const untilDefaultCap = 100000

func fit(ctx context.Context, e *env, lg *logrus.Logger, cfg runconfig.Config, resume bool) error {
	started := time.Now()
	until, err := parseUntil(cfg.Sampler.Until)
	if err != nil {
		return err
	}
	if cfg.Sampler.Until != "" && cfg.Sampler.Steps == runconfig.Default().Sampler.Steps {
		cfg.Sampler.Steps = untilDefaultCap
		lg.Infof("--until without --steps: capping the run at %d steps", untilDefaultCap)
	}
	if err := checkSampler(cfg); err != nil {
		return err
	}
	pb, err := buildProblem(cfg, lg.Infof)
	if err != nil {
		return err
	}
	names := pb.post.FreeNames()
	moves, err := parseMoves(cfg.Sampler.Moves, len(names))
	if err != nil {
		return err
	}
	lg.WithFields(logrus.Fields{"data": pb.data.Name, "bins": len(pb.data.Freqs), "model": pb.model.Name(), "params": strings.Join(names, ",")}).Info("fit")
	scfg := sampler.Config{
		Walkers: cfg.Sampler.Walkers, Seed: cfg.Sampler.Seed, Moves: moves, Workers: cfg.Sampler.Workers,
		Fingerprint: cfg.Fingerprint(pb.data.SHA256),
	}
	if n := cfg.Sampler.Temperatures; n > 1 {
		if scfg.Betas, err = sampler.GeometricLadder(n, cfg.Sampler.BetaMin); err != nil {
			return fmt.Errorf("%w: --temperatures %d --beta-min %g: %v", errUsage, n, cfg.Sampler.BetaMin, err)
		}
	} else if n < 1 {
		return fmt.Errorf("%w: --temperatures must be >= 1, got %d", errUsage, n)
	}
	if err := os.MkdirAll(cfg.Output.Dir, 0o755); err != nil {
		return fmt.Errorf("output folder: %w", err)
	}
	paths := rundir.FitPaths(cfg.Output.Dir)
	columns := append([]string{"step", "walker", "ln_post", "ln_like"}, names...)

	var ens *sampler.Ensemble
	var w *chains.Writer
	if resume {
		ck, err := rundir.ReadCheckpoint(paths.Checkpoint)
		if err != nil {
			return err
		}
		if ens, err = sampler.Restore(pb.post, scfg, ck.State); err != nil {
			return fmt.Errorf("%s: %w (was the configuration or data changed since the run started?)", paths.Checkpoint, err)
		}
		if w, err = chains.Resume(paths.Chain, columns, ck.ChainOffset); err != nil {
			return err
		}
		lg.Infof("resuming from step %d (%s)", ens.Steps(), paths.Checkpoint)
	} else {
		if _, err := os.Stat(paths.Checkpoint); err == nil {
			return fmt.Errorf("%s exists: this folder holds a run already; continue it with --resume or choose another --out", paths.Checkpoint)
		}
		if ens, err = sampler.New(pb.post, scfg); err != nil {
			return err
		}
		if w, err = chains.Create(paths.Chain, columns); err != nil {
			return err
		}
	}
	defer ens.Close()
	defer w.Close()

	meta := newMeta(cfg, pb, started)
	meta.Status = "running"
	if err := rundir.WriteMeta(paths.Meta, meta); err != nil {
		return err
	}

	row := make([]float64, len(columns))
	dim := len(names)
	writeCheckpoint := func(en *sampler.Ensemble) error {
		off, err := w.Flush()
		if err != nil {
			return err
		}
		state, err := en.MarshalBinary()
		if err != nil {
			return err
		}
		return rundir.WriteCheckpoint(paths.Checkpoint, rundir.Checkpoint{ChainOffset: off, State: state})
	}
	prog := newProgress(e, lg, cfg.Sampler.Steps)
	onStep := func(en *sampler.Ensemble) error {
		pos, lpost, ll := en.Positions(0), en.LnPost(0), en.LnLike(0)
		row[0] = float64(en.Steps())
		for k := range en.Walkers() {
			row[1], row[2], row[3] = float64(k), lpost[k], ll[k]
			copy(row[4:], pos[k*dim:(k+1)*dim])
			if err := w.Append(row); err != nil {
				return err
			}
		}
		s := en.Steps()
		if ce := cfg.Sampler.CheckpointEvery; ce > 0 && s%ce == 0 {
			if err := writeCheckpoint(en); err != nil {
				return fmt.Errorf("checkpoint: %w", err)
			}
		} else if fe := cfg.Output.FlushEvery; fe > 0 && s%fe == 0 {
			if _, err := w.Flush(); err != nil {
				return err
			}
		}
		prog.update(s, "", 0)
		return nil
	}
	sampleStart := time.Now()
	checkEvery := max(100, min(500, cfg.Sampler.Steps/10))
	res, runErr := sampler.Run(ctx, ens, sampler.RunOptions{
		MaxSteps: cfg.Sampler.Steps, Burn: cfg.Sampler.Burn, Thin: cfg.Sampler.Thin,
		Until:      sampler.Criteria{ESS: until.ESS, TauMultiple: until.TauMultiple, Rhat: until.Rhat},
		CheckEvery: checkEvery, OnStep: onStep,
		OnCheck: func(p sampler.Progress) {
			prog.update(p.Steps, fmt.Sprintf("tau %.1f  ESS %.0f  R-hat %.3f", p.MaxTau, p.MinESS, p.MaxRhat), p.ETA)
		},
	})
	prog.finish()
	sampled := time.Now()
	if runErr != nil && !errors.Is(runErr, context.Canceled) {
		return runErr
	}
	if err := writeCheckpoint(ens); err != nil {
		return fmt.Errorf("checkpoint: %w", err)
	}
	if err := w.Close(); err != nil {
		return err
	}
	if runErr != nil {
		meta.Status = "interrupted"
		meta.End = time.Now()
		_ = rundir.WriteMeta(paths.Meta, meta)
		return fmt.Errorf("interrupted at step %d; the checkpoint is saved: continue with the same command and --resume", ens.Steps())
	}

	post, n := rundir.PosteriorSamples(res, dim)
	if err := chains.WriteNPY(paths.Posterior, n, dim, post); err != nil {
		return err
	}
	sum := report.FitSummary(names, post, n, dim)
	if err := rundir.WriteJSON(paths.Summary, rundir.Summary{Params: sum, Samples: n, Burn: res.Burn, Thin: res.Thin}); err != nil {
		return err
	}
	meta.Status = res.Status.String()
	meta.End = time.Now()
	meta.Diagnostics = res.Report
	meta.Timings = append(meta.Timings, chains.Timing{Phase: "sampling", Seconds: sampled.Sub(sampleStart).Seconds()},
		chains.Timing{Phase: "total", Seconds: time.Since(started).Seconds()})
	meta.Sampling = &rundir.Sampling{Steps: res.Steps, Burn: res.Burn, Thin: res.Thin, PosteriorSamples: n,
		Acceptance: ens.AcceptanceFractions(0), BandwidthRule: pb.like.BandwidthRule(), Bandwidths: pb.like.Bandwidths(),
		Penalty: pb.like.Penalty(), Until: cfg.Sampler.Until}
	if err := rundir.WriteMeta(paths.Meta, meta); err != nil {
		return err
	}
	printFitSummary(e, cfg, pb, res, sum, n)
	return nil
}

func printFitSummary(e *env, cfg runconfig.Config, pb *problem, res sampler.Result, sum []rundir.ParamSummary, n int) {
	status := res.Status.String()
	if cfg.Sampler.Until == "" && res.Status == sampler.MaxStepsReached {
		status = "finished" // no criteria were asked for; the diagnostics below say how well it mixed
	}
	fmt.Fprintf(e.stdout, "\nModel %s on %s (%d bins): %s after %d steps x %d walkers; burn-in %d, thin %d, %d posterior samples\n\n",
		pb.model.Name(), pb.data.Name, len(pb.data.Freqs), status, res.Steps, cfg.Sampler.Walkers, res.Burn, res.Thin, n)
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "parameter\tmedian\t68% low\t68% high\t95% low\t95% high\ttau\tESS\tbulk ESS\ttail ESS\tR-hat\t")
	for k, s := range sum {
		var p sampler.ParamReport
		if k < len(res.Report.Params) {
			p = res.Report.Params[k]
		}
		fmt.Fprintf(tw, "%s\t%.4f\t%.4f\t%.4f\t%.4f\t%.4f\t%.1f\t%.0f\t%.0f\t%.0f\t%.4f\t\n",
			s.Name, s.Median, s.Lo68, s.Hi68, s.Lo95, s.Hi95, p.Tau, p.ESS, p.BulkESS, p.TailESS, p.Rhat)
	}
	_ = tw.Flush()
	fmt.Fprintf(e.stdout, "\nmean acceptance %.3f", res.Report.MeanAcceptance)
	if len(res.Report.StuckWalkers) > 0 {
		fmt.Fprintf(e.stdout, "; stuck walkers: %v", res.Report.StuckWalkers)
	}
	fmt.Fprintf(e.stdout, "\nfiles in %s: chain.csv (all steps), posterior.npy (%d x %d samples), summary.json, meta.json, checkpoint.bin\n",
		cfg.Output.Dir, n, len(sum))
}
