package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/sirupsen/logrus"

	"tautline/cmd/tautline/internal/cli"
	"tautline/compare"
	"tautline/runconfig"
	"tautline/rundir"
)

const compareHelp = `
Computes the evidence ln Z of each model on the data by thermodynamic
integration over a ladder of power posteriors (parallel tempering; each rung
samples prior x likelihood^beta), cross-checks it with the stepping-stone
estimator on the same samples, and reports ln B of every model against
--reference with its error and its reading on the Kass & Raftery (1995)
scale. Every ln Z carries a Monte-Carlo error (batch means along the chain)
and a discretisation error (the ladder against its every-other-rung
sub-ladder); the table shows both and their sum.

Each rung discards the first quarter of its steps as burn-in unless --burn
is given (the same for every rung, so that rung blocks line up).

With no options it compares smbhb, strings and strings+smbhb on the embedded
simulated string demo. Results go to --out: compare.json, compare.csv and,
per model, models/NAME/ (evidence.json, lnl_beta.csv: the ln L-versus-beta
curve, posterior.npy). --evidence-error keeps running until the total error of each
ln Z is below the target or --max-steps / --max-rungs are reached.

For batch systems, --tasks N --task I runs only the I-th of N slices of the
(model, rung block) grid into --out/parts/; 'tautline merge' combines the
parts of all tasks into exactly the result one process gives. Rung blocks
(--rung-blocks) are independent ensembles: no swaps cross a block boundary, in
a single process as in split runs.`

func runCompare(ctx context.Context, e *env, args []string) error {
	var models, reference string
	cs := compare.DefaultSettings()
	extra := func(fs *flag.FlagSet) {
		fs.StringVar(&models, "models", "smbhb,strings,strings+smbhb", "comma-separated models to compare")
		fs.StringVar(&reference, "reference", "smbhb", "model that ln B is computed against")
		fs.IntVar(&cs.Rungs, "rungs", cs.Rungs, "rungs of the temperature ladder, beta_k = (k/(K-1))^exponent from 0 to 1")
		fs.Float64Var(&cs.Exponent, "ladder-exponent", cs.Exponent, "exponent of the power-law ladder (dense near beta = 0)")
		fs.IntVar(&cs.Blocks, "rung-blocks", 1, "split the ladder into this many independent blocks (no swaps across blocks) so that tasks can run them apart")
		fs.Float64Var(&cs.ErrorTarget, "evidence-error", 0, "keep running until the total error of every ln Z is below this (0: one pass)")
		fs.IntVar(&cs.MaxSteps, "max-steps", cs.MaxSteps, "cap on steps per rung with --evidence-error")
		fs.IntVar(&cs.MaxRungs, "max-rungs", cs.MaxRungs, "cap on rungs with --evidence-error")
		fs.IntVar(&cs.Task, "task", -1, "run only slice TASK (0-based) of --tasks; -1 runs everything; the environment variable SLURM_ARRAY_TASK_ID is used when set and --task is not")
		fs.IntVar(&cs.Tasks, "tasks", 1, "number of slices the work is split into")
		fs.IntVar(&cs.SwapEvery, "swap-every", 1, "steps between swap rounds of neighbouring rungs")
		fs.IntVar(&cs.PriorDraws, "prior-draws", cs.PriorDraws, "independent prior draws that estimate the prior mass of the region where the model stays within every bin's log10 rho range (its binomial error is the '± mass' term of ln Z)")
		fs.BoolVar(&cs.AdaptLadder, "adapt-ladder", false, "adapt the inner rungs' temperatures during burn-in to even out swap acceptance (Vousden, Farr & Mandel 2016); the ladder is frozen after burn-in and only later samples enter ln Z")
	}
	cfg, rf, fs, err := resolveConfig(e, "compare", "[options]", compareHelp, args, runconfig.CompareDefault, runconfig.BindCompare, extra)
	if err != nil {
		return err
	}
	explicit := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { explicit[f.Name] = true })
	if cs.Task < 0 && !explicit["task"] {
		if s := os.Getenv("SLURM_ARRAY_TASK_ID"); s != "" {
			if cs.Task, err = strconv.Atoi(s); err != nil {
				return fmt.Errorf("%w: SLURM_ARRAY_TASK_ID=%q is not an integer", errUsage, s)
			}
		}
	}
	if rf.printConfig {
		fmt.Fprint(e.stdout, runconfig.Marshal(cfg))
		fmt.Fprintf(e.stdout, "# compare: models %s, reference %s, %d rungs (exponent %g) in %d block(s), swap every %d, adapt ladder %v, evidence error %g (caps: %d steps, %d rungs)\n",
			models, reference, cs.Rungs, cs.Exponent, cs.Blocks, cs.SwapEvery, cs.AdaptLadder, cs.ErrorTarget, cs.MaxSteps, cs.MaxRungs)
		return nil
	}
	lg, err := cli.NewLogger(e.stderr, rf.logLevel, rf.logFormat)
	if err != nil {
		return err
	}
	return compareRun(ctx, e, lg, cfg, models, reference, cs)
}

