package sampler

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"runtime"
	"sync"
	"time"
)

// Config sets up an Ensemble. The zero value of every field except Walkers
// selects the documented default.
type Config struct {
	// Walkers is the number of walkers per rung: even and at least
	// 2 x the dimension.
	Walkers int
	// Seed derives every random stream of the run.
	Seed uint64
	// Moves is the move mixture; nil means the stretch move with A = 2.
	Moves []WeightedMove
	// Betas is the ladder of inverse temperatures, cold rung first:
	// Betas[0] = 1, strictly decreasing, the last >= 0. nil means {1}.
	// A ladder may also start below 1: it is then one block of a longer
	// ladder, sampled as its own ensemble; rung 0 is still the one whose
	// positions Run records and diagnoses.
	Betas []float64
	// SwapEvery is the number of steps between swap rounds between
	// neighbouring rungs; 0 means 1.
	SwapEvery int
	// AdaptLadder turns on ladder adaptation (Vousden, Farr & Mandel 2016)
	// for the first AdaptSteps steps; the ladder is frozen afterwards.
	AdaptLadder bool
	// AdaptSteps is the length of the adaptation phase in steps; 0 means
	// 1000 when AdaptLadder is set.
	AdaptSteps int
	// Workers is the number of goroutines evaluating densities; 0 means
	// runtime.GOMAXPROCS(0). Results do not depend on it.
	Workers int
	// MinBatch is the least number of walker updates handed to one
	// goroutine; 0 chooses it from the measured cost of a density
	// evaluation so that a batch holds about BatchWork of work. Results do
	// not depend on it.
	MinBatch int
	// Fingerprint identifies the data, model and settings of the run. It is
	// stored in checkpoints and Restore refuses a checkpoint with another.
	Fingerprint string
}

// BatchWork is the density-evaluation time a batch of walker updates
// should hold before it is worth handing to another goroutine: waking a
// parked goroutine costs of order a microsecond, so batches of 20 µs keep
// the hand-off below 10 % (BenchmarkHalfStep).
const BatchWork = 20 * time.Microsecond

// maxInitTries caps the prior draws per walker when looking for a starting
// point of finite density.
const maxInitTries = 1000

// errNoWalkers reports a configuration without walkers.
var errNoWalkers = errors.New("sampler: no walkers")

type rung struct {
	pos   []float64 // walkers x dim
	lp    []float64 // ln prior
	ll    []float64 // ln likelihood
	lpost []float64 // lp + beta ll
	acc   []int64   // accepted proposals per walker
	pcgs  []pcg     // each walker's stream, side by side
	rng   []*rand.Rand
	prop  []float64 // proposal scratch, walkers x dim
	// posRows[w] and propRows[w] are walker w's rows of pos and prop, cut
	// once so that the stretch passes do not cut them at every step.
	posRows, propRows [][]float64
}

// An Ensemble is the state of an affine-invariant ensemble sampler
// (Goodman & Weare 2010) with one ensemble per rung of a parallel-tempering
// ladder. Rung r samples the power posterior
//
//	ln p_r(x) = ln prior(x) + beta_r ln L(x),
//
// with beta = 0 handled exactly (the prior), and a point where either term
// is not finite rejected at every beta. A Step updates the first half of
// the walkers of every rung against the second half of the same rung, then
// the second half against the first (Goodman & Weare 2010, section 5);
// every SwapEvery steps it proposes exchanges between neighbouring rungs
// (parallel tempering, Geyer 1991; see Vousden, Farr & Mandel 2016), whose
// acceptance also drives the optional ladder adaptation.
//
// Every walker of every rung owns a PCG stream, and swaps another, all
// derived from Config.Seed with SplitMix64, so a run is bit-identical for
// any Workers or GOMAXPROCS. Use New (or Restore), then call Step in a
// loop, or Run. An Ensemble is not safe for concurrent use; Step itself
// parallelises the density evaluations.
type Ensemble struct {
	t     Target
	cfg   Config
	dim   int
	nw    int
	moves []WeightedMove
	cumW  []float64
	// stretchA[i] is A when moves[i] is a Stretch (by value), which the
	// update then runs without the Move interface; 0 otherwise.
	stretchA []float64
	lnTab    *lnTable
	// zTab brackets ln z for the stretch move when it is the only move
	// (nil when its scale makes the brackets too wide to be of use).
	zTab *stretchTable
	// uTab brackets ln u for the uniform draws of the stretch move.
	uTab *uTable
	// stretchScr is stretchRange's scratch, one per batch.
	stretchScr []stretchScratch
	betas      []float64
	rungs      []rung
	steps      int
	swapPCG    *rand.PCG
	swapAcc    []int64
	swapTry    []int64
	roundAcc   []float64
	scratch    []float64
	frozenAt   int
	workers    int
	minBatch   int
	hist       *History
	// evals holds one log-likelihood evaluator per batch of an update
	// (see LogLikeMaker): batch b, whichever goroutine runs it, uses
	// evals[b]. It is nil when the target is not a LogLikeMaker: every
	// batch then calls Target.LogLike.
	evals []func(x []float64) float64
	pool  *pool
	wg    sync.WaitGroup
	half  int // the half being updated, read by workers
}

// splitmix64 is the SplitMix64 output function (Steele, Lea & Flood 2014),
// used to derive independent PCG seeds from the run seed and stream indices.
func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// streamSeeds returns the seeds of the PCG stream for (kind, a, b)
// derived from seed.
func streamSeeds(seed uint64, kind, a, b uint64) (uint64, uint64) {
	h := splitmix64(seed ^ splitmix64(kind^splitmix64(a^splitmix64(b))))
	return h, splitmix64(h ^ 0x5851f42d4c957f2d)
}

