// Package calibrate checks a model's whole inference chain, simulation,
// free-spectrum likelihood and ensemble sampler together, by
// simulation-based calibration (Talts, Betancourt, Simpson, Vehtari &
// Gelman 2018, "Validating Bayesian inference algorithms with
// simulation-based calibration", arXiv:1804.06788).
//
// For replicates i = 1..N it draws true parameters theta_i from the prior,
// simulates a free-spectrum data set y_i from them (package
// likelihood/simulate, the same invented array for every replicate), fits
// y_i with the ensemble sampler and keeps L roughly independent posterior
// draws (the chain thinned by its autocorrelation time). If the posterior
// is computed correctly, the rank of theta_i among its L draws,
//
//	r_i = #{ l : theta_i,l < theta_i }  in 0..L,
//
// is uniformly distributed over 0..L for every parameter (Talts et al.
// 2018, theorem 1): data averaged over the prior turn the posterior back
// into the prior. A wrong likelihood, a prior in the fit other than the
// one the truths came from, or a sampler that has not converged make the
// ranks pile up at the ends (posterior too narrow or shifted) or in the
// middle (too wide). The package writes the ranks, a rank histogram per
// parameter with its 95 % simultaneous band, a chi-squared test of
// uniformity per parameter, and the coverage of 50/68/95 % central
// intervals.
//
// Replicate i uses a seed derived from the run seed and i alone
// (ReplicateSeed), and its result is written atomically to a file of its
// own in the run folder, so a run is reproducible, independent of the
// number of workers, and resumable: a resumed run skips the replicates
// already written and produces byte-identical outputs.
package calibrate

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"sync"

	"tautline/internal/atomicfile"
	"tautline/likelihood"
	"tautline/likelihood/simulate"
	"tautline/models"
	"tautline/models/gw"
	"tautline/priors"
	"tautline/sampler"
)

// Problem is what is calibrated: a model, the prior the truths are drawn
// from, the prior the fits use, and how data are simulated and read.
type Problem struct {
	// Model is the model simulated and fitted.
	Model models.Model
	// Simulate holds the prior each parameter's truth is drawn from, one
	// per Model.Params() entry; a nil slice or entry selects the model's
	// default prior. A priors.PointMass holds the parameter at its value.
	Simulate []priors.Prior
	// Fit holds the priors of the fits, in the same order; a nil slice or
	// entry selects the Simulate prior. A correct calibration has Fit equal
	// to Simulate; another Fit is a deliberately mis-specified check.
	// Parameters with a PointMass fit prior are not sampled and get no
	// rank.
	Fit []priors.Prior
	// Array is the invented timing array of every replicate.
	Array simulate.Array
	// H0 is the Hubble constant in s^-1.
	H0 float64
	// Grid sets the per-bin posterior grid of the simulated data. Its
	// range in log10 rho should hold the prior's predictions: a bin whose
	// true log10 rho lies above Grid.Max is truncated there and counted in
	// Replicate.AboveGrid.
	Grid simulate.GridOptions
	// Likelihood configures the free-spectrum tables of the fits.
	Likelihood likelihood.Options
	// Describe, if not nil, is stored in the run folder's calibration.json
	// as the caller's own record of its settings (it must encode as JSON
	// deterministically); a resumed run must carry the same.
	Describe any
}

// Settings say how a calibration runs.
type Settings struct {
	// Replicates is the number N of simulated data sets.
	Replicates int
	// Draws is the number L of posterior draws kept per fit; ranks lie in
	// 0..L. L+1 should have divisors that suit a histogram (99, 199, 39).
	Draws int
	// Walkers and Steps configure each fit's ensemble.
	Walkers, Steps int
	// Burn is the number of steps discarded; -1 lets the sampler choose
	// (5 autocorrelation times or a tenth of the run, the longer).
	Burn int
	// Thin is the spacing in steps between kept draws; 0 takes the
	// ceiling of the largest autocorrelation time, so that the draws are
	// roughly independent. When the run is too short for L draws at that
	// spacing, the spacing shrinks and the replicate records it.
	Thin int
	// Seed is the run seed; each replicate derives its own.
	Seed uint64
	// Workers is the number of replicates fitted side by side (0: every
	// CPU). Results do not depend on it.
	Workers int
	// RankBins is the number of rank-histogram bins, dividing Draws+1;
	// 0 chooses it (AutoBins).
	RankBins int
	// Level is the uniformity test's level (0: 0.01).
	Level float64
	// FigureFormats lists the figure formats, "png" and/or "svg"
	// (nil: both; empty non-nil: none).
	FigureFormats []string
	// Out is the run folder.
	Out string
	// Resume continues a run in Out, skipping the replicates written.
	Resume bool
	// Progress, if not nil, is called after each replicate (from one
	// goroutine at a time).
	Progress func(Progress)
}

