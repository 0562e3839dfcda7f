// Package compare computes the evidence of several models on one data set
// by thermodynamic integration over a ladder of power posteriors (each rung
// samples prior x likelihood^beta; Lartillot & Philippe 2006, Gelman & Meng
// 1998), cross-checked by the stepping-stone estimator (Xie et al. 2011),
// and the Bayes factors against a reference model read on the Kass &
// Raftery (1995) scale. The estimators themselves live in
// sampler/evidence; this package plans the work, runs it and merges it.
//
// A likelihood that is exactly zero on part of the prior (a model above
// the data's range of log10 rho) is handled exactly: the rungs, started in
// the region R where it is not zero, sample the prior restricted to R, and
// ln Z = ln P_prior(R) + ln Z_R with P_prior(R) estimated from independent
// prior draws by the unit holding beta = 0 (docs/physics.md section 5).
// Targets that offer an exact likelihood beside a penalised one
// (ExactLiker) are integrated with the exact one.
//
// The work is split into units, one model on one block of its ladder, each
// with its own seed (UnitSeed), so that a comparison gives the same bytes
// in one process, with any number of workers, or split into tasks whose
// parts are combined later by Merge. Run folders follow package rundir.
package compare

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"time"

	"tautline/chains"
	"tautline/internal/budget"
	"tautline/internal/safeio"
	"tautline/rundir"
	"tautline/sampler"
	"tautline/sampler/evidence"
)

// Model is what a comparison needs of one model.
type Model struct {
	// Name identifies the model.
	Name string
	// Target is the model's posterior over its free parameters.
	Target sampler.Target
	// Params and Priors name the free parameters and their priors (in the
	// syntax of priors.Parse), in Target's order.
	Params, Priors []string
	// Fingerprint identifies the model's sampling setup (data and
	// configuration); it is stored in every checkpoint-able state and in
	// part.json.
	Fingerprint string
	// Config returns the model's configuration as the caller records it in
	// part.json, given the sampler goroutines a unit ran with (1 when
	// units run side by side, else Settings.Workers); it must encode as a
	// JSON object whose member Sampler.Seed is the seed.
	Config func(samplerWorkers int) any
}

// Problem is a comparison: several models on one data set, or on several
// whose likelihoods the models' targets multiply.
type Problem struct {
	// DataName and DataSHA256 name the data set and its checksum (for
	// several data sets, their joint name and digest).
	DataName, DataSHA256 string
	// Datasets lists every data set when there are several or bins were
	// selected (recorded in part.json and compare.json); nil otherwise.
	Datasets []chains.DataSet
	// Models are the models compared, in the order of the results.
	Models []Model
	// Reference is the model the Bayes factors are computed against.
	Reference string
	// ID identifies the whole comparison (data, every setting that changes
	// the result, the seed) but not the --tasks split or the output folder:
	// parts merge only with parts of the same ID.
	ID string
}

// Settings say how a comparison runs.
type Settings struct {
	// Rungs and Exponent set the ladder beta_k = (k/(Rungs-1))^Exponent.
	Rungs    int
	Exponent float64
	// Blocks splits every ladder into independent blocks (no swaps across
	// a block boundary), the units that tasks run apart.
	Blocks int
	// Walkers, Steps, Burn (-1: a quarter of Steps) and Thin (0: chosen
	// from the autocorrelation time) configure every rung.
	Walkers, Steps, Burn, Thin int
	// Seed is the comparison's seed; each unit derives its own.
	Seed uint64
	// SwapEvery is the number of steps between swap rounds.
	SwapEvery int
	// AdaptLadder adapts the inner rungs during burn-in.
	AdaptLadder bool
	// ErrorTarget, when > 0, keeps running each model until the total
	// error of its ln Z is below it, or MaxSteps steps or MaxRungs rungs
	// are reached. It needs Blocks == 1.
	ErrorTarget        float64
	MaxSteps, MaxRungs int
	// Task and Tasks: Task >= 0 runs only the units i with i % Tasks ==
	// Task and leaves the results in Out/parts for Merge; Task < 0 runs
	// every unit and merges.
	Task, Tasks int
	// Workers is the number of units run side by side (0: GOMAXPROCS);
	// with one unit at a time, it is passed to the sampler instead.
	Workers int
	// Out is the comparison folder.
	Out string
	// Version is the program version recorded in the files.
	Version string
	// PriorDraws is the number of independent prior draws that estimate
	// the prior mass of the region where each model's likelihood is
	// non-zero (0: DefaultPriorDraws).
	PriorDraws int
	// Reporter receives progress; its nil fields are skipped.
	Reporter Reporter
}