// streamPCG returns the PCG stream for (kind, a, b) derived from seed.
func streamPCG(seed uint64, kind, a, b uint64) *rand.PCG {
	return rand.NewPCG(streamSeeds(seed, kind, a, b))
}

const (
	streamWalker = 1
	streamSwap   = 2
	streamInit   = 3
)

// New checks cfg, draws the starting positions of every rung from the
// prior (Target.Draw), redrawing points whose density is not finite, and
// returns the ensemble at step 0.
func New(t Target, cfg Config) (*Ensemble, error) {
	e, err := build(t, cfg)
	if err != nil {
		return nil, err
	}
	if err := e.initialise(); err != nil {
		return nil, err
	}
	e.calibrate()
	e.startPool()
	return e, nil
}

// build validates cfg and allocates the state without initialising it.
func build(t Target, cfg Config) (*Ensemble, error) {
	if t == nil {
		return nil, errors.New("sampler: nil Target")
	}
	d := t.Dim()
	if d < 1 {
		return nil, fmt.Errorf("sampler: target dimension must be >= 1, got %d", d)
	}
	if cfg.Walkers <= 0 {
		return nil, fmt.Errorf("%w: Walkers = %d, need an even number >= 2 x dimension = %d", errNoWalkers, cfg.Walkers, 2*d)
	}
	if cfg.Walkers < 2*d {
		return nil, fmt.Errorf("sampler: %d walkers are too few for %d dimensions: need at least 2 x %d = %d", cfg.Walkers, d, d, 2*d)
	}
	if cfg.Walkers%2 != 0 {
		return nil, fmt.Errorf("sampler: Walkers must be even (the ensemble is split in two halves), got %d", cfg.Walkers)
	}
	moves := cfg.Moves
	if moves == nil {
		moves = []WeightedMove{{Move: Stretch{A: 2}, Weight: 1}}
	}
	if len(moves) == 0 {
		return nil, errors.New("sampler: Moves is empty (nil means the stretch move)")
	}
	cum := make([]float64, len(moves))
	total := 0.0
	for i, m := range moves {
		if m.Move == nil {
			return nil, fmt.Errorf("sampler: Moves[%d].Move is nil", i)
		}
		if !(m.Weight > 0) || math.IsInf(m.Weight, 0) {
			return nil, fmt.Errorf("sampler: Moves[%d].Weight must be finite and > 0, got %v", i, m.Weight)
		}
		if v, ok := m.Move.(Validator); ok {
			if err := v.Validate(); err != nil {
				return nil, fmt.Errorf("sampler: Moves[%d]: %w", i, err)
			}
		}
		if need := minOthers(m.Move); cfg.Walkers/2 < need {
			return nil, fmt.Errorf("sampler: Moves[%d] needs %d walkers in each half, have %d", i, need, cfg.Walkers/2)
		}
		total += m.Weight
		cum[i] = total
	}
	for i := range cum {
		cum[i] /= total
	}
	cum[len(cum)-1] = 1
	betas := cfg.Betas
	if betas == nil {
		betas = []float64{1}
	}
	if err := checkLadder(betas); err != nil {
		return nil, err
	}
	betas = append([]float64(nil), betas...)
	if cfg.SwapEvery < 0 {
		return nil, fmt.Errorf("sampler: SwapEvery must be >= 0, got %d", cfg.SwapEvery)
	}
	if cfg.SwapEvery == 0 {
		cfg.SwapEvery = 1
	}
	if cfg.AdaptSteps < 0 {
		return nil, fmt.Errorf("sampler: AdaptSteps must be >= 0, got %d", cfg.AdaptSteps)
	}
	if cfg.AdaptLadder && cfg.AdaptSteps == 0 {
		cfg.AdaptSteps = 1000
	}
	if !cfg.AdaptLadder {
		cfg.AdaptSteps = 0
	}
	if cfg.Workers < 0 {
		return nil, fmt.Errorf("sampler: Workers must be >= 0, got %d", cfg.Workers)
	}
	workers := cfg.Workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if cfg.MinBatch < 0 {
		return nil, fmt.Errorf("sampler: MinBatch must be >= 0, got %d", cfg.MinBatch)
	}
	minBatch := cfg.MinBatch
	nr := len(betas)
	e := &Ensemble{
		t: t, cfg: cfg, dim: d, nw: cfg.Walkers,
		moves: moves, cumW: cum, betas: betas,
		rungs:    make([]rung, nr),
		swapAcc:  make([]int64, max(nr-1, 0)),
		swapTry:  make([]int64, max(nr-1, 0)),
		roundAcc: make([]float64, max(nr-1, 0)),
		scratch:  make([]float64, nr),
		frozenAt: cfg.AdaptSteps,
		workers:  workers,
		minBatch: minBatch,
	}
	e.stretchA = make([]float64, len(moves))
	for i, m := range moves {
		if st, ok := m.Move.(Stretch); ok {
			e.stretchA[i] = st.A
		}
	}
	e.lnTab = newLnTable()
	e.uTab = newUTable()
	if len(moves) == 1 && e.stretchA[0] != 0 {
		e.zTab = newStretchTable(e.stretchA[0])
	}
	e.stretchScr = make([]stretchScratch, max(workers, 1))
	for b := range e.stretchScr {
		hw := cfg.Walkers / 2
		e.stretchScr[b] = stretchScratch{ps: make([]proposal, hw), queue: make([]int, hw), kept: make([]int, hw)}
	}
	if mk, ok := t.(LogLikeMaker); ok {
		e.evals = make([]func([]float64) float64, max(workers, 1))
		for b := range e.evals {
			f, err := mk.NewLogLike()
			if err != nil {
				return nil, fmt.Errorf("sampler: log-likelihood evaluator %d: %w", b, err)
			}
			e.evals[b] = f
		}
	}
	nw := cfg.Walkers
	for r := range e.rungs {
		g := &e.rungs[r]
		g.pos = make([]float64, nw*d)
		g.prop = make([]float64, nw*d)
		g.lp = make([]float64, nw)
		g.ll = make([]float64, nw)
		g.lpost = make([]float64, nw)
		g.acc = make([]int64, nw)
		g.posRows, g.propRows = make([][]float64, nw), make([][]float64, nw)
		for w := range nw {
			g.posRows[w] = g.pos[w*d : w*d+d : w*d+d]
			g.propRows[w] = g.prop[w*d : w*d+d : w*d+d]
		}
		g.pcgs = make([]pcg, nw)
		g.rng = make([]*rand.Rand, nw)
		for w := range nw {
			// rand.NewPCG(seed1, seed2) starts in the state (seed1, seed2).
			g.pcgs[w].hi, g.pcgs[w].lo = streamSeeds(cfg.Seed, streamWalker, uint64(r), uint64(w))
			g.rng[w] = rand.New(&g.pcgs[w])
		}
	}
	e.swapPCG = streamPCG(cfg.Seed, streamSwap, 0, 0)
	return e, nil
}

