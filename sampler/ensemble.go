package sampler

import (
	"errors"
	"fmt"
	"math"
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
	pcg   []*rand.PCG
	rng   []*rand.Rand
	prop  []float64 // proposal scratch, walkers x dim
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
	// stretchScr is stretchRange's scratch, one per batch.
	stretchScr []stretchScratch
	betas      []float64
	rungs      []rung
	steps      int
	swapPCG    *rand.PCG
	swapRng    *rand.Rand
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

// streamPCG returns the PCG stream for (kind, a, b) derived from seed.
func streamPCG(seed uint64, kind, a, b uint64) *rand.PCG {
	h := splitmix64(seed ^ splitmix64(kind^splitmix64(a^splitmix64(b))))
	return rand.NewPCG(h, splitmix64(h^0x5851f42d4c957f2d))
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
	e.stretchScr = make([]stretchScratch, max(workers, 1))
	for b := range e.stretchScr {
		hw := cfg.Walkers / 2
		f := func() []float64 { return make([]float64, hw) }
		e.stretchScr[b] = stretchScratch{j: make([]int, hw), z: f(), zl: f(), lp: f(), ll: f(),
			ok: make([]bool, hw), lo: f(), hi: f(), post: f(), queue: make([]int, hw), acc: make([]int, hw)}
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
		g.pcg = make([]*rand.PCG, nw)
		g.rng = make([]*rand.Rand, nw)
		for w := range nw {
			g.pcg[w] = streamPCG(cfg.Seed, streamWalker, uint64(r), uint64(w))
			g.rng[w] = rand.New(g.pcg[w])
		}
	}
	e.swapPCG = streamPCG(cfg.Seed, streamSwap, 0, 0)
	e.swapRng = rand.New(e.swapPCG)
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
			e.stretchRange(b, g, beta, others, w0, w1)
			continue
		}
		for w := w0; w < w1; w++ {
			p := g.pcg[w]
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
// passes over the walkers that each do one kind of work (each its own
// function, so that the compiler keeps its few variables in registers):
// the draws of the proposals; the proposals and the estimates of ln z; the
// densities; the decisions that need no u; for the walkers whose ln A is
// known to be negative, the draw of u and the last decision; and the
// update of the accepted walkers. Walkers of one half depend only on the
// other half, and each keeps its own order of draws, so the passes change
// nothing. The outcomes are coin flips that a branch predictor would miss
// often, so the walkers for the last two passes are queued without a
// branch on them.
func (e *Ensemble) stretchRange(b int, g *rung, beta float64, others []float64, w0, w1 int) {
	d := e.dim
	nw := w1 - w0
	sc := &e.stretchScr[b]
	js, zs, zls := sc.j[:nw], sc.z[:nw], sc.zl[:nw]
	lps, lls, oks := sc.lp[:nw], sc.ll[:nw], sc.ok[:nw]
	los, his, posts, accs := sc.lo[:nw], sc.hi[:nw], sc.post[:nw], sc.acc[:nw]
	stretchDraws(g.pcg[w0:w1], len(others)/d, js, zs)
	stretchProposals(e.lnTab, e.stretchA[0], d, g.pos[w0*d:w1*d], g.prop[w0*d:w1*d], others, js, zs, zls)
	var ev func([]float64) float64
	if e.evals != nil {
		ev = e.evals[b]
	}
	densities(e.t, ev, d, g.prop[w0*d:w1*d], lps, lls, oks)
	c := float64(d - 1)
	pcgs, lpost := g.pcg[w0:w1], g.lpost[w0:w1]
	queue := stretchFirst(e.lnTab, pcgs, c, beta, zs, zls, lps, lls, lpost, oks, posts, los, his, accs, sc.queue[:nw])
	stretchSecond(e.lnTab, pcgs, c, zs, posts, lpost, los, his, accs, queue)
	keepAccepted(d, g.pos[w0*d:w1*d], g.prop[w0*d:w1*d], g.lp[w0:w1], g.ll[w0:w1], lpost, g.acc[w0:w1], lps, lls, posts, accs, sc.queue[:nw])
}

// stretchDraws takes Stretch.Propose's draws from each walker's PCG, as
// pcgIntN and pcgFloat64 take them: the partner js[i] among n and the
// uniform zs[i] that stretchZ maps to z.
func stretchDraws(pcgs []*rand.PCG, n int, js []int, zs []float64) {
	js, zs = js[:len(pcgs)], zs[:len(pcgs)]
	un := uint64(n)
	if un&(un-1) == 0 {
		for i, p := range pcgs {
			js[i] = int(p.Uint64() & (un - 1))
			zs[i] = unitFloat(p.Uint64())
		}
		return
	}
	for i, p := range pcgs {
		js[i] = pcgIntN(p, n)
		zs[i] = unitFloat(p.Uint64())
	}
}

// stretchProposals turns the uniforms zs into z = stretchZ(a, u) and writes
// the proposals into prop (walkers x d, like pos) and the estimates of
// ln z into zls (lnTable.estimate: NaN where there is no bracket, which
// leaves every decision open).
func stretchProposals(tab *lnTable, a float64, d int, pos, prop, others []float64, js []int, zs, zls []float64) {
	zls = zls[:len(zs)]
	for i, u := range zs {
		j := js[i]
		z := stretchZ(a, u)
		stretchTo(prop[i*d:i*d+d], pos[i*d:i*d+d], others[j*d:j*d+d], z)
		zs[i], zls[i] = z, tab.estimate(z)
	}
}

// densities is Ensemble.density at each row of prop (walkers x d), with
// the evaluator ev, or t.LogLike if ev is nil.
func densities(t Target, ev func([]float64) float64, d int, prop, lps, lls []float64, oks []bool) {
	lls, oks = lls[:len(lps)], oks[:len(lps)]
	for i := range lps {
		y := prop[i*d : i*d+d]
		lp := t.LogPrior(y)
		lps[i], lls[i], oks[i] = lp, math.Inf(-1), false
		if !finite(lp) {
			continue
		}
		var ll float64
		if ev == nil {
			ll = t.LogLike(y)
		} else {
			ll = ev(y)
		}
		lls[i], oks[i] = ll, finite(ll)
	}
}

// stretchFirst sets posts[i] = lnPost(beta, lps[i], lls[i]) and takes the
// decisions of decideStretch that need no u, from the estimates zls of
// ln z: accs[i] = 1 where lnA >= 0 for sure, 0
// otherwise; where lnA < 0 for sure it records the bracket [los[i],
// his[i]] of lnA and queues i for stretchSecond; where neither is sure it
// calls acceptStretch. Walkers whose density is not finite (oks[i] false)
// are rejected without a draw. It returns the queue.
func stretchFirst(tab *lnTable, pcgs []*rand.PCG, c, beta float64, zs, zls, lps, lls, lpost []float64, oks []bool, posts, los, his []float64, accs, queue []int) []int {
	nq := 0
	for i, ok := range oks {
		accs[i] = 0
		if !ok {
			continue
		}
		post, zl := lnPost(beta, lps[i], lls[i]), zls[i]
		posts[i] = post
		lo := float64(float64(c*(zl-lnTol))+post) - lpost[i]
		hi := float64(float64(c*(zl+lnTol))+post) - lpost[i]
		yes := b2i(lo >= 0)
		need := b2i(hi < 0)
		if yes|need == 0 {
			yes = b2i(acceptStretch(tab, pcgs[i], c, zs[i], post, lpost[i]))
		}
		los[i], his[i], accs[i] = lo, hi, yes
		queue[nq] = i
		nq += need
	}
	return queue[:nq]
}

// stretchSecond finishes decideStretch for the queued walkers: it draws u
// and sets accs[i] to whether ln u < lnA, from the estimate of ln u where
// that is sure and from math.Log otherwise.
func stretchSecond(tab *lnTable, pcgs []*rand.PCG, c float64, zs, posts, lpost, los, his []float64, accs, queue []int) {
	for _, i := range queue {
		u := unitFloat(pcgs[i].Uint64())
		ul := tab.estimate(u)
		yes := b2i(ul+lnTol < los[i])
		if yes|b2i(ul-lnTol >= his[i]) == 0 {
			yes = b2i(math.Log(u) < float64(float64(c*math.Log(zs[i]))+posts[i])-lpost[i])
		}
		accs[i] = yes
	}
}

// keepAccepted moves each walker i with accs[i] = 1 to its proposal, with
// its densities, and counts the acceptance; walkers with accs[i] = 0 stay
// as they are. The accepted walkers are first listed in kept, without a
// branch.
func keepAccepted(d int, pos, prop, lp, ll, lpost []float64, acc []int64, lps, lls, posts []float64, accs, kept []int) {
	n := 0
	for i, a := range accs {
		kept[n] = i
		n += a
	}
	for _, i := range kept[:n] {
		// A loop rather than copy, which calls memmove: d is small.
		x, y := pos[i*d:i*d+d], prop[i*d:i*d+d]
		for k, v := range y {
			x[k] = v
		}
		lp[i], ll[i], lpost[i] = lps[i], lls[i], posts[i]
		acc[i]++
	}
}

// stretchScratch holds what the passes of stretchRange hand on, per
// walker of a batch.
type stretchScratch struct {
	j             []int
	z, zl, lp, ll []float64
	ok            []bool
	lo, hi, post  []float64
	queue, acc    []int
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
func decideStretch(tab *lnTable, p *rand.PCG, c, z, post, lpost float64) int {
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
	*p = [2]rand.PCG{*p, q}[need]
	return yes | yesU
}

// metropolis is the Metropolis–Hastings test of a proposal with log
// acceptance ratio lnA: false for NaN, true for lnA >= 0, and otherwise
// ln u < lnA for u = rand.New(p).Float64(), the only draw. ln u is bracketed
// first (lnTable.bracket), and computed only when the bracket straddles
// lnA.
func metropolis(tab *lnTable, p *rand.PCG, lnA float64) bool {
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
func acceptStretch(tab *lnTable, p *rand.PCG, c, z, post, lpost float64) bool {
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

// estimate is approx(x) for x with normalPos(x), and NaN, which fails
// every comparison, for other x.
func (t *lnTable) estimate(x float64) float64 {
	if !normalPos(x) {
		return math.NaN()
	}
	return t.approx(x)
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
			if lnA >= 0 || math.Log(e.swapRng.Float64()) < lnA {
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
