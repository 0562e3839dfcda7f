package sampler

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"time"
)

// History is the in-memory record Run keeps: the cold rung's positions and
// every rung's ln likelihood after each recorded step. Recorded step s
// (0-based) is ensemble step Start()+s+1.
type History struct {
	start   int
	n       int
	walkers int
	dim     int
	rungs   int
	pos     []float64 // n x walkers x dim, cold rung
	ll      []float64 // n x rungs x walkers
	diag    *diagPool // the diagnostics' buffers, reused by every check
}

// pool returns the diagnostics' goroutines and buffers of h.
func (h *History) pool() *diagPool {
	if h.diag == nil {
		h.diag = newDiagPool()
	}
	return h.diag
}

func newHistory(e *Ensemble) *History {
	return &History{start: e.steps, walkers: e.nw, dim: e.dim, rungs: len(e.rungs)}
}

func (h *History) record(e *Ensemble) {
	h.pos = append(h.pos, e.rungs[0].pos...)
	for r := range e.rungs {
		h.ll = append(h.ll, e.rungs[r].ll...)
	}
	h.n++
}

// maxReserve bounds the memory, in bytes, Run sets aside for the history
// up front; a longer history grows as it is recorded.
const maxReserve = 64 << 20

// reserve makes room for steps more recorded steps (within maxReserve), so
// that recording does not copy the history as it grows.
func (h *History) reserve(steps int) {
	per := h.walkers * (h.dim + h.rungs)
	steps = min(steps, maxReserve/(8*max(per, 1)))
	if steps > 0 {
		h.pos = grown(h.pos, steps*h.walkers*h.dim)
		h.ll = grown(h.ll, steps*h.walkers*h.rungs)
	}
}

// grown is s with room for n more values. Unlike slices.Grow it does not
// clear the new room: fresh memory from the system is zero already, and
// is then touched only as the history is recorded (not at all by a run
// that converges early).
func grown(s []float64, n int) []float64 {
	if cap(s)-len(s) >= n {
		return s
	}
	g := make([]float64, len(s), len(s)+n)
	copy(g, s)
	return g
}

// Start returns the ensemble step count before the first recorded step.
func (h *History) Start() int { return h.start }

// Len returns the number of recorded steps.
func (h *History) Len() int { return h.n }

// Walkers returns the number of walkers per rung.
func (h *History) Walkers() int { return h.walkers }

// Dim returns the dimension.
func (h *History) Dim() int { return h.dim }

// Rungs returns the number of rungs.
func (h *History) Rungs() int { return h.rungs }

// Positions returns the cold rung's positions of recorded steps
// [from, Len()), laid out x[((s-from)*walkers+w)*dim+k]; a read-only view.
func (h *History) Positions(from int) []float64 {
	from = min(max(from, 0), h.n)
	return h.pos[from*h.walkers*h.dim:]
}

// Param returns parameter k of the cold rung for recorded steps
// [from, Len()), laid out x[(s-from)*walkers+w] as the diagnostics expect.
func (h *History) Param(k, from int) []float64 {
	from = min(max(from, 0), h.n)
	out := make([]float64, (h.n-from)*h.walkers)
	for i := range out {
		out[i] = h.pos[(from*h.walkers+i)*h.dim+k]
	}
	return out
}

// LnLike returns ln likelihood of rung r for recorded steps [from, Len()),
// laid out x[(s-from)*walkers+w].
func (h *History) LnLike(r, from int) []float64 {
	from = min(max(from, 0), h.n)
	out := make([]float64, 0, (h.n-from)*h.walkers)
	for s := from; s < h.n; s++ {
		o := (s*h.rungs + r) * h.walkers
		out = append(out, h.ll[o:o+h.walkers]...)
	}
	return out
}

// A thinning sets how far evaluate thins the history: the chain is first
// thinned to about Coarse steps, then by floor(tau/Divisor) of the
// slowest parameter.
type thinning struct {
	Coarse int // steps of the first, coarse estimate of tau
	// ShortCoarse, if not 0, is Coarse for a history shorter than
	// 2 Coarse steps, which Coarse would leave unthinned.
	ShortCoarse int
	Divisor     float64 // the thinning interval is at most tau/Divisor
	// DirectFrom is the series length from which the estimates of tau
	// sum the autocovariances lag by lag (see directMinLen) rather than
	// by FFT.
	DirectFrom int
}