// density evaluates ln prior and ln likelihood at x with batch b's
// evaluator. ok is false when either is not finite (the likelihood is not
// evaluated when the prior is not).
func (e *Ensemble) density(b int, x []float64) (lp, ll float64, ok bool) {
	lp = e.t.LogPrior(x)
	if !finite(lp) {
		return lp, math.Inf(-1), false
	}
	if e.evals == nil {
		ll = e.t.LogLike(x)
	} else {
		ll = e.evals[b](x)
	}
	if !finite(ll) {
		return lp, ll, false
	}
	return lp, ll, true
}

// finite reports whether v is neither infinite nor NaN.
func finite(v float64) bool { return math.Abs(v) <= math.MaxFloat64 }

// lnPost returns lp + beta ll, treating beta = 0 exactly.
func lnPost(beta, lp, ll float64) float64 {
	if beta == 0 {
		return lp
	}
	return lp + beta*ll
}

func (e *Ensemble) initialise() error {
	d := e.dim
	failed := 0
	for r := range e.rungs {
		g := &e.rungs[r]
		for w := range e.nw {
			rng := rand.New(streamPCG(e.cfg.Seed, streamInit, uint64(r), uint64(w)))
			x := g.pos[w*d : w*d+d]
			ok := false
			for range maxInitTries {
				e.t.Draw(rng, x)
				lp, ll, fine := e.density(0, x)
				if fine {
					g.lp[w], g.ll[w] = lp, ll
					g.lpost[w] = lnPost(e.betas[r], lp, ll)
					ok = true
					break
				}
			}
			if !ok {
				failed++
			}
		}
	}
	if failed > 0 {
		return fmt.Errorf("sampler: initialisation: %d of %d walkers found no prior draw with finite log prior and log likelihood in %d tries each",
			failed, e.nw*len(e.rungs), maxInitTries)
	}
	return nil
}

// calibrate chooses the batch size from the time of one density
// evaluation at each cold-rung walker, unless Config.MinBatch fixes it.
// Batching never changes results, only speed.
func (e *Ensemble) calibrate() {
	if e.cfg.MinBatch > 0 || e.workers <= 1 {
		e.minBatch = max(e.cfg.MinBatch, 1)
		return
	}
	d := e.dim
	g := &e.rungs[0]
	t0 := time.Now()
	for w := range e.nw {
		e.density(0, g.pos[w*d:w*d+d])
	}
	per := time.Since(t0) / time.Duration(e.nw)
	e.minBatch = max(1, int(BatchWork/max(per, time.Nanosecond)))
}

// Step advances every rung by one ensemble step (both halves) and, every
// SwapEvery steps, proposes swaps between neighbouring rungs; during the
// adaptation phase it then adapts the ladder. If Run has started a history,
// the new state is recorded.
func (e *Ensemble) Step() error {
	for h := range 2 {
		e.updateHalf(h)
	}
	e.steps++
	if len(e.rungs) > 1 && e.steps%e.cfg.SwapEvery == 0 {
		e.swap()
		if e.steps <= e.cfg.AdaptSteps {
			adaptLadder(e.betas, e.roundAcc, e.scratch, e.steps)
			for r := range e.rungs {
				g := &e.rungs[r]
				for w := range e.nw {
					g.lpost[w] = lnPost(e.betas[r], g.lp[w], g.ll[w])
				}
			}
		}
	}
	if e.hist != nil {
		e.hist.record(e)
	}
	return nil
}