// Progress is what a calibration reports after each replicate.
type Progress struct {
	// Done counts the finished replicates, Resumed those found already
	// written, Total all.
	Done, Resumed, Total int
	// Replicate is the index of the replicate just finished; -1 for the
	// report of the resumed replicates before any new one.
	Replicate int
}

// A Replicate is one simulated data set and its fit; it is also the JSON
// content of the replicate's file in the run folder.
type Replicate struct {
	Index int    `json:"replicate"`
	Seed  uint64 `json:"seed"`
	// Theta holds all model parameters' true values, in Model.Params()
	// order.
	Theta []float64 `json:"theta"`
	// Params names the sampled parameters, Truth their true values, Ranks
	// their ranks and Draws[j] the L posterior draws of Params[j].
	Params []string    `json:"params"`
	Truth  []float64   `json:"truth"`
	Ranks  []int       `json:"ranks"`
	Draws  [][]float64 `json:"draws"`
	// Tau is the largest autocorrelation time in steps (null: the chain
	// was too short to estimate it), Burn the steps discarded, Thin the
	// spacing of the kept draws.
	Tau  *float64 `json:"tau"`
	Burn int      `json:"burn"`
	Thin int      `json:"thin"`
	// ThinBelowTau says the run was too short for L draws spaced by tau.
	ThinBelowTau bool `json:"thin_below_tau"`
	// Acceptance is the walkers' mean acceptance fraction.
	Acceptance float64 `json:"acceptance"`
	// AboveGrid counts the bins whose true log10 rho lies above the data
	// grid's range.
	AboveGrid int `json:"above_grid"`
}

// ReplicateSeed derives replicate i's seed from the run seed by SplitMix64
// (Steele, Lea & Flood 2014) of the mixed values, so that replicates are
// independent and each depends on nothing but (seed, i).
func ReplicateSeed(seed uint64, i int) uint64 {
	return splitmix64(seed ^ splitmix64(uint64(i)+0x9e3779b97f4a7c15))
}

func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// Stream constants: each use of a replicate's seed gets its own stream.
const (
	streamTruth   = 0x7472757468   // "truth"
	streamTies    = 0x74696573     // "ties"
	seedSimulate  = 0x73696d756c61 // "simula"
	seedSampler   = 0x73616d706c65 // "sample"
	replicateGlob = "rep-*.json"
)

// ReplicateFile is the path of replicate i's file in the run folder out.
func ReplicateFile(out string, i int) string {
	return filepath.Join(out, "replicates", fmt.Sprintf("rep-%06d.json", i))
}

// PlanFile is the run folder's description of the calibration.
func PlanFile(out string) string { return filepath.Join(out, "calibration.json") }

// resolved is a Problem with its priors resolved and checked.
type resolved struct {
	Problem
	sim, fit []priors.Prior
	freqs    []float64
}

func resolve(p Problem) (*resolved, error) {
	if p.Model == nil {
		return nil, errors.New("calibrate: no model")
	}
	ps := p.Model.Params()
	for _, pr := range [][]priors.Prior{p.Simulate, p.Fit} {
		if pr != nil && len(pr) != len(ps) {
			return nil, fmt.Errorf("calibrate: model %s has %d parameters but %d priors were given", p.Model.Name(), len(ps), len(pr))
		}
	}
	r := &resolved{Problem: p, sim: make([]priors.Prior, len(ps)), fit: make([]priors.Prior, len(ps))}
	for j, par := range ps {
		r.sim[j] = par.Prior
		if p.Simulate != nil && p.Simulate[j] != nil {
			r.sim[j] = p.Simulate[j]
		}
		r.fit[j] = r.sim[j]
		if p.Fit != nil && p.Fit[j] != nil {
			r.fit[j] = p.Fit[j]
		}
		if r.sim[j] == nil {
			return nil, fmt.Errorf("calibrate: parameter %s has no prior", par.Name)
		}
	}
	if d, ok := p.Model.(models.Bounded); ok {
		dom := d.Domain()
		for j := range min(len(dom), len(ps)) {
			lo, hi := r.sim[j].Bounds()
			if lo < dom[j][0] || hi > dom[j][1] {
				return nil, fmt.Errorf("calibrate: model %s: simulation prior %s of %s reaches outside the model's domain [%g, %g]; narrow the prior",
					p.Model.Name(), r.sim[j], ps[j].Name, dom[j][0], dom[j][1])
			}
		}
	}
	if !(p.Array.Span > 0) || p.Array.Bins < 1 {
		return nil, fmt.Errorf("calibrate: array: need span > 0 s and bins >= 1, got %g s and %d", p.Array.Span, p.Array.Bins)
	}
	r.freqs = make([]float64, p.Array.Bins)
	for i := range r.freqs {
		r.freqs[i] = float64(i+1) / p.Array.Span
	}
	return r, nil
}