// finalThinning is that of the diagnostics Run returns: by tau/10, where
// k tau(thinned) differs from tau by less than 0.5 % for an exponentially
// decaying autocorrelation. The coarse first estimate reads about 1024
// steps: a finer start can leave the window of tau (five times tau in
// thinned steps) beyond the lags the direct sums reach, so that the sums
// are thrown away and done again by FFT, the bulk of the report. Started
// from 4096 steps, as it was for long histories, the string demo's tau of
// about 80 made the diagnostics of a 16000-step --until run take 19-21 ms
// instead of 11-12. A start thinned
// more than tau costs one more, small, refinement. Wherever the
// refinement starts, it ends at a thinning of at most tau/10.
var finalThinning = thinning{Coarse: 1024, Divisor: 10, DirectFrom: directMinLen}

// checkThinning is that of the convergence checks during a run: the chain
// is thinned by tau/4, at which k tau(thinned) overstates tau by at most
// (k/tau)^2/3 = 2 % for an exponentially decaying autocorrelation (so ESS
// is understated, the conservative side for a stopping rule), while a
// check reads 2.5 times fewer steps than the final report, about 4 steps
// per autocorrelation time of the run. The coarse first estimate reads
// about 256 steps, or 64 from a history of under 512, for the reason
// given at finalThinning, and the sums are direct from 64 steps: a
// thinned check's window is a few dozen lags, which direct sums reach at
// a fraction of the FFT's cost for series of a few hundred steps (they
// agree to rounding).
var checkThinning = thinning{Coarse: 256, ShortCoarse: 64, Divisor: 4, DirectFrom: 64}

// start returns the thinning of the first, coarse estimate of tau of n
// steps.
func (th thinning) start(n int) int {
	if th.ShortCoarse > 0 && n < 2*th.Coarse {
		return max(1, n/th.ShortCoarse)
	}
	return max(1, n/th.Coarse)
}

// interval returns the thinning interval for tau: floor(tau/Divisor) from
// tau = 2 Divisor on, else 1.
func (th thinning) interval(tau float64) int {
	k := 1
	if tau >= 2*th.Divisor {
		k = int(tau / th.Divisor)
	}
	return max(k, 1)
}

// maxTauThinned estimates the largest autocorrelation time over the
// parameters for recorded steps [from, Len()), in steps; NaN if there are
// too few. To keep checks cheap on long histories it first thins the chain
// to about th.Coarse steps and refines the thinning to th.interval until
// the thinning is at most tau/th.Divisor, where (for the final thinning,
// tau/10) thinning changes the estimate by less than 0.5 % (see evaluate).
// The result depends only on the history.
func (h *History) maxTauThinned(from int, th thinning) float64 {
	return h.tauPass(from, th).max
}

// A tauPass is the last estimate of maxTauThinned: the chain of recorded
// steps from, from+k, ... and the autocorrelation time of each parameter
// (in thinned steps, with its error) and the largest (in steps).
type tauPass struct {
	from, k int
	taus    []float64
	errs    []error
	max     float64
}

// tauPass is maxTauThinned with the estimate it ends at.
func (h *History) tauPass(from int, th thinning) tauPass {
	n := h.n - from
	if n < 4 {
		return tauPass{from: from, k: 1, max: math.NaN()}
	}
	k := th.start(n)
	for range 8 {
		p := h.thinnedTaus(from, k, th.DirectFrom)
		next := th.interval(p.max)
		if next >= k || math.IsNaN(p.max) {
			return p
		}
		k = next
	}
	return h.thinnedTaus(from, k, th.DirectFrom)
}

// view is the chain of ns recorded steps from, from+k, ..., read in place.
func (h *History) view(from, k, ns int) chainView {
	return chainView{pos: h.pos[from*h.walkers*h.dim:], steps: ns, walkers: h.walkers, dim: h.dim, stride: k}
}