// updateHalf updates walkers of half h in every rung against the other half.
func (e *Ensemble) updateHalf(h int) {
	hw := e.nw / 2
	total := hw * len(e.rungs)
	nb := min(e.workers, (total+e.minBatch-1)/e.minBatch)
	e.half = h
	if nb <= 1 || e.pool == nil {
		e.updateRange(0, 0, total)
		return
	}
	size := (total + nb - 1) / nb
	e.wg.Add(nb - 1)
	for b := 1; b < nb; b++ {
		lo := b * size
		hi := min(lo+size, total)
		e.pool.jobs <- job{e: e, b: b, lo: lo, hi: hi}
	}
	e.updateRange(0, 0, min(size, total))
	e.wg.Wait()
}

// updateRange updates flattened (rung, walker-of-half) indices [lo, hi) as
// batch b: index j is walker h*hw + j%hw of rung j/hw, with hw = Walkers/2
// and h the half being updated.
func (e *Ensemble) updateRange(b, lo, hi int) {
	hw := e.nw / 2
	d := e.dim
	h := e.half
	o := (1 - h) * hw
	c := float64(d - 1)
	for r := lo / hw; r*hw < hi; r++ {
		g := &e.rungs[r]
		beta := e.betas[r]
		others := g.pos[o*d : (o+hw)*d]
		w0, w1 := h*hw+max(lo-r*hw, 0), h*hw+min(hi-r*hw, hw)
		if len(e.cumW) == 1 && e.stretchA[0] != 0 {
			e.stretchRange(b, g, beta, g.posRows[o:o+hw], w0, w1)
			continue
		}
		for w := w0; w < w1; w++ {
			p := &g.pcgs[w]
			k := 0
			if len(e.cumW) > 1 {
				u := pcgFloat64(p)
				for i, cw := range e.cumW {
					if u < cw {
						k = i
						break
					}
				}
			}
			x := g.pos[w*d : w*d+d]
			y := g.prop[w*d : w*d+d]
			var lp, ll, post float64
			var acc int // 1 if the proposal is accepted
			if a := e.stretchA[k]; a != 0 {
				z := stretchPCG(p, a, x, others, hw, y)
				var ok bool
				if lp, ll, ok = e.density(b, y); !ok {
					continue
				}
				post = lnPost(beta, lp, ll)
				acc = decideStretch(e.lnTab, p, c, z, post, g.lpost[w])
			} else {
				lnf := e.moves[k].Move.Propose(g.rng[w], x, others, hw, y)
				var ok bool
				if lp, ll, ok = e.density(b, y); !ok {
					continue
				}
				post = lnPost(beta, lp, ll)
				acc = b2i(metropolis(e.lnTab, p, lnf+post-g.lpost[w]))
			}
			// Keep the proposal where acc = 1, without a branch: the
			// outcome is a coin flip that a branch predictor would miss
			// half the time.
			m := -uint64(acc)
			for i, v := range y {
				x[i] = pick(m, x[i], v)
			}
			g.lp[w] = pick(m, g.lp[w], lp)
			g.ll[w] = pick(m, g.ll[w], ll)
			g.lpost[w] = pick(m, g.lpost[w], post)
			g.acc[w] += int64(acc)
		}
	}
}

// stretchRange updates walkers [w0, w1) of rung g with the stretch move
// Stretch{A: e.stretchA[0]}, the only move. It is the walker update of
// updateRange with stretchPCG, density and decideStretch written out, as
// passes over the walkers: the draws, the proposals and their densities
// (stretchPropose); the decisions that need no u (stretchFirst); for the
// walkers whose ln A is known to be negative, the draw of u and the last
// decision (stretchSecond); and the update of the accepted walkers
// (keepAccepted). Each pass is its own function with a short loop whose
// iterations the processor overlaps, and keeps its few variables in
// registers. Walkers of one half depend only on the other half, and each
// keeps its own order of draws, so the passes change nothing. The
// outcomes are coin flips that a branch predictor would miss often, so
// the walkers for the last two passes are listed without a branch on
// them.
func (e *Ensemble) stretchRange(b int, g *rung, beta float64, others [][]float64, w0, w1 int) {
	d := e.dim
	sc := &e.stretchScr[b]
	ps := sc.ps[:w1-w0]
	pcgs := g.pcgs[w0:w1]
	pos, prop := g.posRows[w0:w1], g.propRows[w0:w1]
	var ev func([]float64) float64
	if e.evals != nil {
		ev = e.evals[b]
	}
	stretchPropose(e.t, ev, pcgs, e.stretchA[0], pos, prop, others, ps)
	c := float64(d - 1)
	lpost := g.lpost[w0:w1]
	queue, kept := stretchFirst(e.lnTab, e.zTab, pcgs, c, beta, lpost, ps, sc.queue, sc.kept)
	kept = stretchSecond(e.uTab, pcgs, c, lpost, ps, queue, kept)
	keepAccepted(pos, prop, g.lp[w0:w1], g.ll[w0:w1], lpost, g.acc[w0:w1], ps, kept)
}

// A proposal is what the passes of stretchRange hand on for one walker.
type proposal struct {
	z      float64 // the stretch factor
	k      int     // the interval of z's uniform draw in a stretchTable
	lp, ll float64 // ln prior and ln likelihood of the proposal
	post   float64 // lnPost of the proposal
	lo, hi float64 // bracket of ln A
	ok     bool    // lp and ll are finite
}