func (s *Settings) check() error {
	switch {
	case s.Replicates < 1:
		return fmt.Errorf("calibrate: replicates must be >= 1, got %d", s.Replicates)
	case s.Draws < 1:
		return fmt.Errorf("calibrate: draws must be >= 1, got %d", s.Draws)
	case s.Steps < 1:
		return fmt.Errorf("calibrate: steps must be >= 1, got %d", s.Steps)
	case s.Burn < -1 || s.Burn >= s.Steps:
		return fmt.Errorf("calibrate: burn must be -1 or in 0..steps-1 (%d), got %d", s.Steps-1, s.Burn)
	case s.Thin < 0:
		return fmt.Errorf("calibrate: thin must be >= 0 (0: from the autocorrelation time), got %d", s.Thin)
	case s.Out == "":
		return errors.New("calibrate: no output folder")
	}
	if s.Level == 0 {
		s.Level = 0.01
	}
	if !(s.Level > 0 && s.Level < 1) {
		return fmt.Errorf("calibrate: test level must be in (0, 1), got %g", s.Level)
	}
	if s.RankBins == 0 {
		s.RankBins = AutoBins(s.Replicates, s.Draws)
		if s.RankBins == 0 {
			return fmt.Errorf("calibrate: %d replicates of %d draws allow no rank histogram of at least 2 bins with 10 expected counts each; give more replicates, or draws with draws+1 divisible by 2, 4, 5 or 10", s.Replicates, s.Draws)
		}
	}
	if err := checkBins(s.Draws, s.RankBins); err != nil {
		return err
	}
	if s.FigureFormats == nil {
		s.FigureFormats = []string{"png", "svg"}
	}
	for _, f := range s.FigureFormats {
		if f != "png" && f != "svg" {
			return fmt.Errorf("calibrate: figure format %q: want png or svg", f)
		}
	}
	return nil
}

// plan is calibration.json: everything the results depend on.
type plan struct {
	Method     string   `json:"method"`
	Model      string   `json:"model"`
	Params     []string `json:"params"`
	Simulate   []string `json:"simulation_priors"`
	Fit        []string `json:"fit_priors"`
	Array      arrayDoc `json:"array"`
	H0         float64  `json:"h0_per_s"`
	Grid       gridDoc  `json:"data_grid"`
	Likelihood any      `json:"likelihood"`
	Replicates int      `json:"replicates"`
	Draws      int      `json:"draws"`
	Walkers    int      `json:"walkers"`
	Steps      int      `json:"steps"`
	Burn       int      `json:"burn"`
	Thin       int      `json:"thin"`
	Seed       uint64   `json:"seed"`
	RankBins   int      `json:"rank_bins"`
	Level      float64  `json:"level"`
	Describe   any      `json:"settings,omitempty"`
}

type arrayDoc struct {
	Pulsars int     `json:"pulsars"`
	Span    float64 `json:"span_s"`
	Cadence float64 `json:"cadence_s"`
	Sigma   float64 `json:"sigma_s"`
	Bins    int     `json:"bins"`
}

type gridDoc struct {
	Min     float64 `json:"log10_rho_min"`
	Max     float64 `json:"log10_rho_max"`
	Points  int     `json:"points"`
	Samples int     `json:"samples"`
}