// DefaultSettings returns the settings of a default comparison: the
// ladder, steps and walkers chosen so that every ln Z of the test problems
// (docs/physics.md section 13) lies within its stated total error of direct
// quadrature with that total at most 0.05, in under 10 s for three models on
// 2 cores. Out, Version and Reporter are left for the caller.
func DefaultSettings() Settings {
	return Settings{
		Rungs: DefaultRungs, Exponent: DefaultExponent, Blocks: 1,
		Walkers: DefaultWalkers, Steps: DefaultSteps, Burn: -1, Thin: 0, Seed: 1, SwapEvery: 1,
		MaxSteps: 40000, MaxRungs: 48, Task: -1, Tasks: 1, PriorDraws: DefaultPriorDraws,
	}
}

// Defaults of a comparison's ladder and sampling (see DefaultSettings).
const (
	DefaultRungs    = 24
	DefaultExponent = 5.0
	DefaultWalkers  = 32
	DefaultSteps    = 3000
)

// Reporter receives a comparison's progress.
type Reporter struct {
	// Sampling is called when a unit starts sampling steps steps; shared
	// says that other units run at the same time. It returns the function
	// called after every step and the one called when the pass ends.
	Sampling func(u rundir.Unit, steps int, shared bool) (step func(done int), end func())
	// Warnf receives warnings.
	Warnf func(format string, args ...any)
	// Pass receives each pass of the ErrorTarget loop.
	Pass func(u rundir.Unit, p rundir.Pass)
}

// Plan lists the units of a comparison of models in a fixed order.
func Plan(models []string, rungs int, exponent float64, blocks int) ([]rundir.Unit, error) {
	ladder, err := sampler.PowerLadder(rungs, exponent)
	if err != nil {
		return nil, err
	}
	if blocks < 1 || blocks > rungs {
		return nil, fmt.Errorf("compare: blocks must be between 1 and the rungs (%d), got %d", rungs, blocks)
	}
	var units []rundir.Unit
	for i, m := range models {
		for b := range blocks {
			lo, hi := b*rungs/blocks, (b+1)*rungs/blocks
			units = append(units, rundir.Unit{Model: m, Index: i, Block: b, Blocks: blocks, Betas: slices.Clone(ladder[lo:hi])})
		}
	}
	return units, nil
}

// UnitSeed derives a unit's seed from the run seed (a SplitMix64-style
// finaliser of the mixed indices), so that units are independent and a
// unit's result does not depend on which task ran it.
func UnitSeed(seed uint64, model, block int) uint64 {
	x := seed ^ (uint64(model+1) * 0x9e3779b97f4a7c15) ^ (uint64(block+1) * 0xbf58476d1ce4e5b9)
	x ^= x >> 31
	x *= 0x94d049bb133111eb
	return x ^ (x >> 29)
}

// CheckOut refuses an output folder that holds parts of another
// comparison than id: finishing would mix them in (or refuse them) and
// leave the folder half old, half new. Parts of this same comparison
// (other tasks, or an earlier identical run) are fine.
func CheckOut(out, id string) error {
	matches, _ := rundir.PartFiles(out)
	for _, m := range matches {
		raw, err := safeio.ReadFile(m, safeio.LimitPart)
		if err != nil {
			return err
		}
		pm, err := rundir.DecodePart(m, raw)
		if err != nil || pm.Comparison != id {
			return fmt.Errorf("%s holds the results of another comparison (%s); choose another --out, or remove that folder first", out, m)
		}
	}
	return nil
}