// stretchPropose takes Stretch.Propose's draws from each walker's PCG, as
// pcgIntN and pcgFloat64 take them: the partner j among the len(others)
// walkers (rows) of the other half and the uniform u. It writes the
// proposal y = x_j + z (x - x_j), z = stretchZ(a, u), of walker i (row
// pos[i]) into prop[i], and into ps z, u's interval in a stretchTable,
// and the densities of y as Ensemble.density computes them, with the
// evaluator ev, or t.LogLike if ev is nil. The density calls go through
// an interface, so the loop keeps little in registers anyway: the draws
// and the proposal take its slack.
func stretchPropose(t Target, ev func([]float64) float64, pcgs []pcg, a float64, pos, prop, others [][]float64, ps []proposal) {
	n := len(others)
	un := uint64(n)
	pow2 := un&(un-1) == 0
	pcgs, pos, prop = pcgs[:len(ps)], pos[:len(ps)], prop[:len(ps)]
	for i := range ps {
		pr := &ps[i]
		var j int
		var v uint64
		if pow2 {
			// Both draws from the stream's state at once (pcg.next2),
			// the partner by masking as pcgIntN does.
			s := pcgs[i]
			s1, s2 := s.next(), s.next2()
			j = int(s1.value() & (un - 1))
			v = s2.value()
			pcgs[i] = s2
		} else {
			j = pcgIntN(&pcgs[i], n)
			v = pcgs[i].Uint64()
		}
		z := stretchZ(a, unitFloat(v))
		pr.z, pr.k = z, zBin(v)
		y := prop[i]
		stretchTo(y, pos[i], others[j], z)
		lp := t.LogPrior(y)
		ll := math.Inf(-1) // not evaluated where the prior is not finite
		if finite(lp) {
			if ev == nil {
				ll = t.LogLike(y)
			} else {
				ll = ev(y)
			}
		}
		pr.lp, pr.ll, pr.ok = lp, ll, finite(ll)
	}
}

// stretchFirst sets post = lnPost(beta, lp, ll) of each proposal and takes
// the decisions of decideStretch that need no u, from a bracket of ln z
// (zt's, or lnTable.approx's where zt is nil): where lnA >= 0 for sure
// the walker is accepted and listed in kept; where lnA < 0 for sure the
// bracket [lo, hi] of lnA is recorded and the walker queued for
// stretchSecond; where neither is sure acceptStretch decides. Walkers
// whose density is not finite (ok false) are rejected without a draw. It
// returns the queue and the list, in the memory of queue and kept.
func stretchFirst(tab *lnTable, zt *stretchTable, pcgs []pcg, c, beta float64, lpost []float64, ps []proposal, queue, kept []int) ([]int, []int) {
	n := len(ps)
	pcgs, lpost, queue, kept = pcgs[:n], lpost[:n], queue[:n], kept[:n]
	nq, nk := 0, 0
	for i := range ps {
		pr := &ps[i]
		post, lpo, z := lnPost(beta, pr.lp, pr.ll), lpost[i], pr.z
		// A bracket [zlo, zhi] of math.Log(z).
		var zlo, zhi float64
		if zt != nil {
			k := pr.k & (1<<zTabBits - 1)
			zlo, zhi = zt.ln[k]-zt.slack, zt.ln[k+1]+zt.slack
		} else {
			// NaN, which fails every comparison, where approx gives no
			// bracket.
			zl := tab.approx(z)
			if !normalPos(z) {
				zl = math.NaN()
			}
			zlo, zhi = zl-lnTol, zl+lnTol
		}
		lo := float64(float64(c*zlo)+post) - lpo
		hi := float64(float64(c*zhi)+post) - lpo
		ok := b2i(pr.ok)
		yes := b2i(lo >= 0) & ok
		need := b2i(hi < 0) & ok
		if yes|need|(ok^1) == 0 {
			yes = b2i(acceptStretch(tab, &pcgs[i], c, z, post, lpo))
		}
		pr.post, pr.lo, pr.hi = post, lo, hi
		queue[nq] = i
		nq += need
		kept[nk] = i
		nk += yes
	}
	return queue[:nq], kept[:nk]
}

// stretchSecond finishes decideStretch for the queued walkers: it draws u
// and decides whether ln u < lnA, from ut's bracket of ln u where that is
// sure and from math.Log otherwise, and appends the accepted walkers to
// kept, which it returns.
func stretchSecond(ut *uTable, pcgs []pcg, c float64, lpost []float64, ps []proposal, queue, kept []int) []int {
	nk := len(kept)
	kept = kept[:nk+len(queue)]
	for _, i := range queue {
		pr := &ps[i]
		v := pcgs[i].Uint64()
		ulo, uhi := ut.bracket(v)
		yes := b2i(uhi < pr.lo)
		if yes|b2i(ulo >= pr.hi) == 0 {
			yes = b2i(math.Log(unitFloat(v)) < float64(float64(c*math.Log(pr.z))+pr.post)-lpost[i])
		}
		kept[nk] = i
		nk += yes
	}
	return kept[:nk]
}

// keepAccepted moves each walker i listed in kept to its proposal, with
// its densities, and counts the acceptance.
func keepAccepted(pos, prop [][]float64, lp, ll, lpost []float64, acc []int64, ps []proposal, kept []int) {
	n := len(ps)
	pos, prop, lp, ll, lpost, acc = pos[:n], prop[:n], lp[:n], ll[:n], lpost[:n], acc[:n]
	for _, i := range kept {
		pr := &ps[i]
		// A loop rather than copy, which calls memmove: d is small.
		x, y := pos[i], prop[i]
		x = x[:len(y)]
		for k, v := range y {
			x[k] = v
		}
		lp[i], ll[i], lpost[i] = pr.lp, pr.ll, pr.post
		acc[i]++
	}
}

