package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/sirupsen/logrus"

	"tautline/cmd/tautline/internal/cli"
	"tautline/fitrun"
	"tautline/internal/budget"
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
chain bytes as a run that never stopped. A run whose estimated memory (see
README: about 3 x walkers x steps x (parameters + temperatures) x 8 bytes) is
above half the physical memory, or whose files exceed the free disk, is refused.`

func runFit(ctx context.Context, e *env, args []string) error {
	var resume bool
	cfg, rf, _, err := resolveConfig(e, "fit", "[options]", fitHelp, args, runconfig.Default, runconfig.BindFit, func(fs *flag.FlagSet) {
		fs.BoolVar(&resume, "resume", false, "continue the run in --out from its checkpoint (same configuration required)")
	})
	if err != nil {
		return err
	}
	if rf.printConfig {
		fmt.Fprint(e.stdout, runconfig.Marshal(cfg))
		return nil
	}
	lg, err := cli.NewLogger(e.stderr, rf.logLevel, rf.logFormat)
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
	until, err := sampler.ParseCriteria(cfg.Sampler.Until)
	if err != nil {
		return fmt.Errorf("%w: --until %q: %v", errUsage, cfg.Sampler.Until, err)
	}
	if cfg.Sampler.Until != "" && cfg.Sampler.Steps == runconfig.Default().Sampler.Steps {
		cfg.Sampler.Steps = untilDefaultCap
		lg.Infof("--until without --steps: capping the run at %d steps", untilDefaultCap)
	}
	if err := cfg.CheckSampler(); err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	pb, err := buildProblem(cfg, lg.Infof)
	if err != nil {
		return err
	}
	names := pb.Target.FreeNames()
	scfg, err := cfg.SamplerConfig(len(names), cfg.Fingerprint(runconfig.DataIdentity(pb.Data).SHA256))
	if err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	lg.WithFields(logrus.Fields{"data": pb.Name(), "bins": pb.NumBins(), "model": pb.Model.Name(), "params": strings.Join(names, ",")}).Info("fit")
	prog := newProgress(e, lg, cfg.Sampler.Steps)
	rule, bw, penalty := pb.Likelihood()
	checked := "" // the last check's figures, redrawn with every step's bar
	st := fitrun.Settings{
		Sampler: scfg, Steps: cfg.Sampler.Steps, Burn: cfg.Sampler.Burn, Thin: cfg.Sampler.Thin,
		Until: until, UntilSpec: cfg.Sampler.Until,
		CheckpointEvery: cfg.Sampler.CheckpointEvery, FlushEvery: cfg.Output.FlushEvery, Out: cfg.Output.Dir, Resume: resume,
		Reporter: fitrun.Reporter{
			Infof: lg.Infof, Warnf: lg.Warnf,
			Step: func(n int) { prog.Update(n, checked, 0) },
			Check: func(p sampler.Progress) {
				checked = fmt.Sprintf("tau %.1f  ESS %.0f  R-hat %.3f", p.MaxTau, p.MinESS, p.MaxRhat)
				prog.Update(p.Steps, checked, p.ETA)
			},
		},
	}
	if err := st.CheckSize(len(names), budget.Current(cfg.Output.Dir)); err != nil {
		return err
	}
	if err := os.MkdirAll(cfg.Output.Dir, 0o755); err != nil {
		return fmt.Errorf("output folder: %w", err)
	}
	res, err := fitrun.Run(ctx, fitrun.Problem{
		Target: pb.Target, Names: names, Meta: newMeta(cfg, pb, started),
		Likelihood: fitrun.Likelihood{BandwidthRule: rule, Bandwidths: bw, AboveRangePenalty: penalty},
	}, st)
	prog.Finish()
	if err != nil {
		return err
	}
	printFitSummary(e, cfg, pb, res.Sampler, res.Summary, res.Samples)
	return nil
}

func printFitSummary(e *env, cfg runconfig.Config, pb *runconfig.Problem, res sampler.Result, sum []rundir.ParamSummary, n int) {
	status := res.Status.String()
	if cfg.Sampler.Until == "" && res.Status == sampler.MaxStepsReached {
		status = "finished" // no criteria were asked for; the diagnostics below say how well it mixed
	}
	fmt.Fprintf(e.stdout, "\nModel %s on %s (%d bins): %s after %d steps x %d walkers; burn-in %d, thin %d, %d posterior samples\n\n",
		pb.Model.Name(), pb.Name(), pb.NumBins(), status, res.Steps, cfg.Sampler.Walkers, res.Burn, res.Thin, n)
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