// Run runs the units of p that s.Task selects into s.Out/parts. With
// s.Task < 0 it then merges them (see Merge) and returns the result;
// otherwise it returns nil.
func Run(ctx context.Context, p Problem, s Settings) (*rundir.Comparison, error) {
	started := time.Now()
	var names []string
	for _, m := range p.Models {
		names = append(names, m.Name)
	}
	if !slices.Contains(names, p.Reference) {
		return nil, fmt.Errorf("compare: reference %q is not among the models %s", p.Reference, strings.Join(names, ", "))
	}
	if s.ErrorTarget > 0 && s.Blocks > 1 {
		return nil, errors.New("compare: an error target needs the whole ladder in one block")
	}
	units, err := Plan(names, s.Rungs, s.Exponent, s.Blocks)
	if err != nil {
		return nil, err
	}
	dims := make([]int, len(p.Models))
	for i, m := range p.Models {
		dims[i] = m.Target.Dim()
	}
	if err := s.CheckSize(dims, budget.Current(s.Out)); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(s.Out, 0o755); err != nil {
		return nil, fmt.Errorf("output folder: %w", err)
	}
	var mine []rundir.Unit
	for i, u := range units {
		if s.Task < 0 || i%max(s.Tasks, 1) == s.Task {
			mine = append(mine, u)
		}
	}
	removed, err := removeStale(s, mine, names, started)
	logRemoved(s.Reporter.Warnf, removed)
	if err != nil {
		return nil, err
	}
	// In one process a model's ladder is integrated as soon as all its
	// rung blocks are done, while other models still sample; Merge then
	// takes those rows instead of integrating again (the same function on
	// the same files, so the same rows).
	var early *earlyRows
	if s.Task < 0 {
		early = newEarlyRows(s.Out, mine)
	}
	err = runUnits(ctx, p, s, mine, early.unitDone)
	rows := early.wait()
	if err != nil {
		return nil, err
	}
	if s.Task >= 0 {
		return nil, nil
	}
	return merge(s.Out, []string{s.Out}, s.Version, rows)
}

// earlyRows integrates each model's ladder in the background once its
// last unit has written its part. It serves a process that runs every
// unit (no --task), so a model's units are all its rung blocks.
type earlyRows struct {
	out  string
	mu   sync.Mutex
	left map[string]int        // units not yet done, per model
	rows map[string]rundir.Row // integrated models
	wg   sync.WaitGroup
}

func newEarlyRows(out string, units []rundir.Unit) *earlyRows {
	e := &earlyRows{out: out, left: map[string]int{}, rows: map[string]rundir.Row{}}
	for _, u := range units {
		e.left[u.Model]++
	}
	return e
}

// unitDone records that u finished without error and, if it was its
// model's last unit, starts integrating that model. A nil e does nothing.
func (e *earlyRows) unitDone(u rundir.Unit) {
	if e == nil {
		return
	}
	e.mu.Lock()
	e.left[u.Model]--
	last := e.left[u.Model] == 0
	e.mu.Unlock()
	if !last {
		return
	}
	// On any error the model is left out: Merge integrates it again and
	// reports what is wrong in its own words.
	e.wg.Go(func() {
		var parts []*rundir.Part
		for b := range u.Blocks {
			pm, err := rundir.ReadPart(filepath.Join(rundir.PartDir(e.out, u.Model, b), rundir.PartFile))
			if err != nil {
				return
			}
			parts = append(parts, pm)
		}
		row, err := mergeModel(e.out, u.Model, parts)
		if err != nil {
			return
		}
		e.mu.Lock()
		e.rows[u.Model] = row
		e.mu.Unlock()
	})
}

// wait waits for the integrations started and returns the rows made.
func (e *earlyRows) wait() map[string]rundir.Row {
	if e == nil {
		return nil
	}
	e.wg.Wait()
	return e.rows
}