// stretchScratch holds what the passes of stretchRange hand on, per
// walker of a batch.
type stretchScratch struct {
	ps          []proposal
	queue, kept []int
}

// unitFloat is the float64 in [0, 1) that math/rand/v2's Float64 makes of
// the draw v: float64(v<<11>>11) / 2^53.
func unitFloat(v uint64) float64 { return float64(v<<11>>11) / (1 << 53) }

// b2i is 1 for true and 0 for false.
func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// pick returns b where the mask m is all ones and a where it is zero.
func pick(m uint64, a, b float64) float64 {
	ab := math.Float64bits(a)
	return math.Float64frombits(ab ^ (ab^math.Float64bits(b))&m)
}

// decideStretch is b2i(acceptStretch(tab, p, c, z, post, lpost)) with, in
// the common case, no branch on the outcome: the bracket of ln u is
// computed from a copy of p before it is known whether u is needed, and p
// then advances past u only if it is. The rare cases that the brackets
// leave open go to acceptStretch.
func decideStretch(tab *lnTable, p *pcg, c, z, post, lpost float64) int {
	zlo, zhi, zok := tab.bracket(z)
	q := *p
	u := pcgFloat64(&q)
	ulo, uhi, uok := tab.bracket(u)
	lo := float64(float64(c*zlo)+post) - lpost
	hi := float64(float64(c*zhi)+post) - lpost
	yes := b2i(lo >= 0) // lnA >= 0: accepted, u not drawn
	need := b2i(hi < 0) // lnA < 0: u drawn
	yesU := b2i(uhi < lo)
	noU := b2i(ulo >= hi)
	if b2i(zok)&b2i(uok)&(yes|need)&(yes|yesU|noU) == 0 {
		return b2i(acceptStretch(tab, p, c, z, post, lpost))
	}
	*p = [2]pcg{*p, q}[need]
	return yes | yesU
}

// metropolis is the Metropolis–Hastings test of a proposal with log
// acceptance ratio lnA: false for NaN, true for lnA >= 0, and otherwise
// ln u < lnA for u = rand.New(p).Float64(), the only draw. ln u is bracketed
// first (lnTable.bracket), and computed only when the bracket straddles
// lnA.
func metropolis(tab *lnTable, p *pcg, lnA float64) bool {
	if math.IsNaN(lnA) {
		return false
	}
	if lnA >= 0 {
		return true
	}
	u := pcgFloat64(p)
	if lo, hi, ok := tab.bracket(u); ok {
		if hi < lnA {
			return true
		}
		if lo >= lnA {
			return false
		}
	}
	return math.Log(u) < lnA
}

// acceptStretch decides a stretch proposal exactly as metropolis does with
//
//	lnA = (float64(c * math.Log(z)) + post) - lpost,
//
// c = d - 1 (Goodman & Weare 2010, eq. 11), but computes math.Log(z) only
// when the decision depends on more than the bracket of ln z tells. Each
// of the three roundings above is a non-decreasing function of its
// operand, so putting the ends of the bracket in place of math.Log(z)
// brackets lnA; where both ends are not NaN, lnA is not NaN either (a NaN
// needs equal infinities in the last subtraction, and those reach one
// end). The result, and the draws taken from p, are those of
// metropolis(tab, p, lnA).
func acceptStretch(tab *lnTable, p *pcg, c, z, post, lpost float64) bool {
	zlo, zhi, ok := tab.bracket(z)
	if !ok {
		return metropolis(tab, p, float64(float64(c*math.Log(z))+post)-lpost)
	}
	lo := float64(float64(c*zlo)+post) - lpost
	hi := float64(float64(c*zhi)+post) - lpost
	switch {
	case lo >= 0: // lnA >= lo >= 0
		return true
	case hi < 0: // lnA <= hi < 0: one draw
		u := pcgFloat64(p)
		if ulo, uhi, ok := tab.bracket(u); ok {
			if uhi < lo {
				return true
			}
			if ulo >= hi {
				return false
			}
		}
		return math.Log(u) < float64(float64(c*math.Log(z))+post)-lpost
	}
	return metropolis(tab, p, float64(float64(c*math.Log(z))+post)-lpost)
}

// zTabBits is the base-2 logarithm of the number of intervals of u in a
// stretchTable.
const zTabBits = 10

// zBin is the interval of a stretchTable that holds unitFloat(v): the top
// zTabBits of the 53 bits that make the float.
func zBin(v uint64) int { return int(v << 11 >> (64 - zTabBits)) }

// A stretchTable brackets math.Log(z) for the stretch factors
// z = stretchZ(a, u) of one scale a by the interval of u, without
// computing z's logarithm: for u in [k, k+1) / 2^zTabBits,
//
//	ln[k] - slack <= math.Log(stretchZ(a, u)) <= ln[k+1] + slack.
//
// stretchZ is a non-decreasing function of u (each of its roundings is a
// non-decreasing function of its operand, and a > 1), and so is the
// natural logarithm, so ln z lies between its values at the ends of the
// interval; math.Log errs by less than 1 ulp (see lnTol), at most
// 2^-52 |ln z| <= 2^-52 m with m the largest |ln[k]|, both at z and at
// the ends, and slack = 1e-9 (1 + m) covers that many times over. The
// intervals are 1/1024 of u wide: the brackets are at most
// 2 ln(1 + (a-1)/1024) wide (the first), against 2 lnTol for lnTable,
// which leaves a few decisions in a thousand to math.Log but needs no
// estimate of ln z.
type stretchTable struct {
	ln    [1<<zTabBits + 1]float64 // ln[k] = math.Log(stretchZ(a, k / 2^zTabBits))
	slack float64
}