func makePlan(r *resolved, s Settings) plan {
	pl := plan{
		Method: "simulation-based calibration (Talts et al. 2018)",
		Model:  r.Model.Name(), H0: r.H0,
		Array: arrayDoc{r.Array.Pulsars, r.Array.Span, r.Array.Cadence, r.Array.Sigma, r.Array.Bins},
		Grid:  gridDoc{r.Grid.Min, r.Grid.Max, r.Grid.Points, r.Grid.Samples},
		Likelihood: map[string]any{"bandwidth": r.Likelihood.Bandwidth, "table_size": r.Likelihood.TableSize,
			"penalty": r.Likelihood.Penalty},
		Replicates: s.Replicates, Draws: s.Draws, Walkers: s.Walkers, Steps: s.Steps, Burn: s.Burn, Thin: s.Thin,
		Seed: s.Seed, RankBins: s.RankBins, Level: s.Level, Describe: r.Describe,
	}
	for j, par := range r.Model.Params() {
		pl.Params = append(pl.Params, par.Name)
		pl.Simulate = append(pl.Simulate, r.sim[j].String())
		pl.Fit = append(pl.Fit, r.fit[j].String())
	}
	return pl
}

// Run calibrates p with s and writes the run folder s.Out:
//
//	calibration.json          what the results depend on
//	replicates/rep-NNNNNN.json one file per finished replicate
//	ranks.csv                 replicate, seed, true values, ranks
//	coverage.csv, .json       coverage of 50/68/95 % central intervals
//	uniformity.csv            chi-squared test and band per parameter
//	summary.json              all of the above with the band and warnings
//	rank_PARAM.png, .svg      rank histogram with its simultaneous band
//
// On cancellation it returns an error wrapping ctx.Err() after the
// replicates in flight stop; the finished ones stay for a resume.
func Run(ctx context.Context, p Problem, s Settings) (*Result, error) {
	if err := s.check(); err != nil {
		return nil, err
	}
	r, err := resolve(p)
	if err != nil {
		return nil, err
	}
	if err := checkGrid(&r.Grid); err != nil {
		return nil, err
	}
	pl, err := json.MarshalIndent(makePlan(r, s), "", "  ")
	if err != nil {
		return nil, fmt.Errorf("calibrate: %w", err)
	}
	pl = append(pl, '\n')
	if err := prepareOut(s.Out, pl, s.Resume); err != nil {
		return nil, err
	}
	reps := make([]*Replicate, s.Replicates)
	var todo []int
	for i := range reps {
		rep, err := readReplicate(ReplicateFile(s.Out, i), i, ReplicateSeed(s.Seed, i))
		if err != nil {
			return nil, err
		}
		if rep != nil {
			reps[i] = rep
		} else {
			todo = append(todo, i)
		}
	}
	resumed := s.Replicates - len(todo)
	if resumed > 0 && s.Progress != nil {
		s.Progress(Progress{Done: resumed, Resumed: resumed, Total: s.Replicates, Replicate: -1})
	}
	if err := runReplicates(ctx, r, s, todo, reps, resumed); err != nil {
		return nil, err
	}
	return summarise(r, s, reps)
}

// checkGrid applies simulate's defaults so that the plan records them.
func checkGrid(g *simulate.GridOptions) error {
	if g.Min == 0 && g.Max == 0 {
		g.Min, g.Max = -10, -4
	}
	if g.Points == 0 {
		g.Points = 400
	}
	if !(g.Min < g.Max) || math.IsInf(g.Min, 0) || math.IsInf(g.Max, 0) || g.Points < 2 {
		return fmt.Errorf("calibrate: data grid: need finite log10 rho min < max and >= 2 points, got [%g, %g], %d", g.Min, g.Max, g.Points)
	}
	return nil
}

// prepareOut creates the run folder and its plan, refusing a folder that
// holds another calibration, or this one's replicates without resume.
func prepareOut(out string, pl []byte, resume bool) error {
	if err := os.MkdirAll(filepath.Join(out, "replicates"), 0o755); err != nil {
		return fmt.Errorf("calibrate: output folder: %w", err)
	}
	old, err := os.ReadFile(PlanFile(out))
	switch {
	case err == nil && !bytes.Equal(old, pl):
		return fmt.Errorf("calibrate: %s describes another calibration (%s); choose another output folder, or remove that one first",
			PlanFile(out), firstDifference(old, pl))
	case err == nil && !resume:
		return fmt.Errorf("calibrate: %s already holds this calibration; resume it, or choose another output folder", out)
	case err != nil && !errors.Is(err, os.ErrNotExist):
		return fmt.Errorf("calibrate: %w", err)
	}
	noPlan := err != nil
	if m, _ := filepath.Glob(filepath.Join(out, "replicates", replicateGlob)); noPlan && len(m) > 0 {
		return fmt.Errorf("calibrate: %s holds replicate files but no %s; remove them or choose another output folder", out, filepath.Base(PlanFile(out)))
	}
	return atomicfile.WriteFile(PlanFile(out), pl)
}