// runUnits runs independent units side by side, one goroutine each and as
// many at once as s.Workers allows (default: every CPU), each unit's
// ensemble then stepping serially: a tempered ensemble's step is too little
// work to split across goroutines with profit, while independent units
// scale. Results do not depend on the order or the concurrency, since
// every unit has its own seed and its own files.
func runUnits(ctx context.Context, p Problem, s Settings, units []rundir.Unit, done func(rundir.Unit)) error {
	par := s.Workers
	if par <= 0 {
		par = runtime.GOMAXPROCS(0)
	}
	par = max(1, min(par, len(units)))
	samplerWorkers := s.Workers
	if par > 1 {
		samplerWorkers = 1
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	errs := make([]error, len(units))
	sem := make(chan struct{}, par)
	var wg sync.WaitGroup
	cost := make([]float64, len(units))
	if par > 1 && len(units) > par {
		cost = unitCosts(p, units)
	}
	for _, i := range longestFirst(cost, par) {
		u := units[i]
		sem <- struct{}{}
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() { <-sem }()
			if ctx.Err() != nil {
				return
			}
			if err := runUnit(ctx, p, s, u, samplerWorkers, par > 1); err != nil {
				errs[i] = fmt.Errorf("model %s, rung block %d: %w", u.Model, u.Block, err)
				cancel()
				return
			}
			done(u)
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

// unitCosts estimates each unit's cost for longestFirst: its rungs times
// the measured time of one prior and likelihood evaluation of its model at
// a few prior draws. Timing decides only when a unit runs, never its
// result: every unit has its own seed and its own files.
func unitCosts(p Problem, units []rundir.Unit) []float64 {
	perEval := make(map[int]float64)
	cost := make([]float64, len(units))
	for i, u := range units {
		c, ok := perEval[u.Index]
		if !ok {
			c = evalSeconds(p.Models[u.Index].Target)
			perEval[u.Index] = c
		}
		cost[i] = c * float64(len(u.Betas))
	}
	return cost
}

// longestFirst returns the order in which to start units of the given
// costs when par of them run side by side: the most expensive first, ties
// in their given order (the longest-processing-time rule, Graham 1969),
// so that the slowest model does not start last and then run alone on one
// core while the others idle.
func longestFirst(cost []float64, par int) []int {
	order := make([]int, len(cost))
	for i := range order {
		order[i] = i
	}
	if par <= 1 || len(cost) <= par {
		return order
	}
	slices.SortStableFunc(order, func(a, b int) int { return -cmpFloat(cost[a], cost[b]) })
	return order
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// evalSeconds is the mean wall time of one LogPrior and LogLike call of t
// over costDraws prior draws from a fixed seed (a likelihood that is zero
// at a draw counts as what it cost).
func evalSeconds(t sampler.Target) float64 {
	const costDraws = 64
	r := rand.New(rand.NewPCG(1, 2))
	xs := make([][]float64, costDraws)
	for i := range xs {
		xs[i] = make([]float64, t.Dim())
		t.Draw(r, xs[i])
	}
	for _, x := range xs[:1] { // warm-up: a lazily built table, caches
		if !math.IsInf(t.LogPrior(x), -1) {
			t.LogLike(x)
		}
	}
	start := time.Now()
	for _, x := range xs {
		if !math.IsInf(t.LogPrior(x), -1) {
			t.LogLike(x)
		}
	}
	return time.Since(start).Seconds() / costDraws
}

// runUnit samples one unit, with more steps or rungs until the error
// target is met when there is one, and writes its part folder.
func runUnit(ctx context.Context, p Problem, s Settings, u rundir.Unit, workers int, shared bool) error {
	m := p.Models[u.Index]
	m.Target = exact(m.Target)
	rep := s.Reporter
	betas := u.Betas
	steps := s.Steps
	var pm *evidence.PriorMass
	if slices.Contains(betas, 0) {
		est, err := priorMass(ctx, m.Target, s.PriorDraws, UnitSeed(s.Seed, u.Index, u.Block))
		if err != nil {
			return err
		}
		pm = &est
	}
	var passes []rundir.Pass
	for pass := 0; ; pass++ {
		burn := s.Burn
		if burn < 0 {
			// Every block of a ladder must keep the same steps, so the
			// burn-in is a fixed share rather than chosen per block.
			burn = steps / 4
		}
		scfg := sampler.Config{
			Walkers: s.Walkers, Seed: UnitSeed(s.Seed, u.Index, u.Block), Betas: betas,
			SwapEvery: s.SwapEvery, Workers: workers, Fingerprint: m.Fingerprint,
		}
		if s.AdaptLadder && len(betas) > 2 && burn > 0 {
			scfg.AdaptLadder, scfg.AdaptSteps = true, burn
		}
		ens, err := sampler.New(m.Target, scfg)
		if err != nil {
			return err
		}
		step, end := func(int) {}, func() {}
		if rep.Sampling != nil {
			step, end = rep.Sampling(u, steps, shared)
		}
		res, err := sampler.Run(ctx, ens, sampler.RunOptions{
			MaxSteps: steps, Burn: burn, Thin: s.Thin, CheckEvery: max(100, steps/10),
			OnStep: func(en *sampler.Ensemble) error { step(en.Steps()); return nil },
		})
		end()
		ens.Close()
		if err != nil {
			return err
		}
		if t := res.Report.MaxTau; 5*t > float64(burn) && rep.Warnf != nil {
			rep.Warnf("model %s, rung block %d: burn-in of %d steps is under 5 autocorrelation times (tau %.0f); give more --steps", u.Model, u.Block, burn, t)
		}
		betas = res.Betas // the frozen ladder, when it adapted
		// Without an error target the evidence is computed once, by Merge
		// from the part written here.
		if s.ErrorTarget > 0 {
			if ev, err := integrate(rungsOf(res, betas), pm); err == nil {
				var grown bool
				betas, steps, grown, passes = advance(s, ev, pass, steps, betas, passes)
				if rep.Pass != nil {
					rep.Pass(u, passes[len(passes)-1])
				}
				if grown {
					continue
				}
			}
		}
		return writePart(p, s, u, workers, betas, steps, res, passes, pm)
	}
}

// advance records one pass of the error-target loop and, unless the
// target is met or the caps are reached, grows the steps or the ladder as
// evidence.Advise suggests.
func advance(s Settings, ev evidence.Result, pass, steps int, betas []float64, passes []rundir.Pass) ([]float64, int, bool, []rundir.Pass) {
	adv := evidence.Advise(ev, s.ErrorTarget)
	cur := rundir.Pass{Pass: pass, Steps: steps, Rungs: len(betas), TotalError: ev.TIHigher.Total, Advice: adv.Reason}
	if adv.Done {
		cur.Status = fmt.Sprintf("target %g met: total error %.3g", s.ErrorTarget, ev.TIHigher.Total)
		return betas, steps, false, append(passes, cur)
	}
	grown := false
	var capped []string
	if adv.StepsFactor > 1 {
		if steps < s.MaxSteps {
			steps = min(s.MaxSteps, int(float64(steps)*adv.StepsFactor+0.5))
			grown = true
		} else {
			capped = append(capped, fmt.Sprintf("--max-steps %d", s.MaxSteps))
		}
	}
	if len(adv.Insert) > 0 {
		if len(betas) < s.MaxRungs {
			betas = MergeLadder(betas, adv.Insert, s.MaxRungs)
			grown = true
		} else {
			capped = append(capped, fmt.Sprintf("--max-rungs %d", s.MaxRungs))
		}
	}
	if !grown {
		cur.Stopped = fmt.Sprintf("cap reached (%s) before the target %g: total error %.3g", strings.Join(capped, ", "), s.ErrorTarget, ev.TIHigher.Total)
		cur.Status = cur.Stopped
	}
	return betas, steps, grown, append(passes, cur)
}

// MergeLadder adds the betas in extra to the decreasing ladder betas,
// keeping it decreasing, within (0, 1) for the new ones, and at most maxN
// long.
func MergeLadder(betas, extra []float64, maxN int) []float64 {
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

// rungsOf turns a run's history into evidence rungs, sorted by increasing
// beta.
func rungsOf(res sampler.Result, betas []float64) []evidence.Rung {
	h := res.History
	from := res.BurnIndex
	var rungs []evidence.Rung
	for r := len(betas) - 1; r >= 0; r-- {
		ll := h.LnLike(r, from)
		rungs = append(rungs, evidence.Rung{Beta: betas[r], LnL: ll, Steps: len(ll) / h.Walkers(), Walkers: h.Walkers()})
	}
	return rungs
}

func integrate(rungs []evidence.Rung, pm *evidence.PriorMass) (evidence.Result, error) {
	return evidence.Integrate(rungs, evidence.Options{Synchronous: true, PriorMass: pm})
}

// DefaultPriorDraws is the default of Settings.PriorDraws: with a prior
// mass p of the non-zero-likelihood region, the error of ln p is
// sqrt((1-p)/(p M)): 0.003 for p = 0.84 (smbhb on the SMBHB demo), 0.007
// for p = 1/2, at a cost of about 0.2 s for the slowest model.
const DefaultPriorDraws = 20000

// ExactLiker is implemented by targets whose LogLike may use a finite
// stand-in where the likelihood is exactly zero (likelihood.Posterior with
// a penalty above the data's prior range): compare integrates
// LogLikeExact instead, so that no tuning constant enters ln Z.
type ExactLiker interface {
	LogLikeExact(x []float64) float64
}

// exactTarget is a target whose LogLike is the exact likelihood.
type exactTarget struct {
	sampler.Target
	e ExactLiker
}

func (t exactTarget) LogLike(x []float64) float64 { return t.e.LogLikeExact(x) }

// ExactLikeMaker is an ExactLiker that also hands out evaluators of
// LogLikeExact with scratch of their own, one per sampler worker (see
// sampler.LogLikeMaker).
type ExactLikeMaker interface {
	NewLogLikeExact() (func(x []float64) float64, error)
}

// NewLogLike implements sampler.LogLikeMaker: per-worker evaluators of the
// exact likelihood where the target has them, else LogLike itself.
func (t exactTarget) NewLogLike() (func(x []float64) float64, error) {
	if m, ok := t.e.(ExactLikeMaker); ok {
		return m.NewLogLikeExact()
	}
	return t.LogLike, nil
}

// exact returns t with its exact likelihood when it has one.
func exact(t sampler.Target) sampler.Target {
	if e, ok := t.(ExactLiker); ok {
		return exactTarget{t, e}
	}
	return t
}

// priorStream tells the prior-mass draws' stream from the sampler's.
const priorStream = 0x7072696f726d6173

// priorMass estimates the prior mass of the region R where t's likelihood
// is non-zero (finite ln L) from draws independent prior draws
// (docs/physics.md section 7). The rungs, started inside R by the
// sampler, sample the prior restricted to R, and ln Z = ln Z_R + ln p.
func priorMass(ctx context.Context, t sampler.Target, draws int, seed uint64) (evidence.PriorMass, error) {
	if draws <= 0 {
		draws = DefaultPriorDraws
	}
	r := rand.New(rand.NewPCG(seed, priorStream))
	x := make([]float64, t.Dim())
	inside := 0
	for i := range draws {
		if i%4096 == 0 && ctx.Err() != nil {
			return evidence.PriorMass{}, ctx.Err()
		}
		t.Draw(r, x)
		if lp := t.LogPrior(x); math.IsNaN(lp) || math.IsInf(lp, 0) {
			continue
		}
		if ll := t.LogLike(x); !math.IsNaN(ll) && !math.IsInf(ll, 0) {
			inside++
		}
	}
	pm, err := evidence.NewPriorMass(draws, inside)
	if errors.Is(err, evidence.ErrNoPriorMass) {
		return pm, fmt.Errorf("none of %d prior draws has a non-zero likelihood (the model lies above the data's prior range of log10 rho in some bin, or outside its domain, everywhere the prior was tried): the evidence cannot be estimated; narrow the priors to where the model fits under the data", draws)
	}
	return pm, err
}

// writePart writes a unit's part folder: part.json, lnl.npy and, for the
// block holding beta = 1, posterior.npy.
func writePart(p Problem, s Settings, u rundir.Unit, workers int, betas []float64, steps int, res sampler.Result, passes []rundir.Pass, mass *evidence.PriorMass) error {
	m := p.Models[u.Index]
	var cfg json.RawMessage
	if m.Config != nil {
		raw, err := json.Marshal(m.Config(workers))
		if err != nil {
			return err
		}
		cfg = raw
	}
	dir := u.Dir(s.Out)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	h := res.History
	rec := h.Len() - res.BurnIndex
	var lnl []float64
	for r := range betas {
		lnl = append(lnl, h.LnLike(r, res.BurnIndex)...)
	}
	if err := chains.WriteNPY(filepath.Join(dir, rundir.LnLFile), len(betas)*rec, h.Walkers(), lnl); err != nil {
		return err
	}
	var models []string
	for _, mm := range p.Models {
		models = append(models, mm.Name)
	}
	u.Betas = betas
	pm := rundir.Part{
		Schema: rundir.PartSchema, Version: s.Version, Unit: u, Reference: p.Reference, Models: models, Fingerprint: m.Fingerprint,
		Comparison: p.ID, Config: cfg, DataName: p.DataName, DataSHA256: p.DataSHA256, Datasets: p.Datasets, Params: m.Params, Priors: m.Priors,
		Steps: steps, Walkers: h.Walkers(), BurnIndex: res.BurnIndex, Recorded: rec, Swap: res.SwapAcceptance,
		Passes: passes, PriorMass: mass,
	}
	if betas[0] == 1 {
		dim := len(pm.Params)
		post, n := rundir.PosteriorSamples(res, dim)
		if err := chains.WriteNPY(filepath.Join(dir, rundir.PosteriorFile), n, dim, post); err != nil {
			return err
		}
		rep := res.Report
		pm.Diagnostics = &rep
	}
	return rundir.WriteJSON(filepath.Join(dir, rundir.PartFile), pm)
}