// newStretchTable returns the stretchTable of scale a, or nil if its widest
// bracket, the first, is wider than 1e-2 (a above about 6), or a bracket
// is not finite.
func newStretchTable(a float64) *stretchTable {
	t := &stretchTable{}
	m := 0.0
	for k := range t.ln {
		t.ln[k] = math.Log(stretchZ(a, float64(k)/(1<<zTabBits)))
		if !finite(t.ln[k]) {
			return nil
		}
		m = max(m, math.Abs(t.ln[k]))
	}
	if !(t.ln[1]-t.ln[0] <= 1e-2) {
		return nil
	}
	t.slack = 1e-9 * (1 + m)
	return t
}

// uTabBits is the base-2 logarithm of the number of intervals of a
// mantissa in a uTable.
const uTabBits = 10

// A uTable brackets math.Log(u) for u = unitFloat(v) from the bits of v
// alone. With m = v mod 2^53 > 0 (u = m 2^-53) and e = bits.Len64(m),
// m = f 2^(e-1) with f in [1, 2) whose leading uTabBits bits after the
// point, i, put it in [1 + i/2^uTabBits, 1 + (i+1)/2^uTabBits); so
//
//	ln u = (e - 54) ln 2 + ln f,  pow[e] + mant[i] - slack <= math.Log(u) <= pow[e] + mant[i+1] + slack,
//
// since math.Log errs by less than 1 ulp (see lnTol): at most
// 2^-52 x 37 = 8.2e-15 for |ln u| <= 53 ln 2, as do the entries, and the
// sums round by less;
// slack = 1e-9 covers that many times over. pow[0] is NaN, which fails
// every comparison: u = 0 has no logarithm to bracket. The brackets are
// at most ln(1 + 2^-uTabBits) < 1e-3 wide.
type uTable struct {
	pow   [64]float64
	mant  [1<<uTabBits + 1]float64
	slack float64
}

// newUTable computes the table.
func newUTable() *uTable {
	t := &uTable{slack: 1e-9}
	t.pow[0] = math.NaN()
	for e := 1; e < len(t.pow); e++ {
		t.pow[e] = float64(e-54) * math.Ln2
	}
	for i := range t.mant {
		t.mant[i] = math.Log(1 + float64(i)/(1<<uTabBits))
	}
	return t
}

// bracket returns lo <= math.Log(unitFloat(v)) <= hi; both are NaN when
// unitFloat(v) = 0.
func (t *uTable) bracket(v uint64) (lo, hi float64) {
	m := v << 11 >> 11
	e := bits.Len64(m)
	i := m << (64 - e) << 1 >> (64 - uTabBits)
	p := t.pow[e&63]
	return p + t.mant[i] - t.slack, p + t.mant[i+1] + t.slack
}

// lnTol bounds |lnTable.approx(x) - math.Log(x)| with room to spare:
// 2.0e-8 of series truncation (see lnTable.approx), a few 1e-13 of
// rounding in the estimate, and under 1 ulp (at most 1.2e-13 for any
// float64) of math.Log's own error (stated in the standard library's
// source, math/log.go).
const lnTol = 1e-6

// lnTable holds 1/c and math.Log(c) at the midpoints c = 1 + (i + 1/2)/128
// of the 128 intervals [1 + i/128, 1 + (i+1)/128) of a float64 mantissa;
// it brackets natural logarithms for the Metropolis–Hastings test.
type lnTable [128][2]float64

// newLnTable computes the table.
func newLnTable() *lnTable {
	var t lnTable
	for i := range t {
		c := 1 + (float64(i)+0.5)/128
		t[i] = [2]float64{1 / c, math.Log(c)}
	}
	return &t
}

// bracket returns lo <= math.Log(x) <= hi with hi - lo = 2 lnTol for
// positive, finite, normal x; ok is false for any other x.
func (t *lnTable) bracket(x float64) (lo, hi float64, ok bool) {
	if !normalPos(x) {
		return 0, 0, false
	}
	l := t.approx(x)
	return l - lnTol, l + lnTol, true
}

// approx estimates ln x for x with normalPos(x), without a division. With
// x = m 2^k, m in [1, 2), c the midpoint of m's interval and r = m/c - 1,
// |r| <= 1/256 and
//
//	ln x = k ln 2 + ln c + r - r^2/2 + R,  |R| <= |r|^3 / (3 (1 - |r|)) < 2.0e-8
//
// (the alternating Taylor series of ln(1 + r)). m (1/c) - 1 differs from
// r by a relative 2.3e-16 of 1 + r: the subtraction is exact (Sterbenz).
func (t *lnTable) approx(x float64) float64 {
	bx := math.Float64bits(x)
	m := math.Float64frombits(bx&(1<<52-1) | 1023<<52)
	e := &t[bx>>45&127]
	r := m*e[0] - 1
	return float64(int(bx>>52)-1023)*math.Ln2 + (e[1] + (r - 0.5*r*r))
}

// normalPos reports whether x is positive, finite and normal.
func normalPos(x float64) bool { return math.Float64bits(x)>>52-1 < 0x7fe }