// firstDifference names the first top-level key whose value differs.
func firstDifference(a, b []byte) string {
	var ma, mb map[string]json.RawMessage
	if json.Unmarshal(a, &ma) != nil || json.Unmarshal(b, &mb) != nil {
		return "unreadable"
	}
	keys := make([]string, 0, len(ma)+len(mb))
	for k := range ma {
		keys = append(keys, k)
	}
	for k := range mb {
		if _, ok := ma[k]; !ok {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	for _, k := range keys {
		if !bytes.Equal(compact(ma[k]), compact(mb[k])) {
			return fmt.Sprintf("key %q: %s there, %s now", k, compact(ma[k]), compact(mb[k]))
		}
	}
	return "formatting"
}

func compact(b []byte) []byte {
	var buf bytes.Buffer
	if json.Compact(&buf, b) != nil {
		return b
	}
	return buf.Bytes()
}

// readReplicate reads replicate i's file; nil when there is none.
func readReplicate(path string, i int, seed uint64) (*Replicate, error) {
	raw, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("calibrate: %w", err)
	}
	var rep Replicate
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&rep); err != nil {
		return nil, fmt.Errorf("calibrate: %s: %w; remove the file to redo the replicate", path, err)
	}
	if rep.Index != i || rep.Seed != seed || len(rep.Ranks) != len(rep.Params) || len(rep.Draws) != len(rep.Params) || len(rep.Truth) != len(rep.Params) {
		return nil, fmt.Errorf("calibrate: %s is not replicate %d of this calibration (seed %d); remove the file to redo the replicate", path, i, seed)
	}
	return &rep, nil
}

// runReplicates fits the replicates todo with a pool of workers, each
// replicate's ensemble stepping serially: independent replicates scale
// across cores better than one ensemble's half-steps do.
func runReplicates(ctx context.Context, r *resolved, s Settings, todo []int, reps []*Replicate, resumed int) error {
	par := s.Workers
	if par <= 0 {
		par = runtime.GOMAXPROCS(0)
	}
	par = max(1, min(par, len(todo)))
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	jobs := make(chan int)
	var mu sync.Mutex
	done := resumed
	var firstErr error
	var wg sync.WaitGroup
	for range par {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				rep, err := runReplicate(ctx, r, s, i)
				if err == nil {
					err = writeReplicate(ReplicateFile(s.Out, i), rep)
				}
				mu.Lock()
				if err != nil {
					if firstErr == nil || (errors.Is(firstErr, context.Canceled) && !errors.Is(err, context.Canceled)) {
						firstErr = err
					}
					cancel()
				} else {
					reps[i] = rep
					done++
					if s.Progress != nil {
						s.Progress(Progress{Done: done, Resumed: resumed, Total: s.Replicates, Replicate: i})
					}
				}
				mu.Unlock()
			}
		}()
	}
feed:
	for _, i := range todo {
		select {
		case jobs <- i:
		case <-ctx.Done():
			break feed
		}
	}
	close(jobs)
	wg.Wait()
	if firstErr != nil {
		return firstErr
	}
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("calibrate: interrupted: %w", err)
	}
	return nil
}

func writeReplicate(path string, rep *Replicate) error {
	raw, err := json.Marshal(rep)
	if err != nil {
		return fmt.Errorf("calibrate: replicate %d: %w", rep.Index, err)
	}
	if err := atomicfile.WriteFile(path, append(raw, '\n')); err != nil {
		return fmt.Errorf("calibrate: %w", err)
	}
	return nil
}