// thinnedTaus estimates the autocorrelation time of every parameter of
// the chain of recorded steps from, from+k, ..., and the largest in
// unthinned steps, with the autocovariances of series of at least direct
// steps summed lag by lag.
func (h *History) thinnedTaus(from, k, direct int) tauPass {
	p := tauPass{from: from, k: k, max: math.NaN()}
	ns := (h.n - from + k - 1) / k
	if ns < 4 {
		return p
	}
	v := h.view(from, k, ns)
	p.taus, p.errs = make([]float64, h.dim), make([]error, h.dim)
	h.pool().each(h.dim, ns*h.walkers, func(sc *diagScratch, i int) {
		p.taus[i], p.errs[i] = sc.autocorrView(v, i, direct)
	})
	for _, t := range p.taus {
		if !math.IsNaN(t) && !(t*float64(k) <= p.max) {
			p.max = t * float64(k)
		}
	}
	return p
}

// Criteria are the convergence conditions of Run; a zero field is not
// checked. All set conditions must hold at a check.
type Criteria struct {
	ESS         float64 // least effective sample size of every parameter after burn-in
	TauMultiple float64 // least post-burn-in chain length in autocorrelation times
	Rhat        float64 // largest ensemble R-hat (EnsembleRhat) of every parameter
}

// RunOptions control Run. Step counts are ensemble step counts (as
// Ensemble.Steps), so a resumed run keeps its schedule.
type RunOptions struct {
	MaxSteps int      // stop here if not converged; must be > 0
	MinSteps int      // never stop as converged before this
	Burn     int      // steps discarded; -1 chooses max(5 tau, a tenth of the run) after the ladder froze
	Thin     int      // thinning for the products; 0 chooses max(1, floor(tau/2))
	Until    Criteria // convergence conditions
	// CheckEvery is the interval between convergence checks, 0 meaning
	// 500. From the 8th check on the interval doubles whenever the step
	// count doubles (4 checks per doubling; see isCheckStep), and a check
	// thins the history to a fixed size (see checkThinning). With criteria
	// a check decides only from the step the previous deciding check
	// estimated the criteria to hold at (at most 4 times the usable run;
	// see nextDecision), so a run decides a few times, and when the other
	// conditions hold the final report decides with all of them (decideAt),
	// so a run that converges reports that it meets its criteria. The
	// check at MaxSteps is the final report itself. Other checks only feed
	// OnCheck: none runs when OnCheck is nil, and one is skipped within
	// progressInterval (100 ms) of the run's start or the last check, or
	// while the checks so far took more than progressShare of the run's
	// time; the results do not depend on them.
	CheckEvery int
	// OnStep, if not nil, is called after every step (to write chains); an
	// error stops the run and is returned.
	OnStep func(e *Ensemble) error
	// OnCheck, if not nil, is called after every convergence check.
	OnCheck func(Progress)
	// Diagnosing, if not nil, is called with true before each evaluation
	// of the chain (a check, or the final report) and with false after it.
	// The evaluation runs on two goroutines on a machine with two or more
	// cores, while the ensemble waits for it: a caller whose own
	// background work would share those cores (a writer formatting the
	// chain on a goroutine of its own, say) can hold that work meanwhile.
	// OnStep is not called between the two calls.
	Diagnosing func(on bool)
}

// Progress is what Run reports at every check.
type Progress struct {
	Steps  int     // ensemble steps so far
	Rate   float64 // steps per second during this Run
	MaxTau float64 // largest autocorrelation time
	MinESS float64 // smallest ESS after burn-in
	// MaxRhat is the largest ensemble R-hat (bulk and tail ESS are left
	// for the Result). At a check where it decides nothing (another
	// criterion fails, or there are none) it is estimated from the checked
	// chain thinned up to 4 times more (keeping at least 128 steps).
	MaxRhat   float64
	Burn      int           // burn-in chosen at this check
	Converged bool          // all criteria hold, at a check that decides (false at the others)
	decides   bool          // the check decided (with criteria; see RunOptions.CheckEvery), for the tests
	ETA       time.Duration // estimated time to convergence; -1 if unknown
}

// progressShare is the largest fraction of a run's time spent on checks
// that decide nothing (a run without criteria).
const progressShare = 0.02

