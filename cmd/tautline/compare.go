package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/sirupsen/logrus"

	"tautline/chains"
	"tautline/likelihood"
	"tautline/models"
	"tautline/models/registry"
	"tautline/sampler"
	"tautline/sampler/evidence"
)

const compareHelp = `
Computes the evidence ln Z of each model on one data set by thermodynamic
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

// compareOpts are compare's options that are not configuration keys.
type compareOpts struct {
	models    string
	reference string
	rungs     int
	exponent  float64
	blocks    int
	target    float64
	maxSteps  int
	maxRungs  int
	task      int
	tasks     int
	swapEvery int
	adapt     bool
	cmdline   string
}

func runCompare(ctx context.Context, e *env, args []string) error {
	var co compareOpts
	extra := func(fs *flag.FlagSet) {
		fs.StringVar(&co.models, "models", "smbhb,strings,strings+smbhb", "comma-separated models to compare")
		fs.StringVar(&co.reference, "reference", "smbhb", "model that ln B is computed against")
		fs.IntVar(&co.rungs, "rungs", 16, "rungs of the temperature ladder, beta_k = (k/(K-1))^exponent from 0 to 1")
		fs.Float64Var(&co.exponent, "ladder-exponent", 5, "exponent of the power-law ladder (dense near beta = 0)")
		fs.IntVar(&co.blocks, "rung-blocks", 1, "split the ladder into this many independent blocks (no swaps across blocks) so that tasks can run them apart")
		fs.Float64Var(&co.target, "evidence-error", 0, "keep running until the total error of every ln Z is below this (0: one pass)")
		fs.IntVar(&co.maxSteps, "max-steps", 40000, "cap on steps per rung with --evidence-error")
		fs.IntVar(&co.maxRungs, "max-rungs", 48, "cap on rungs with --evidence-error")
		fs.IntVar(&co.task, "task", -1, "run only slice TASK (0-based) of --tasks; -1 runs everything; the environment variable SLURM_ARRAY_TASK_ID is used when set and --task is not")
		fs.IntVar(&co.tasks, "tasks", 1, "number of slices the work is split into")
		fs.IntVar(&co.swapEvery, "swap-every", 1, "steps between swap rounds of neighbouring rungs")
		fs.BoolVar(&co.adapt, "adapt-ladder", false, "adapt the inner rungs' temperatures during burn-in to even out swap acceptance (Vousden, Farr & Mandel 2016); the ladder is frozen after burn-in and only later samples enter ln Z")
	}
	cfg, rf, fs, err := resolveConfig(e, "compare", "[options]", compareHelp, args, compareDefaults, bindCompareConfig, extra)
	if err != nil {
		return err
	}
	explicit := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { explicit[f.Name] = true })
	if co.task < 0 && !explicit["task"] {
		if s := os.Getenv("SLURM_ARRAY_TASK_ID"); s != "" {
			if co.task, err = strconv.Atoi(s); err != nil {
				return fmt.Errorf("%w: SLURM_ARRAY_TASK_ID=%q is not an integer", errUsage, s)
			}
		}
	}
	if rf.printConfig {
		fmt.Fprint(e.stdout, marshalConfig(cfg))
		fmt.Fprintf(e.stdout, "# compare: models %s, reference %s, %d rungs (exponent %g) in %d block(s), swap every %d, adapt ladder %v, evidence error %g (caps: %d steps, %d rungs)\n",
			co.models, co.reference, co.rungs, co.exponent, co.blocks, co.swapEvery, co.adapt, co.target, co.maxSteps, co.maxRungs)
		return nil
	}
	lg, err := newLogger(e.stderr, rf.logLevel, rf.logFormat)
	if err != nil {
		return err
	}
	co.cmdline = strings.Join(append([]string{"tautline", "compare"}, args...), " ")
	return compare(ctx, e, lg, cfg, co)
}

// compareDefaults are fit's defaults with compare's own: the string demo,
// 3000 steps per rung, and runs/compare.
func compareDefaults() Config {
	c := defaultConfig()
	c.Data = "demo:strings"
	c.Sampler.Steps = 3000
	c.Output.Dir = filepath.Join("runs", "compare")
	return c
}

// compareUnit is one independent piece of a comparison: one model on one
// block of the ladder.
type compareUnit struct {
	Model string `json:"model"`
	Index int    `json:"model_index"`
	Block int    `json:"block"`
	// Blocks is the number of rung blocks each model's ladder is split into.
	Blocks int       `json:"blocks"`
	Betas  []float64 `json:"betas"`
}

func (u compareUnit) dir(out string) string {
	return filepath.Join(out, "parts", fmt.Sprintf("%s.block%d", strings.ReplaceAll(u.Model, "+", "-"), u.Block))
}

// plan lists the units of a comparison in a fixed order.
func plan(models []string, co compareOpts) ([]compareUnit, error) {
	ladder, err := sampler.PowerLadder(co.rungs, co.exponent)
	if err != nil {
		return nil, fmt.Errorf("%w: --rungs/--ladder-exponent: %v", errUsage, err)
	}
	if co.blocks < 1 || co.blocks > co.rungs {
		return nil, fmt.Errorf("%w: --rung-blocks must be between 1 and --rungs (%d), got %d", errUsage, co.rungs, co.blocks)
	}
	var units []compareUnit
	for i, m := range models {
		for b := range co.blocks {
			lo, hi := b*co.rungs/co.blocks, (b+1)*co.rungs/co.blocks
			units = append(units, compareUnit{Model: m, Index: i, Block: b, Blocks: co.blocks, Betas: slices.Clone(ladder[lo:hi])})
		}
	}
	return units, nil
}

func compare(ctx context.Context, e *env, lg *logrus.Logger, cfg Config, co compareOpts) error {
	started := time.Now()
	models := splitList(co.models)
	if len(models) == 0 {
		return fmt.Errorf("%w: --models is empty", errUsage)
	}
	if co.tasks < 1 || co.task >= co.tasks {
		hint := ""
		if os.Getenv("SLURM_ARRAY_TASK_ID") != "" {
			hint = " (SLURM_ARRAY_TASK_ID is set: pass --tasks N, the size of the job array)"
		}
		return fmt.Errorf("%w: want 0 <= --task < --tasks, got --task %d --tasks %d%s", errUsage, co.task, co.tasks, hint)
	}
	if co.target > 0 && co.blocks > 1 {
		return fmt.Errorf("%w: --evidence-error needs the whole ladder in one block (--rung-blocks 1)", errUsage)
	}
	for _, m := range models {
		if !slices.Contains(registry.Names(), m) {
			return fmt.Errorf("%w: --models: unknown model %q; want some of %s", errUsage, m, strings.Join(registry.Names(), ", "))
		}
	}
	if err := checkSampler(cfg); err != nil {
		return err
	}
	if !slices.Contains(models, co.reference) {
		return fmt.Errorf("%w: --reference %q is not among --models %s", errUsage, co.reference, co.models)
	}
	units, err := plan(models, co)
	if err != nil {
		return err
	}
	ds, err := loadData(cfg.Data)
	if err != nil {
		return err
	}
	if err := checkOutFolder(cfg.Output.Dir, comparisonID(cfg, co, ds.SHA256)); err != nil {
		return err
	}
	sh, err := newCompareInputs(cfg, models, ds, lg)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(cfg.Output.Dir, 0o755); err != nil {
		return fmt.Errorf("output folder: %w", err)
	}
	var mine []compareUnit
	for i, u := range units {
		if co.task < 0 || i%co.tasks == co.task {
			mine = append(mine, u)
		}
	}
	if err := runUnits(ctx, e, lg, cfg, co, sh, mine); err != nil {
		return err
	}
	if co.task >= 0 {
		fmt.Fprintf(e.stdout, "task %d of %d done: parts in %s; combine all tasks with: tautline merge --out DIR %s ...\n",
			co.task, co.tasks, filepath.Join(cfg.Output.Dir, "parts"), cfg.Output.Dir)
		return nil
	}
	res, err := finalize(cfg.Output.Dir, []string{cfg.Output.Dir})
	if err != nil {
		return err
	}
	lg.WithField("seconds", fmt.Sprintf("%.1f", time.Since(started).Seconds())).Info("compare done")
	printCompare(e, res, cfg.Output.Dir)
	return nil
}

func splitList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

// runUnits runs independent units side by side, one goroutine each and as
// many at once as --workers allows (default: every CPU), each unit's
// ensemble then stepping serially: a tempered ensemble's step is too little
// work to split across goroutines with profit (BenchmarkHalfStep), while
// independent units scale. Results do not depend on the order or the
// concurrency, since every unit has its own seed and its own files.
func runUnits(ctx context.Context, e *env, lg *logrus.Logger, cfg Config, co compareOpts, sh *compareInputs, units []compareUnit) error {
	par := cfg.Sampler.Workers
	if par <= 0 {
		par = runtime.GOMAXPROCS(0)
	}
	par = max(1, min(par, len(units)))
	ucfg, ue := cfg, e
	if par > 1 {
		ucfg.Sampler.Workers = 1
		ue = &env{stdout: e.stdout, stderr: e.stderr} // log lines: bars would overwrite each other
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	errs := make([]error, len(units))
	sem := make(chan struct{}, par)
	var wg sync.WaitGroup
	for i, u := range units {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			if ctx.Err() != nil {
				return
			}
			if err := runUnit(ctx, ue, lg, ucfg, co, sh, u); err != nil {
				errs[i] = fmt.Errorf("model %s, rung block %d: %w", u.Model, u.Block, err)
				cancel()
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil && !errors.Is(err, context.Canceled) {
			return err
		}
	}
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return ctx.Err()
}

// compareInputs is what every unit of a comparison shares, built once: the
// data set and its free spectrum, each model, and each model's share of
// the --prior settings (a prior applies to every model with that
// parameter). None of them is changed by a unit.
type compareInputs struct {
	data   *likelihood.Dataset
	like   *likelihood.FreeSpectrum
	models map[string]models.Model
	priors map[string]map[string]string
}

func newCompareInputs(cfg Config, names []string, ds *likelihood.Dataset, lg *logrus.Logger) (*compareInputs, error) {
	like, err := likelihood.NewFreeSpectrum(ds, likelihood.Options{Bandwidth: cfg.Likelihood.Bandwidth})
	if err != nil {
		return nil, err
	}
	sh := &compareInputs{data: ds, like: like, models: map[string]models.Model{}, priors: map[string]map[string]string{}}
	used := map[string]bool{}
	for _, name := range names {
		mc := cfg
		mc.Model.Name = name
		m, err := buildModel(mc, lg.Infof)
		if err != nil {
			return nil, err
		}
		sh.models[name] = m
		sh.priors[name] = map[string]string{}
		for _, p := range m.Params() {
			if v, ok := cfg.Model.Priors[p.Name]; ok {
				sh.priors[name][p.Name] = v
				used[p.Name] = true
			}
		}
	}
	for k := range cfg.Model.Priors {
		if !used[k] {
			return nil, fmt.Errorf("%w: prior for %q: none of the models %s has that parameter", errUsage, k, strings.Join(names, ", "))
		}
	}
	return sh, nil
}

// unitSeed derives a unit's seed from the run seed, so that units are
// independent and a unit's result does not depend on which task ran it.
func unitSeed(seed uint64, model, block int) uint64 {
	x := seed ^ (uint64(model+1) * 0x9e3779b97f4a7c15) ^ (uint64(block+1) * 0xbf58476d1ce4e5b9)
	x ^= x >> 31
	x *= 0x94d049bb133111eb
	return x ^ (x >> 29)
}

// partMeta is the self-description of one unit's result.
type partMeta struct {
	Schema      int         `json:"schema"`
	Version     string      `json:"tautline_version"`
	Unit        compareUnit `json:"unit"`
	Reference   string      `json:"reference"`
	Models      []string    `json:"models"`
	Fingerprint string      `json:"fingerprint"`
	// Comparison identifies the whole comparison (data, every option and
	// the seed): parts merge only with parts of the same comparison.
	Comparison  string           `json:"comparison"`
	Config      Config           `json:"config"`
	DataName    string           `json:"data_name"`
	DataSHA256  string           `json:"data_sha256"`
	Params      []string         `json:"params"`
	Priors      []string         `json:"priors"` // of the free parameters, in the order of Params
	Steps       int              `json:"steps"`
	Walkers     int              `json:"walkers"`
	BurnIndex   int              `json:"burn_index"`
	Recorded    int              `json:"recorded_steps"`
	Swap        []float64        `json:"swap_acceptance"`
	Diagnostics *sampler.Report  `json:"cold_rung_diagnostics,omitempty"`
	Passes      []map[string]any `json:"passes,omitempty"`
}

// runUnit samples one unit and writes its part folder: part.json,
// lnl.npy (rows: rung-major recorded steps, columns: walkers) and, for the
// block holding beta = 1, posterior.npy.
func runUnit(ctx context.Context, e *env, lg *logrus.Logger, cfg Config, co compareOpts, sh *compareInputs, u compareUnit) error {
	mc := cfg
	mc.Model.Name = u.Model
	mc.Model.Priors = sh.priors[u.Model]
	pb, err := newProblem(mc, sh.data, sh.like, sh.models[u.Model])
	if err != nil {
		return err
	}
	fp := fingerprint(mc, pb.data.SHA256)
	betas := u.Betas
	steps := cfg.Sampler.Steps
	var passes []map[string]any
	for pass := 0; ; pass++ {
		burn := cfg.Sampler.Burn
		if burn < 0 {
			// Every block of a ladder must keep the same steps, so the
			// burn-in is a fixed share rather than chosen per block.
			burn = steps / 4
		}
		scfg := sampler.Config{
			Walkers: cfg.Sampler.Walkers, Seed: unitSeed(cfg.Sampler.Seed, u.Index, u.Block), Betas: betas,
			SwapEvery: co.swapEvery, Workers: cfg.Sampler.Workers, Fingerprint: fp,
		}
		if co.adapt && len(betas) > 2 && burn > 0 {
			scfg.AdaptLadder, scfg.AdaptSteps = true, burn
		}
		ens, err := sampler.New(pb.post, scfg)
		if err != nil {
			return err
		}
		prog := newProgress(e, lg, steps)
		res, err := sampler.Run(ctx, ens, sampler.RunOptions{
			MaxSteps: steps, Burn: burn, Thin: cfg.Sampler.Thin, CheckEvery: max(100, steps/10),
			OnStep: func(en *sampler.Ensemble) error { prog.update(en.Steps(), u.Model, 0); return nil },
		})
		prog.finish()
		ens.Close()
		if err != nil {
			return err
		}
		if t := res.Report.MaxTau; 5*t > float64(burn) {
			lg.Warnf("model %s, rung block %d: burn-in of %d steps is under 5 autocorrelation times (tau %.0f); give more --steps", u.Model, u.Block, burn, t)
		}
		betas = res.Betas // the frozen ladder, when it adapted
		rungs := unitRungs(res, betas)
		ev, evErr := integrateRungs(rungs)
		if co.target > 0 && evErr == nil {
			adv := evidence.Advise(ev, co.target)
			passes = append(passes, map[string]any{"pass": pass, "steps": steps, "rungs": len(betas), "total_error": ev.TIHigher.Total, "advice": adv.Reason})
			lg.WithFields(logrus.Fields{"model": u.Model, "pass": pass, "steps": steps, "rungs": len(betas), "error": fmt.Sprintf("%.3f", ev.TIHigher.Total)}).Info("evidence accuracy")
			last := passes[len(passes)-1]
			if adv.Done {
				last["status"] = fmt.Sprintf("target %g met: total error %.3g", co.target, ev.TIHigher.Total)
			} else {
				grown := false
				var capped []string
				if adv.StepsFactor > 1 {
					if steps < co.maxSteps {
						steps = min(co.maxSteps, int(float64(steps)*adv.StepsFactor+0.5))
						grown = true
					} else {
						capped = append(capped, fmt.Sprintf("--max-steps %d", co.maxSteps))
					}
				}
				if len(adv.Insert) > 0 {
					if len(betas) < co.maxRungs {
						betas = mergeLadder(betas, adv.Insert, co.maxRungs)
						grown = true
					} else {
						capped = append(capped, fmt.Sprintf("--max-rungs %d", co.maxRungs))
					}
				}
				if grown {
					continue
				}
				last["stopped"] = fmt.Sprintf("cap reached (%s) before the target %g: total error %.3g", strings.Join(capped, ", "), co.target, ev.TIHigher.Total)
				last["status"] = last["stopped"]
			}
		}
		return writePart(u, co, mc, pb, fp, betas, steps, res, passes, cfg)
	}
}

// checkOutFolder refuses an output folder that holds parts of another
// comparison: finishing would mix them in (or refuse them) and leave the
// folder half old, half new. Parts of this same comparison (other tasks,
// or an earlier identical run) are fine.
func checkOutFolder(out, id string) error {
	matches, _ := filepath.Glob(filepath.Join(out, "parts", "*", "part.json"))
	for _, m := range matches {
		raw, err := os.ReadFile(m)
		if err != nil {
			return err
		}
		pm, err := decodePart(m, raw)
		if err != nil || pm.Comparison != id {
			return fmt.Errorf("%s holds the results of another comparison (%s); choose another --out, or remove that folder first", out, m)
		}
	}
	return nil
}

// comparisonID hashes everything that decides a comparison's result: the
// data, the configuration and the compare options, but not the task split
// or where the output goes.
func comparisonID(cfg Config, co compareOpts, dataSHA string) string {
	c := cfg
	c.Output, c.Sampler.Workers = OutputConfig{}, 0
	o := co
	o.task, o.tasks, o.cmdline = 0, 0, ""
	h := sha256.Sum256([]byte(fmt.Sprintf("%s\n%s\n%+v", dataSHA, marshalConfig(c), o)))
	return hex.EncodeToString(h[:])
}

// mergeLadder adds the betas in extra to the decreasing ladder, keeping it
// decreasing and at most max long.
func mergeLadder(betas, extra []float64, maxN int) []float64 {
	out := slices.Clone(betas)
	for _, b := range extra {
		if len(out) >= maxN {
			break
		}
		if !slices.Contains(out, b) && b > 0 && b < 1 {
			out = append(out, b)
		}
	}
	slices.Sort(out)
	slices.Reverse(out)
	return out
}

// unitRungs turns a run's history into evidence rungs, sorted by
// increasing beta.
func unitRungs(res sampler.Result, betas []float64) []evidence.Rung {
	h := res.History
	from := res.BurnIndex
	var rungs []evidence.Rung
	for r := len(betas) - 1; r >= 0; r-- {
		ll := h.LnLike(r, from)
		rungs = append(rungs, evidence.Rung{Beta: betas[r], LnL: ll, Steps: len(ll) / h.Walkers(), Walkers: h.Walkers()})
	}
	return rungs
}

func integrateRungs(rungs []evidence.Rung) (evidence.Result, error) {
	return evidence.Integrate(rungs, evidence.Options{Synchronous: true})
}

func writePart(u compareUnit, co compareOpts, mc Config, pb *problem, fp string, betas []float64, steps int,
	res sampler.Result, passes []map[string]any, cfg Config) error {
	dir := u.dir(cfg.Output.Dir)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	h := res.History
	rec := h.Len() - res.BurnIndex
	var lnl []float64
	for r := range betas {
		lnl = append(lnl, h.LnLike(r, res.BurnIndex)...)
	}
	if err := chains.WriteNPY(filepath.Join(dir, "lnl.npy"), len(betas)*rec, h.Walkers(), lnl); err != nil {
		return err
	}
	u.Betas = betas
	pm := partMeta{
		Schema: 1, Version: version, Unit: u, Reference: co.reference, Models: splitList(co.models), Fingerprint: fp,
		Comparison: comparisonID(cfg, co, pb.data.SHA256),
		Config:     mc, DataName: pb.data.Name, DataSHA256: pb.data.SHA256, Params: pb.post.FreeNames(), Priors: freePriors(pb),
		Steps: steps, Walkers: h.Walkers(), BurnIndex: res.BurnIndex, Recorded: rec, Swap: res.SwapAcceptance,
		Passes: passes,
	}
	if betas[0] == 1 {
		dim := len(pm.Params)
		post, n := posteriorSamples(res, dim)
		if err := chains.WriteNPY(filepath.Join(dir, "posterior.npy"), n, dim, post); err != nil {
			return err
		}
		rep := res.Report
		pm.Diagnostics = &rep
	}
	return writeJSON(filepath.Join(dir, "part.json"), pm)
}

// decodePart reads one part.json and checks that it describes a unit.
func decodePart(name string, raw []byte) (partMeta, error) {
	var pm partMeta
	if err := json.Unmarshal(raw, &pm); err != nil {
		return pm, fmt.Errorf("%s: not a compare part: %w", name, err)
	}
	u := pm.Unit
	switch {
	case pm.Schema != 1:
		return pm, fmt.Errorf("%s: part schema %d, want 1", name, pm.Schema)
	case u.Model == "" || u.Index < 0 || u.Block < 0 || u.Blocks < 1 || u.Block >= u.Blocks:
		return pm, fmt.Errorf("%s: unit (model %q, block %d of %d) is malformed", name, u.Model, u.Block, u.Blocks)
	case len(u.Betas) == 0 || pm.Walkers < 1 || pm.Recorded < 0 || len(pm.Params) != len(pm.Priors):
		return pm, fmt.Errorf("%s: ladder, walkers, steps or parameter list is missing or inconsistent", name)
	}
	for i, b := range u.Betas {
		if !(b >= 0 && b <= 1) || (i > 0 && !(b < u.Betas[i-1])) {
			return pm, fmt.Errorf("%s: unit.betas[%d] = %g: betas must decrease within [0, 1]", name, i, b)
		}
	}
	return pm, nil
}

// compareRow is one model's line of the comparison table.
type compareRow struct {
	Model    string            `json:"model"`
	Params   []string          `json:"params"`
	TI       evidence.Estimate `json:"ln_z_ti"`
	TITrap   evidence.Estimate `json:"ln_z_ti_trapezoid"`
	SS       evidence.Estimate `json:"ln_z_ss"`
	Disagree bool              `json:"estimators_disagree"`
	LnB      float64           `json:"ln_b"`
	LnBErr   float64           `json:"ln_b_error"`
	Reading  string            `json:"kass_raftery"`
	Rungs    int               `json:"rungs"`
	Steps    int               `json:"steps_per_rung"`
	Walkers  int               `json:"walkers"`
	Warnings []string          `json:"warnings,omitempty"`
	// Accuracy says, with --evidence-error, whether the target was met or
	// which cap stopped the run.
	Accuracy string `json:"evidence_target,omitempty"`
}

// compareResult is compare.json.
type compareResult struct {
	Schema     int          `json:"schema"`
	Version    string       `json:"tautline_version"`
	Data       string       `json:"data"`
	DataSHA256 string       `json:"data_sha256"`
	Reference  string       `json:"reference"`
	Seed       uint64       `json:"seed"`
	Rows       []compareRow `json:"models"`
}

// finalize reads every part under the given run folders, checks that they
// belong to one comparison, integrates each model's ladder and writes the
// results into out. It is what a single process and `merge` both run, so
// their outputs are identical.
func finalize(out string, dirs []string) (*compareResult, error) {
	parts := map[string]partMeta{}
	src := map[string]string{}
	var keys []string
	for _, d := range dirs {
		matches, err := filepath.Glob(filepath.Join(d, "parts", "*", "part.json"))
		if err != nil {
			return nil, err
		}
		for _, m := range matches {
			raw, err := os.ReadFile(m)
			if err != nil {
				return nil, err
			}
			pm, err := decodePart(m, raw)
			if err != nil {
				return nil, err
			}
			k := fmt.Sprintf("%04d.%04d", pm.Unit.Index, pm.Unit.Block)
			if prev, dup := parts[k]; dup {
				if prev.Comparison != pm.Comparison {
					return nil, fmt.Errorf("%s and %s hold the same unit (model %s, block %d) from different comparisons (data, options or seed differ)", src[k], m, pm.Unit.Model, pm.Unit.Block)
				}
				continue // the same unit listed twice (e.g. a merged folder given again)
			}
			parts[k], src[k] = pm, m
			keys = append(keys, k)
		}
	}
	if len(parts) == 0 {
		return nil, fmt.Errorf("no parts found under %s (expected DIR/parts/*/part.json)", strings.Join(dirs, ", "))
	}
	slices.Sort(keys)
	first := parts[keys[0]]
	res := &compareResult{Schema: 1, Version: version, Data: first.DataName, DataSHA256: first.DataSHA256, Reference: first.Reference, Seed: first.Config.Sampler.Seed}
	byModel := map[string][]partMeta{}
	for _, k := range keys {
		pm := parts[k]
		if pm.Comparison != first.Comparison {
			return nil, fmt.Errorf("%s (model %s, block %d) belongs to another comparison than %s (data, options or seed differ)", src[k], pm.Unit.Model, pm.Unit.Block, src[keys[0]])
		}
		byModel[pm.Unit.Model] = append(byModel[pm.Unit.Model], pm)
	}
	var missing []string
	for _, m := range first.Models {
		have := map[int]bool{}
		for _, pm := range byModel[m] {
			have[pm.Unit.Block] = true
		}
		for b := range first.Unit.Blocks {
			if !have[b] {
				missing = append(missing, fmt.Sprintf("%s block %d", m, b))
			}
		}
	}
	if len(missing) > 0 {
		return nil, fmt.Errorf("no parts for %s (of %d rung block(s) per model): run every task before merging", strings.Join(missing, ", "), first.Unit.Blocks)
	}
	for _, k := range keys {
		if err := copyPart(filepath.Dir(src[k]), parts[k].Unit.dir(out)); err != nil {
			return nil, err
		}
	}
	var refRow *compareRow
	for _, m := range first.Models {
		row, err := finalizeModel(out, m, byModel[m])
		if err != nil {
			return nil, fmt.Errorf("model %s: %w", m, err)
		}
		res.Rows = append(res.Rows, row)
	}
	for i := range res.Rows {
		if res.Rows[i].Model == first.Reference {
			refRow = &res.Rows[i]
		}
	}
	for i := range res.Rows {
		r := &res.Rows[i]
		if r.Model == refRow.Model {
			r.LnB, r.LnBErr, r.Reading = 0, 0, "reference"
			continue
		}
		r.LnB, r.LnBErr = evidence.BayesFactor(r.TI, refRow.TI)
		r.Reading = evidence.KassRafteryNamed(r.LnB, r.Model, refRow.Model)
	}
	if err := writeJSON(filepath.Join(out, "compare.json"), res); err != nil {
		return nil, err
	}
	if err := writeCompareCSV(filepath.Join(out, "compare.csv"), res); err != nil {
		return nil, err
	}
	return res, nil
}

// finalizeModel integrates one model's ladder from its parts (blocks).
func finalizeModel(out, model string, parts []partMeta) (compareRow, error) {
	var rungs []evidence.Rung
	want := parts[0].Config.Sampler // blocks must share the sampler setup
	for _, pm := range parts {
		if pm.Walkers != parts[0].Walkers || pm.Recorded != parts[0].Recorded || pm.Config.Sampler.Seed != want.Seed {
			return compareRow{}, errors.New("its rung blocks were run with different walkers or steps")
		}
		path := filepath.Join(pm.Unit.dir(out), "lnl.npy")
		rows, walkers, data, err := chains.ReadNPY(path)
		if err != nil {
			return compareRow{}, err
		}
		if rows != len(pm.Unit.Betas)*pm.Recorded || walkers != pm.Walkers {
			return compareRow{}, fmt.Errorf("%s: holds %d x %d values, but its part.json promises %d rungs x %d steps x %d walkers",
				path, rows, walkers, len(pm.Unit.Betas), pm.Recorded, pm.Walkers)
		}
		per := pm.Recorded * walkers
		for r, b := range pm.Unit.Betas {
			rungs = append(rungs, evidence.Rung{Beta: b, LnL: data[r*per : (r+1)*per], Steps: pm.Recorded, Walkers: walkers})
		}
	}
	slices.SortFunc(rungs, func(a, b evidence.Rung) int {
		switch {
		case a.Beta < b.Beta:
			return -1
		case a.Beta > b.Beta:
			return 1
		}
		return 0
	})
	ev, err := integrateRungs(rungs)
	if err != nil {
		return compareRow{}, err
	}
	dir := filepath.Join(out, "models", strings.ReplaceAll(model, "+", "-"))
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return compareRow{}, err
	}
	if err := writeJSON(filepath.Join(dir, "evidence.json"), ev); err != nil {
		return compareRow{}, err
	}
	if err := writeCurveCSV(filepath.Join(dir, "lnl_beta.csv"), ev); err != nil {
		return compareRow{}, err
	}
	for _, pm := range parts {
		if pm.Unit.Betas[0] == 1 {
			if err := copyFile(filepath.Join(pm.Unit.dir(out), "posterior.npy"), filepath.Join(dir, "posterior.npy")); err != nil {
				return compareRow{}, err
			}
		}
	}
	var accuracy string
	if ps := parts[0].Passes; len(ps) > 0 {
		accuracy, _ = ps[len(ps)-1]["status"].(string)
	}
	return compareRow{
		Model: model, Params: parts[0].Params, TI: ev.TIHigher, TITrap: ev.TI, SS: ev.SS, Disagree: ev.Disagree,
		Rungs: len(rungs), Steps: parts[0].Steps, Walkers: parts[0].Walkers, Warnings: ev.Warnings, Accuracy: accuracy,
	}, nil
}