// runReplicate draws replicate i's truth, simulates its data, fits them and
// ranks the truth among the kept draws.
func runReplicate(ctx context.Context, r *resolved, s Settings, i int) (*Replicate, error) {
	seed := ReplicateSeed(s.Seed, i)
	ps := r.Model.Params()
	rng := rand.New(rand.NewPCG(seed, streamTruth))
	theta := make([]float64, len(ps))
	for j := range ps {
		theta[j] = r.sim[j].Rand(rng)
	}
	fail := func(err error) (*Replicate, error) {
		return nil, fmt.Errorf("calibrate: replicate %d (seed %d): %w", i, seed, err)
	}
	spec, err := r.Model.At(r.freqs)
	if err != nil {
		return fail(err)
	}
	lnO := make([]float64, len(r.freqs))
	if err := spec.LnOmega(theta, lnO); err != nil {
		return fail(fmt.Errorf("model %s at the drawn truth: %w", r.Model.Name(), err))
	}
	rep := &Replicate{Index: i, Seed: seed, Theta: theta}
	for k, f := range r.freqs {
		if 0.5*math.Log10(gw.Rho2FromOmega(f, math.Exp(lnO[k]), r.H0, r.Array.Span)) > r.Grid.Max {
			rep.AboveGrid++
		}
	}
	ds, err := simulate.Run(lnO, r.Array, r.H0, splitmix64(seed^seedSimulate), r.Grid)
	if err != nil {
		return fail(err)
	}
	fs, err := likelihood.NewFreeSpectrum(ds, r.Likelihood)
	if err != nil {
		return fail(err)
	}
	post, err := likelihood.NewPosterior(r.Model, r.fit, ds, fs, r.H0)
	if err != nil {
		return fail(err)
	}
	if post.Dim() == 0 {
		return fail(errors.New("every parameter is fixed in the fit: nothing to calibrate"))
	}
	ens, err := sampler.New(post, sampler.Config{Walkers: s.Walkers, Seed: splitmix64(seed ^ seedSampler), Workers: 1})
	if err != nil {
		return fail(err)
	}
	defer ens.Close()
	res, err := sampler.Run(ctx, ens, sampler.RunOptions{MaxSteps: s.Steps, Burn: s.Burn, Thin: 1, CheckEvery: s.Steps})
	if err != nil {
		return fail(err)
	}
	if err := keepDraws(rep, res, s); err != nil {
		return fail(err)
	}
	acc := ens.AcceptanceFractions(0)
	for _, a := range acc {
		rep.Acceptance += a / float64(len(acc))
	}
	names := post.FreeNames()
	index := map[string]int{}
	for j, par := range ps {
		index[par.Name] = j
	}
	ties := rand.New(rand.NewPCG(seed, streamTies))
	rep.Params = names
	for k, name := range names {
		truth := theta[index[name]]
		rep.Truth = append(rep.Truth, truth)
		rep.Ranks = append(rep.Ranks, Rank(truth, rep.Draws[k], ties))
	}
	return rep, nil
}

// keepDraws picks Settings.Draws draws from the post-burn-in chain: every
// walker at the steps Thin apart counted back from the last step, newest
// first, until L draws are taken.
func keepDraws(rep *Replicate, res sampler.Result, s Settings) error {
	h := res.History
	w, dim := h.Walkers(), h.Dim()
	n := h.Len() - res.BurnIndex
	rep.Burn = res.Burn
	tau := res.Report.MaxTau
	if tau > 0 && !math.IsInf(tau, 0) {
		rep.Tau = &tau
	}
	k := s.Thin
	if k == 0 {
		k = 1
		if rep.Tau != nil {
			k = int(math.Ceil(tau))
		}
	}
	need := (s.Draws + w - 1) / w // steps needed
	if n < need {
		return fmt.Errorf("after a burn-in of %d steps, %d steps x %d walkers hold fewer than the %d draws asked for; give more steps", res.Burn, n, w, s.Draws)
	}
	if need > 1 && (n-1)/k+1 < need {
		k = max(1, (n-1)/(need-1))
		rep.ThinBelowTau = true
	}
	rep.Thin = k
	pos := h.Positions(0)
	rep.Draws = make([][]float64, dim)
	for d := range dim {
		rep.Draws[d] = make([]float64, 0, s.Draws)
	}
	taken := 0
	for st := h.Len() - 1; st >= res.BurnIndex && taken < s.Draws; st -= k {
		for wk := 0; wk < w && taken < s.Draws; wk++ {
			for d := range dim {
				rep.Draws[d] = append(rep.Draws[d], pos[(st*w+wk)*dim+d])
			}
			taken++
		}
	}
	return nil
}