// progressInterval is the least wall time between a run's start or a
// check and a check that decides nothing: such a check only feeds a
// display, which people read at that pace at most (the command redraws
// its bar at most every 200 ms), so a run of a fraction of a second
// spends nothing on them.
const progressInterval = 100 * time.Millisecond

// Status says why Run returned.
type Status int

const (
	// Converged: all criteria held at a check.
	Converged Status = iota + 1
	// MaxStepsReached: MaxSteps steps were taken without convergence.
	MaxStepsReached
	// Interrupted: the context was cancelled; the state after the last
	// completed step can be checkpointed and resumed.
	Interrupted
)

// String describes the status in words, as the command prints it.
func (s Status) String() string {
	switch s {
	case Converged:
		return "converged"
	case MaxStepsReached:
		return "maximum steps reached without convergence"
	case Interrupted:
		return "interrupted"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Result is the outcome of Run.
type Result struct {
	Status Status
	Steps  int // ensemble steps at return
	Burn   int // ensemble steps discarded: samples are from steps > Burn
	Thin   int // chosen thinning
	// Report holds the diagnostics of the cold rung after burn-in, from
	// the chain thinned by floor(tau/10) of the slowest parameter (tau and
	// ESS are in unthinned steps; Report.Steps counts the post-burn-in
	// steps). Parameters mixing more than ten times faster than the slowest
	// get a conservative (too large) tau and too small an ESS.
	Report  Report
	History *History
	// BurnIndex is the first History step after burn-in (History.Param(k,
	// BurnIndex) etc. give the retained samples).
	BurnIndex int
	// LadderFrozenAt is Ensemble.LadderFrozenAt: every History step at or
	// after index LadderFrozenAt-History.Start() used the final ladder Betas.
	LadderFrozenAt int
	Betas          []float64
	SwapAcceptance []float64
	// DiagnosticsTime is the wall time this Run spent on convergence
	// checks and the final report (for timings; it changes no result).
	DiagnosticsTime time.Duration
}

// Run steps e until the criteria hold at a check, MaxSteps is reached or
// ctx is cancelled, keeping the History (also saved by MarshalBinary, so a
// restored ensemble resumes with the same decisions). On cancellation it
// returns after the current step with Status Interrupted and an error
// wrapping ctx.Err(); the Result is valid in every case. With fewer
// ensemble workers than GOMAXPROCS, Run has the final report's buffers
// made on a goroutine of their own while it samples (prepareFinal),
// which changes no result.
func Run(ctx context.Context, e *Ensemble, opt RunOptions) (Result, error) {
	if opt.MaxSteps <= 0 {
		return Result{}, fmt.Errorf("sampler: RunOptions.MaxSteps must be > 0, got %d", opt.MaxSteps)
	}
	if opt.Burn < -1 {
		return Result{}, fmt.Errorf("sampler: RunOptions.Burn must be >= -1, got %d", opt.Burn)
	}
	if opt.Thin < 0 || opt.CheckEvery < 0 || opt.MinSteps < 0 {
		return Result{}, errors.New("sampler: RunOptions.Thin, CheckEvery and MinSteps must be >= 0")
	}
	if opt.CheckEvery == 0 {
		opt.CheckEvery = 500
	}
	if e.hist == nil {
		e.hist = newHistory(e)
	}
	e.hist.reserve(opt.MaxSteps - e.steps)
	t0 := time.Now()
	s0 := e.steps
	var ev evaluation
	c := opt.Until
	decides := c.ESS > 0 || c.TauMultiple > 0 || c.Rhat > 0
	var spent time.Duration
	// Checks decide from step next on (nextDecision), and in between only
	// show progress, within its share of the time.
	next := 0
	if decides && e.hist.n > 0 {
		// Which check decides depends on the one that decided before it:
		// repeat the recorded steps' decisions, so that a resumed run
		// decides as the original did.
		t := time.Now()
		st := stateOf(e)
		for s := e.hist.start + 1; s < e.steps; s++ {
			if isCheckStep(s, opt.CheckEvery) && s >= next {
				diagnosing(opt, true)
				_, _, next = decideAt(st.at(s), opt)
				diagnosing(opt, false)
			}
		}
		spent += time.Since(t)
	}
	reported := false // ev is the final report
	lastCheck := t0
	check := func() bool {
		deciding := decides && e.steps >= next
		if !deciding && (opt.OnCheck == nil || time.Since(lastCheck) < progressInterval ||
			spent > time.Duration(float64(time.Since(t0))*progressShare)) {
			return false // a check nobody reads, too soon, or progress past its share
		}
		t := time.Now()
		defer func() { lastCheck = time.Now() }()
		diagnosing(opt, true)
		if deciding {
			ev, reported, next = decideAt(stateOf(e), opt)
		} else {
			ev = evaluate(e, opt, false)
			ev.converged = false // progress only
		}
		if !reported && (deciding || 2*e.steps >= opt.MaxSteps) {
			// The final report comes at the next deciding check at the
			// earliest, or at MaxSteps: a run without criteria prepares
			// for it from half way, with a settled tau, so that a long
			// run holds the buffers only near its end.
			at := opt.MaxSteps
			if decides {
				at = min(next, at)
			}
			prepareFinal(e, ev, at)
		}
		diagnosing(opt, false)
		spent += time.Since(t)
		if opt.OnCheck != nil {
			p := ev.progress(e, opt, t0, s0)
			p.decides = deciding
			opt.OnCheck(p)
		}
		return reported
	}
	status := MaxStepsReached
	var runErr error
	// A checkpoint written by OnStep at a check step precedes that step's
	// check: repeat it so that a resumed run decides as the original did
	// (evaluate depends only on the history, so repeating it is harmless).
	if e.hist.n > 0 && isCheckStep(e.steps, opt.CheckEvery) && check() {
		status = Converged
	}
	for status != Converged && e.steps < opt.MaxSteps {
		if err := ctx.Err(); err != nil {
			status, runErr = Interrupted, fmt.Errorf("sampler: run interrupted at step %d: %w", e.steps, err)
			break
		}
		if err := e.Step(); err != nil {
			return Result{}, err
		}
		if opt.OnStep != nil {
			if err := opt.OnStep(e); err != nil {
				return Result{}, fmt.Errorf("sampler: step %d: %w", e.steps, err)
			}
		}
		if e.steps < opt.MaxSteps && isCheckStep(e.steps, opt.CheckEvery) && check() {
			status = Converged
		}
	}
	// The final report, if the check that converged did not make it. At
	// MaxSteps it is also the last check.
	if !reported {
		tf := time.Now()
		diagnosing(opt, true)
		ev = evaluate(e, opt, true)
		diagnosing(opt, false)
		spent += time.Since(tf)
		if status == MaxStepsReached {
			if ev.converged {
				status = Converged
			}
			if opt.OnCheck != nil {
				opt.OnCheck(ev.progress(e, opt, t0, s0))
			}
		}
	}
	return Result{
		Status: status, Steps: e.steps, Burn: ev.burn, Thin: ev.thin,
		Report: ev.report, History: e.hist, BurnIndex: ev.burnIndex,
		LadderFrozenAt: e.frozenAt, Betas: e.Betas(), SwapAcceptance: e.SwapAcceptance(),
		DiagnosticsTime: spent,
	}, runErr
}

// diagnosing calls opt.Diagnosing(on) if it is set.
func diagnosing(opt RunOptions, on bool) {
	if opt.Diagnosing != nil {
		opt.Diagnosing(on)
	}
}

// prepareFinal has the diagnostics' buffers prepared (diagPool.prepare)
// for a final report at step at, from the estimate of tau of evaluation
// ev, when the ensemble leaves a core free (fewer workers than
// GOMAXPROCS): the pages are then touched while Run samples instead of
// during the report. The size is that of the report's estimate of tau on
// the whole usable run at the thinning ev's tau asks for, which bounds
// its other buffers; the report's own tau, on that longer chain, is
// mostly larger, its thinning coarser and its buffers smaller. It is
// skipped for reports of under prepareMin values, and when the buffers
// already have the room.
func prepareFinal(e *Ensemble, ev evaluation, at int) {
	tau := ev.report.MaxTau
	if e.workers >= runtime.GOMAXPROCS(0) || !(tau > 0) || math.IsInf(tau, 0) {
		return
	}
	k := finalThinning.interval(tau)
	first := chainState{h: e.hist, frozenAt: e.frozenAt}.first() // stateOf would copy the acceptances
	n := (at - first + k - 1) / k * e.hist.walkers
	if n < prepareMin {
		return
	}
	e.hist.pool().prepare(n)
}

// prepareMin is the number of values per parameter from which Run
// prepares a final report's buffers: about 0.4 MB per worker, which took
// about 0.2 ms to touch.
const prepareMin = 1 << 14

// decideAt is the deciding check at state st: if the check's conditions
// hold (all but R-hat, on the check's thinned chain), the final report at
// this step decides with all of them, so that a run that converges reports
// that it meets its criteria; converged says it did, ev then being that
// final report. Otherwise next is the step from which checks decide again.
func decideAt(st chainState, opt RunOptions) (ev evaluation, converged bool, next int) {
	pool := st.h.pool()
	pool.hold()
	defer pool.release()
	st.gate = true
	ev = st.evaluate(opt, false)
	if ev.converged {
		if ev = st.evaluate(opt, true); ev.converged {
			return ev, true, st.steps + 1
		}
	}
	ev.converged = false
	return ev, false, nextDecision(ev, st.steps, st.first(), opt)
}

// nextDecision returns the first step from which checks decide again
// after the check at step s, of evaluation ev, did not converge: the step
// at which the criteria's estimate (needSteps, post-burn-in steps) says
// they will hold, the burn-in being the larger of this check's and a tenth
// of the usable run, but no later than decisionReach times the usable run
// of step s, and no earlier than the next step or MinSteps. With an R-hat
// criterion alone there is no estimate and every check decides. A run thus
// decides a few times instead of about four times per doubling of its
// length. Early estimates of tau are mostly too small (the walkers have
// not yet spread), which costs a check; one too large makes the run
// sample past the step it would have stopped at, by at most the reach.
func nextDecision(ev evaluation, s, first int, opt RunOptions) int {
	next := s + 1
	if need := ev.needSteps; !math.IsNaN(need) && !math.IsInf(need, 0) {
		at := math.Max(float64(first)+need/0.9, float64(ev.burn)+need)
		reach := first + max(decisionReach*(s-first), opt.CheckEvery)
		next = max(next, int(math.Min(math.Ceil(at), float64(reach))))
	}
	return max(next, opt.MinSteps)
}

// decisionReach bounds how far a decision is put off (nextDecision), as a
// multiple of the usable run at the check.
const decisionReach = 4

// isCheckStep reports whether Run checks convergence after step s: at
// multiples of every up to 8 every, then at multiples of 2^j every for
// s in [2^(j+2), 2^(j+3)) every. It depends only on s, so a resumed run
// checks at the same steps.
func isCheckStep(s, every int) bool {
	const checksBeforeDoubling = 8
	if s <= 0 || s%every != 0 {
		return false
	}
	q := s / every
	m := 1
	for q >= checksBeforeDoubling*m {
		m *= 2
	}
	return q%m == 0
}

type evaluation struct {
	burn, burnIndex, thin int
	report                Report
	converged             bool    // all criteria hold; at a check, all but R-hat (decideAt)
	needSteps             float64 // post-burn steps the criteria need (estimate)
}

// checkBurnMargin is the factor on five autocorrelation times, estimated
// after a tenth of the usable run, in a check's burn-in (checkPass): the
// estimate on the whole usable run, which the final report's rule reads,
// also counts the settling walkers and is larger.
const checkBurnMargin = 1.5

// checkPass returns a check's estimate of tau on the chain it will check
// and that chain's burn-in, or false to apply the rule of the final report
// (evaluate). A check with automatic burn-in estimates tau after a tenth
// of the usable run (tauPass, thinning by at most tau/4: checkThinning),
// and takes as burn-in the larger of that tenth and checkBurnMargin x 5
// tau, the final report's rule with a margin; once the run is some 75 tau
// long the tenth is the larger, and that one estimate is the check's tau.
// Otherwise tau is estimated again, at the same thinning, on the chain
// after the burn-in. This takes one or two passes over the thinned chain
// instead of the final report's refinement on the whole usable run and a
// pass over the chain after burn-in. A fixed burn-in is the start of the
// chain checked. Like the rule it replaces, it depends only on the history
// and options.
func checkPass(st chainState, opt RunOptions) (tauPass, int, bool) {
	h, first := st.h, st.first()
	burn := first + (st.steps-first)/10
	if opt.Burn >= 0 {
		burn = max(opt.Burn, first)
	}
	p := h.tauPass(min(burn-h.start, h.n), checkThinning)
	if math.IsNaN(p.max) || p.taus == nil {
		return p, 0, false
	}
	if b := first + int(math.Ceil(checkBurnMargin*5*p.max)); opt.Burn < 0 && b > burn {
		burn = b
		// At the thinning the estimate asks for, if coarser: the first
		// pass, begun finer on a short run, stops at its start.
		k := max(p.k, checkThinning.interval(p.max))
		if p = h.thinnedTaus(min(burn-h.start, h.n), k, checkThinning.DirectFrom); math.IsNaN(p.max) || p.taus == nil {
			return p, 0, false
		}
	}
	return p, burn, true
}

// rhatShowThin is the further thinning of the chain from which a check
// estimates an R-hat that decides nothing: a check thins to at most tau/4
// (checkThinning), so this spaces the draws about one autocorrelation time
// apart, which keeps most of the information in the chain at a quarter of
// the cost.
const rhatShowThin = 4

// rhatShowSteps is the least number of thinned steps a check's R-hat is
// estimated from, unless the checked chain is shorter: fewer draws,
// though about tau apart, make R-hat - 1 noisier than the display can
// bear.
const rhatShowSteps = 128

// evaluate applies the burn-in, thinning and convergence rules to the
// history; it depends on nothing but the history and options. The
// diagnostics reuse the history's buffers (History.pool), and run the
// parameters concurrently, with results that do not depend on it; the
// pool's helper goroutine runs from the evaluation's start to its end
// (diagPool.hold).
func evaluate(e *Ensemble, opt RunOptions, final bool) evaluation {
	return stateOf(e).evaluate(opt, final)
}

// A chainState is what evaluate reads of an ensemble: the history, the
// step count, the step the ladder froze at, and the cold rung's acceptance
// fractions, which only the report's acceptance entries read.
type chainState struct {
	h        *History
	steps    int
	frozenAt int
	acc      []float64
	// gate marks a deciding check (decideAt): its R-hat, which only shows
	// progress, is left out when its other conditions hold, the final
	// report that follows replacing it.
	gate bool
}

func stateOf(e *Ensemble) chainState {
	return chainState{h: e.hist, steps: e.steps, frozenAt: e.frozenAt, acc: e.AcceptanceFractions(0)}
}

// at returns the state as of step s, recorded in the history (s >
// h.Start()), with the acceptance fractions of now: what evaluate decides
// from it is what it decided at step s.
func (st chainState) at(s int) chainState {
	st.h.pool() // shared by the copy
	h := *st.h
	h.n = s - h.start
	st.h, st.steps = &h, s
	return st
}

// first returns the ensemble step after which samples are usable: the
// later of the ladder's freezing and the history's start.
func (st chainState) first() int { return max(st.frozenAt, st.h.start) }

// evaluate is evaluate of the ensemble in state st.
func (st chainState) evaluate(opt RunOptions, final bool) evaluation {
	h := st.h
	h.pool().hold()
	defer h.pool().release()
	ev := evaluation{thin: max(opt.Thin, 1), needSteps: math.NaN()}
	first := st.first()
	u0 := min(first-h.start, h.n)
	th := checkThinning
	if final {
		th = finalThinning
	}
	var pass *tauPass // a check's estimate of tau on the chain it checks
	if !final {
		if p, burn, ok := checkPass(st, opt); ok {
			pass = &p
			ev.burn = burn
		}
	}
	var k int
	if pass == nil {
		tau0 := h.maxTauThinned(u0, th)
		burn := first
		if opt.Burn >= 0 {
			burn = max(opt.Burn, first)
		} else if !math.IsNaN(tau0) {
			// Five autocorrelation times, but at least a tenth of the
			// usable run (common practice): a walker that started far out
			// can take longer than 5 tau of the settled ensemble to join
			// it.
			burn = first + max(int(math.Ceil(5*tau0)), (st.steps-first)/10)
		}
		ev.burn = burn
		// The diagnostics are computed on the post-burn-in chain thinned
		// by k = floor(tau0/10) for the final report (checks: see
		// checkThinning): for an exponentially decaying autocorrelation
		// k tau(thinned) differs from tau by less than 0.5 %, and the ESS
		// is unchanged, while the work drops k-fold.
		k = th.interval(tau0)
	} else {
		k = pass.k
	}
	ev.burnIndex = min(ev.burn-h.start, h.n)
	n := h.n - ev.burnIndex
	ns := (n + k - 1) / k
	if ns < 8 {
		return ev
	}
	pool := h.pool()
	view := h.view(ev.burnIndex, k, ns)
	// A check's R-hat, which decides nothing (below), from at most every
	// rhatShowThin-th step, keeping rhatShowSteps.
	show := max(1, min(rhatShowThin, ns/rhatShowSteps))
	if final {
		show = 1
	}
	var rep Report
	if pass != nil {
		rep = pool.diagnoseWithTaus(view, st.acc, pass)
		if !st.gate {
			pool.showRhat(&rep, view, show)
		}
	} else {
		rep = pool.diagnose(view, st.acc, nil, final, final, show)
	}
	rep.Steps = n
	rep.MaxTau, rep.MinESS = math.Inf(-1), math.Inf(1)
	for i := range rep.Params {
		p := &rep.Params[i]
		p.Tau *= float64(k)
		p.ESS = float64(n*h.walkers) / p.Tau
		rep.MaxTau = nanMax(rep.MaxTau, p.Tau)
		rep.MinESS = nanMin(rep.MinESS, p.ESS)
	}
	rep.StuckWalkers = StuckWalkers(st.acc, st.steps)
	if opt.Thin == 0 && rep.MaxTau > 0 {
		ev.thin = max(1, int(rep.MaxTau/2))
	}
	c := opt.Until
	need := 0.0
	ok := st.steps >= opt.MinSteps && (c.ESS > 0 || c.TauMultiple > 0 || c.Rhat > 0)
	if c.ESS > 0 {
		ok = ok && rep.MinESS >= c.ESS
		need = math.Max(need, float64(n)*c.ESS/rep.MinESS)
	}
	if c.TauMultiple > 0 {
		ok = ok && float64(n) >= c.TauMultiple*rep.MaxTau
		need = math.Max(need, c.TauMultiple*rep.MaxTau)
	}
	// A check's R-hat only shows progress (showRhat estimated it from the
	// chain thinned up to rhatShowThin times more, which costs a fraction,
	// or, at a deciding check whose other conditions hold, not at all): when
	// the other conditions hold at a check, Run's decision is the final
	// report's (decideAt).
	if c.Rhat > 0 && final {
		ok = ok && rep.MaxRhat <= c.Rhat
	}
	if pass != nil && st.gate && !ok {
		pool.showRhat(&rep, view, show)
	}
	ev.report = rep
	ev.converged = ok
	if c.ESS > 0 || c.TauMultiple > 0 {
		ev.needSteps = need
	}
	return ev
}

func (ev evaluation) progress(e *Ensemble, opt RunOptions, t0 time.Time, s0 int) Progress {
	p := Progress{
		Steps: e.steps, MaxTau: ev.report.MaxTau, MinESS: ev.report.MinESS,
		MaxRhat: ev.report.MaxRhat, Burn: ev.burn, Converged: ev.converged, ETA: -1,
	}
	if dt := time.Since(t0).Seconds(); dt > 0 {
		p.Rate = float64(e.steps-s0) / dt
	}
	have := float64(e.steps - ev.burn)
	if p.Rate > 0 && !math.IsNaN(ev.needSteps) && !math.IsInf(ev.needSteps, 0) {
		rem := math.Max(ev.needSteps-have, 0)
		rem = math.Min(rem, float64(opt.MaxSteps-e.steps))
		p.ETA = time.Duration(rem / p.Rate * float64(time.Second))
	}
	return p
}