func compareRun(ctx context.Context, e *env, lg *logrus.Logger, cfg runconfig.Config, list, reference string, cs compare.Settings) error {
	started := time.Now()
	models := cli.SplitList(list)
	if len(models) == 0 {
		return fmt.Errorf("%w: --models is empty", errUsage)
	}
	if cs.Tasks < 1 || cs.Task >= cs.Tasks {
		hint := ""
		if os.Getenv("SLURM_ARRAY_TASK_ID") != "" {
			hint = " (SLURM_ARRAY_TASK_ID is set: pass --tasks N, the size of the job array)"
		}
		return fmt.Errorf("%w: want 0 <= --task < --tasks, got --task %d --tasks %d%s", errUsage, cs.Task, cs.Tasks, hint)
	}
	if err := cfg.CheckCompare(models, list, reference, cs); err != nil {
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	data, parts, err := cfg.LoadParts(loadData)
	if err != nil {
		return err
	}
	id := runconfig.DataIdentity(data)
	pr := compare.Problem{DataName: id.Name, DataSHA256: id.SHA256, Datasets: runconfig.DataRecords(data), Reference: reference, ID: cfg.ComparisonID(list, reference, cs, id.SHA256)}
	if err := compare.CheckOut(cfg.Output.Dir, pr.ID); err != nil {
		return err
	}
	if pr.Models, err = cfg.CompareModels(models, data, parts, lg.Infof); err != nil {
		return err
	}
	cs.Reporter = compare.Reporter{
		Warnf: lg.Warnf,
		Sampling: func(u rundir.Unit, steps int, shared bool) (func(int), func()) {
			ue := e
			if shared {
				ue = &env{stdout: e.stdout, stderr: e.stderr} // log lines: bars would overwrite each other
			}
			prog := newProgress(ue, lg, steps)
			return func(done int) { prog.Update(done, u.Model, 0) }, prog.Finish
		},
		Pass: func(u rundir.Unit, p rundir.Pass) {
			lg.WithFields(logrus.Fields{"model": u.Model, "pass": p.Pass, "steps": p.Steps, "rungs": p.Rungs, "error": fmt.Sprintf("%.3f", p.TotalError)}).Info("evidence accuracy")
		},
	}
	sc := cfg.Sampler
	cs.Walkers, cs.Steps, cs.Burn, cs.Thin, cs.Seed, cs.Workers = sc.Walkers, sc.Steps, sc.Burn, sc.Thin, sc.Seed, sc.Workers
	cs.Out, cs.Version = cfg.Output.Dir, version
	res, err := compare.Run(ctx, pr, cs)
	if err != nil {
		return err
	}
	if cs.Task >= 0 {
		fmt.Fprintf(e.stdout, "task %d of %d done: parts in %s; combine all tasks with: tautline merge --out DIR %s ...\n",
			cs.Task, cs.Tasks, filepath.Join(cfg.Output.Dir, "parts"), cfg.Output.Dir)
		return nil
	}
	lg.WithField("seconds", fmt.Sprintf("%.1f", time.Since(started).Seconds())).Info("compare done")
	compare.WriteTable(e.stdout, res, cfg.Output.Dir)
	return nil
}