// swap proposes exchanges between walker i of rung k and walker i of rung
// k+1 for every i, hottest pair first, with acceptance
// min(1, exp((beta_k - beta_{k+1}) (lnL_{k+1} - lnL_k))).
func (e *Ensemble) swap() {
	d := e.dim
	for k := len(e.rungs) - 2; k >= 0; k-- {
		a, b := &e.rungs[k], &e.rungs[k+1]
		db := e.betas[k] - e.betas[k+1]
		n := 0
		for w := range e.nw {
			lnA := db * (b.ll[w] - a.ll[w])
			if lnA >= 0 || e.swapBelow(lnA) {
				xa, xb := a.pos[w*d:w*d+d], b.pos[w*d:w*d+d]
				for i := range d {
					xa[i], xb[i] = xb[i], xa[i]
				}
				a.lp[w], b.lp[w] = b.lp[w], a.lp[w]
				a.ll[w], b.ll[w] = b.ll[w], a.ll[w]
				a.lpost[w] = lnPost(e.betas[k], a.lp[w], a.ll[w])
				b.lpost[w] = lnPost(e.betas[k+1], b.lp[w], b.ll[w])
				n++
			}
		}
		e.swapAcc[k] += int64(n)
		e.swapTry[k] += int64(e.nw)
		e.roundAcc[k] = float64(n) / float64(e.nw)
	}
}

// swapBelow draws u from the swap stream and reports whether
// math.Log(u) < lnA, taking ln u from the bracket of uTab where that
// decides: the same draw (rand.Rand's Float64 is unitFloat of one Uint64)
// and the same decision as math.Log(rand.New(e.swapPCG).Float64()) < lnA.
func (e *Ensemble) swapBelow(lnA float64) bool {
	v := e.swapPCG.Uint64()
	lo, hi := e.uTab.bracket(v)
	if hi < lnA {
		return true
	}
	if lo >= lnA {
		return false
	}
	return math.Log(unitFloat(v)) < lnA
}

// Steps returns the number of steps taken.
func (e *Ensemble) Steps() int { return e.steps }

// Rungs returns the number of rungs of the ladder.
func (e *Ensemble) Rungs() int { return len(e.rungs) }

// Walkers returns the number of walkers per rung.
func (e *Ensemble) Walkers() int { return e.nw }

// Dim returns the dimension of the target.
func (e *Ensemble) Dim() int { return e.dim }

// Beta returns the current inverse temperature of rung r (0 is the cold
// rung, beta = 1).
func (e *Ensemble) Beta(r int) float64 { return e.betas[r] }

// Betas returns a copy of the current ladder, cold rung first.
func (e *Ensemble) Betas() []float64 { return append([]float64(nil), e.betas...) }

// LadderFrozenAt returns the step count after which the ladder no longer
// changes: samples from steps > LadderFrozenAt() share one fixed ladder.
// It is 0 when the ladder is not adapted.
func (e *Ensemble) LadderFrozenAt() int { return e.frozenAt }

// Positions returns the positions of rung r, walkers x dim row-major. The
// slice is a read-only view valid until the next Step.
func (e *Ensemble) Positions(r int) []float64 { return e.rungs[r].pos }

// LnPrior returns ln prior of each walker of rung r (read-only view).
func (e *Ensemble) LnPrior(r int) []float64 { return e.rungs[r].lp }

// LnLike returns ln likelihood of each walker of rung r (read-only view).
func (e *Ensemble) LnLike(r int) []float64 { return e.rungs[r].ll }

// LnPost returns ln prior + beta ln likelihood of each walker of rung r
// (read-only view).
func (e *Ensemble) LnPost(r int) []float64 { return e.rungs[r].lpost }

// AcceptanceFractions returns, per walker of rung r, the fraction of
// proposals accepted so far (zeros before the first step).
func (e *Ensemble) AcceptanceFractions(r int) []float64 {
	g := &e.rungs[r]
	f := make([]float64, e.nw)
	if e.steps == 0 {
		return f
	}
	for w, a := range g.acc {
		f[w] = float64(a) / float64(e.steps)
	}
	return f
}

// SwapAcceptance returns, for each pair of neighbouring rungs (r, r+1), the
// fraction of proposed swaps accepted so far.
func (e *Ensemble) SwapAcceptance() []float64 {
	f := make([]float64, len(e.swapAcc))
	for k := range f {
		if e.swapTry[k] > 0 {
			f[k] = float64(e.swapAcc[k]) / float64(e.swapTry[k])
		}
	}
	return f
}

// Close stops the worker goroutines; later Steps run on the calling
// goroutine only. Unreferenced ensembles are cleaned up automatically, so
// calling Close is optional.
func (e *Ensemble) Close() {
	if e.pool != nil {
		e.pool.stop()
		e.pool = nil
	}
}

// A job is a contiguous batch of walker updates.
type job struct {
	e         *Ensemble
	b, lo, hi int
}

// pool is a set of long-lived goroutines so that Step does not allocate.
// The goroutines hold no reference to the Ensemble between jobs, so an
// unreferenced Ensemble is collected and its cleanup stops them.
type pool struct {
	jobs chan job
	once sync.Once
}

func (p *pool) stop() { p.once.Do(func() { close(p.jobs) }) }

func (e *Ensemble) startPool() {
	if e.workers <= 1 {
		return
	}
	p := &pool{jobs: make(chan job, e.workers)}
	for range e.workers - 1 {
		go func(jobs <-chan job) {
			for j := range jobs {
				j.e.updateRange(j.b, j.lo, j.hi)
				j.e.wg.Done()
			}
		}(p.jobs)
	}
	e.pool = p
	runtime.AddCleanup(e, func(p *pool) { p.stop() }, p)
}
