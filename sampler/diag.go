package sampler

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"slices"
	"sync/atomic"
	"time"
	"unsafe"

	"tautline/internal/numeric"
	"tautline/sampler/internal/acf"
)

// Chain layout used by every diagnostic: x[s*walkers+w] is the value of one
// parameter at step s for walker w.

// SokalWindow is the constant c of Sokal's automatic windowing: the sum of
// the autocorrelation function is truncated at the smallest lag M with
// M >= c tau(M) (Sokal 1997, section 3).
const SokalWindow = 5.0

// MinTauMultiple is the chain length, in autocorrelation times, below which
// AutocorrTime reports ErrShortChain (common practice: the windowed
// estimate is biased low for shorter chains).
const MinTauMultiple = 50.0

// ErrShortChain reports that a chain is too short for a reliable
// autocorrelation time; the estimate returned with it is a lower bound.
var ErrShortChain = errors.New("sampler: chain too short for a reliable autocorrelation time")

func checkLayout(x []float64, steps, walkers int) error {
	if steps < 1 || walkers < 1 {
		return fmt.Errorf("sampler: need steps >= 1 and walkers >= 1, got %d and %d", steps, walkers)
	}
	if len(x) != steps*walkers {
		return fmt.Errorf("sampler: chain has %d values, want steps x walkers = %d x %d = %d", len(x), steps, walkers, steps*walkers)
	}
	return nil
}

// AutocorrTime estimates the integrated autocorrelation time
//
//	tau = 1 + 2 sum_{k>=1} rho(k)
//
// of one parameter of an ensemble run, from the autocorrelation function
// rho averaged over walkers (each walker's computed by FFT), summed up to
// Sokal's automatic window with c = SokalWindow. Walkers that never move
// are left out of the average. If the window is not reached or the chain is
// shorter than MinTauMultiple tau, the estimate is returned together with an
// error wrapping ErrShortChain.
func AutocorrTime(x []float64, steps, walkers int) (float64, error) {
	if err := checkLayout(x, steps, walkers); err != nil {
		return math.NaN(), err
	}
	sc := newDiagScratch()
	load := func() { sc.dev = transpose(sc.dev, x, steps, walkers) }
	load()
	return sc.autocorrOf(steps, walkers, directMinLen, load)
}

// transpose writes the chain x[s*walkers+w] walker-major, dst[w*steps+s].
func transpose(dst, x []float64, steps, walkers int) []float64 {
	dst = growF64(dst, steps*walkers)
	for s := range steps {
		row := x[s*walkers : (s+1)*walkers]
		for w, v := range row {
			dst[w*steps+s] = v
		}
	}
	return dst
}

// directMinLen is the series length from which the autocorrelation sums
// are first tried lag by lag (acf.Sums) rather than by FFT: shorter series
// cost less than a millisecond either way.
const directMinLen = 1024

// lagBudget is the number of lags the direct sums may compute for series
// of n values before giving way to the FFT. One lag of one series costs
// about n multiply-adds, the FFT route about 10 L log2 L flops for its
// padded length L >= 2n, so the budget of 8 log2 L lags keeps the direct
// sums below the FFT's cost, and a fallback below twice it.
func lagBudget(n int) int {
	return 8 * bits.Len(uint(4*n))
}

// lagLimit is the first lag the direct sums do not reach: they give way
// to the FFT at the first lag m whose block of acf.LagBlock lags starts
// beyond lagBudget, m - m%LagBlock > lagBudget(n).
func lagLimit(n int) int {
	const B = acf.LagBlock
	return (lagBudget(n)/B + 1) * B
}

// sokalTau applies Sokal's window to the walker-averaged autocorrelation
// rhoSum(m)/used, m = 1, 2, ...; ok is false when rhoSum gives up.
func sokalTau(steps, used int, rhoSum func(m int) (float64, bool)) (tau float64, err error, ok bool) {
	tau = 1.0
	for m := 1; m < steps; m++ {
		r, fine := rhoSum(m)
		if !fine {
			return 0, nil, false
		}
		tau += 2 * r / float64(used)
		if float64(m) >= SokalWindow*tau {
			if float64(steps) < MinTauMultiple*tau {
				return tau, fmt.Errorf("%w: %d steps < %v x tau = %.4g", ErrShortChain, steps, MinTauMultiple, tau), true
			}
			return tau, nil, true
		}
	}
	return tau, fmt.Errorf("%w: Sokal window not reached in %d steps (tau > %.4g)", ErrShortChain, steps, tau), true
}

var errConstant = errors.New("sampler: autocorrelation time of a constant chain is undefined")

// parMin is the number of values from which the diagnostics share a
// step's work between two goroutines.
const parMin = 1 << 14

// share calls f(worker, i) for every i < n, taking the i in turn on this
// goroutine (worker 0) and on one new goroutine per helper (workers 1 ..
// helpers), and returns once every call has returned. It does not wait
// for a helper that has not started: on a virtual machine a goroutine
// woken onto an idle core took 0.07-0.5 ms to start here, longer than
// many parts of a check, so this goroutine goes on taking the i, and a
// helper that starts after the last has been taken returns at once,
// having called nothing (so it holds no worker's buffers). Which worker
// calls f for an i therefore depends on timing; the callers' results do
// not.
func share(n, helpers int, f func(worker, i int)) {
	if helpers < 1 || n < 2 {
		for i := range n {
			f(0, i)
		}
		return
	}
	var next, done atomic.Int64
	finished := make(chan struct{})
	run := func(worker int) {
		for {
			i := int(next.Add(1) - 1)
			if i >= n {
				return
			}
			f(worker, i)
			if done.Add(1) == int64(n) {
				close(finished)
			}
		}
	}
	for w := 1; w <= min(helpers, n-1); w++ {
		go run(w)
	}
	run(0)
	<-finished
}

// A crew keeps a diagPool's helper goroutines at hand while it is held
// (an evaluation of the history: a check, or the final report), so that
// each of the evaluation's parallel parts finds them awake instead of
// waking a goroutine onto an idle core, which took 0.07-0.5 ms here (see
// share): the helper is started when the hold begins, while this
// goroutine starts the work, and between the parts it yields
// (runtime.Gosched) for up to crewSpin before it sleeps until the next
// part, so that on a machine whose cores are busy with other work it
// does not keep one. Outside a hold, or with no helpers, its shares are
// share's. Which goroutine calls f for an i depends on timing, the
// callers' results not. hold and release are called by the pool's owner
// only; the zero crew (or a nil one) has no helpers.
type crew struct {
	helpers int          // goroutines besides the owner's, fixed at creation
	holds   int          // nesting depth of hold, read by the owner only
	run     *crewRun     // the helpers of the current hold; nil outside one
	running atomic.Int32 // helpers that have not returned (for the tests)
}

// A crewRun is the helpers of one hold and the job they take part in.
// Helpers of an earlier hold, which may not have returned yet, see only
// their own run's jobs, so that two goroutines never use one worker's
// buffers at once.
type crewRun struct {
	job      atomic.Pointer[crewJob]
	stop     atomic.Bool
	sleeping atomic.Int32  // helpers asleep or about to sleep
	wake     chan struct{} // a token wakes a sleeper; closed at release
}

// crewSpin is how long a helper yields for a new part before it sleeps:
// an evaluation's parts follow each other within microseconds, except
// around its serial stretches.
const crewSpin = 50 * time.Microsecond

// A crewJob is one share's calls, taken in turn by index by workers 0 to
// last.
type crewJob struct {
	n, last    int
	f          func(worker, i int)
	next, done atomic.Int64
}

// run calls f for the job's indices not yet taken, as worker.
func (j *crewJob) run(worker int) {
	if worker > j.last {
		return
	}
	for {
		i := int(j.next.Add(1) - 1)
		if i >= j.n {
			return
		}
		j.f(worker, i)
		j.done.Add(1)
	}
}

// hold starts the helpers unless they are running; every hold needs its
// release.
func (c *crew) hold() {
	if c == nil || c.helpers < 1 {
		return
	}
	if c.holds++; c.holds > 1 {
		return
	}
	r := &crewRun{wake: make(chan struct{}, c.helpers)}
	c.run = r
	for w := 1; w <= c.helpers; w++ {
		c.running.Add(1)
		go c.serve(r, w)
	}
}

// release ends a hold, and when it is the outermost tells the helpers to
// return, without waiting for them: a helper is between parts then, and
// will see no job of a later hold.
func (c *crew) release() {
	if c == nil || c.helpers < 1 {
		return
	}
	if c.holds--; c.holds > 0 {
		return
	}
	c.run.stop.Store(true)
	close(c.run.wake)
	c.run = nil
}

// serve is a helper's loop: it takes part in every job of run r until r
// stops, sleeping when none has come for crewSpin.
func (c *crew) serve(r *crewRun, worker int) {
	defer c.running.Add(-1)
	var last *crewJob
	idle := time.Now()
	for !r.stop.Load() {
		if j := r.job.Load(); j != nil && j != last {
			j.run(worker)
			last, idle = j, time.Now()
			continue
		}
		if time.Since(idle) < crewSpin {
			runtime.Gosched()
			continue
		}
		// Asleep until share hands over a token or release closes wake;
		// announced before the last look at the job, which share stores
		// before it looks at sleeping, so that one of the two sees the
		// other.
		r.sleeping.Add(1)
		if j := r.job.Load(); (j == nil || j == last) && !r.stop.Load() {
			<-r.wake
		}
		r.sleeping.Add(-1)
		idle = time.Now()
	}
}

// held reports whether the crew's helpers are running.
func (c *crew) held() bool { return c != nil && c.helpers > 0 && c.holds > 0 }

// share is share(n, helpers, f) on the crew: with it held, the helpers
// take part (woken if asleep), and this goroutine waits for a call a
// helper took by yielding.
func (c *crew) share(n, helpers int, f func(worker, i int)) {
	if !c.held() || helpers < 1 || n < 2 {
		share(n, helpers, f)
		return
	}
	r := c.run
	j := &crewJob{n: n, last: helpers, f: f}
	r.job.Store(j)
	for range min(int(r.sleeping.Load()), c.helpers) {
		select {
		case r.wake <- struct{}{}:
		default: // tokens enough for every sleeper
		}
	}
	j.run(0)
	for j.done.Load() < int64(n) {
		runtime.Gosched()
	}
	r.job.Store(nil)
}

// split calls f on [0, n) in two halves, concurrently with par (share, on
// the crew c, which may be nil).
func split(c *crew, par bool, n int, f func(lo, hi int)) {
	if !par {
		f(0, n)
		return
	}
	c.share(2, 1, func(_, part int) {
		if part == 0 {
			f(0, n/2)
		} else {
			f(n/2, n)
		}
	})
}

// A diagScratch holds the buffers of one goroutine's diagnostics, reused
// from parameter to parameter and from check to check (freshly allocated
// memory is slow to touch). With par its lag sums are shared between two
// goroutines, each summing its own walkers, so the results do not depend
// on it. A diagScratch is not safe for concurrent use.
type diagScratch struct {
	par  bool
	rk   ranker
	tab  lagTable
	c0   []float64
	mean []float64
	dev  []float64 // one parameter walker-major: gathered, then centred for tab, then vehtari's buffer
	rho  []float64
	ac   []float64
	fft  *acf.Work
	crew *crew // the goroutines par shares with (nil: new ones)
	// ahead keeps gather's reads ahead (their values ORed), which
	// nothing else uses.
	ahead uint64
}

func newDiagScratch() *diagScratch {
	return &diagScratch{par: runtime.GOMAXPROCS(0) > 1}
}

// eachParMin is the number of values of a chain from which diagPool.each
// shares its calls between goroutines. A check of a short run reads tens
// of thousands: on this project's 2-core virtual machines the checks of a
// 6000-step run of the SMBHB demo took 2.4-2.6 ms with GOMAXPROCS=1 and
// 2.8-3.1 ms with 2 (a second goroutine starts late and grows a second
// set of buffers), while its final report, reading about 100,000, took
// 6.6-7.6 ms with 1 and 4.1-4.5 ms with 2.
const eachParMin = 1 << 16

// heldParMin is eachParMin while the pool's crew is held: its helper is
// already running, so that handing it a parameter costs about a
// microsecond. With the crew's first version (a helper that never
// slept; the present one measured the same within noise), the
// diagnostics of a 6000-step --until run of the SMBHB demo (checks and
// final report, in-process, median of 30 runs) took 6.5-6.9 ms with 2^8
// to 2^12, 7.2 ms with 2^16, and 7.5-7.7 ms before the crew.
const heldParMin = 1 << 10

// maxDiagWorkers bounds the goroutines that diagnose parameters at once;
// each keeps buffers of about 24 bytes per value of the chain (the chain,
// the ranker's keys and its two index buffers), besides the shared scores.
const maxDiagWorkers = 2

// A diagPool diagnoses the parameters of a chain on up to maxDiagWorkers
// goroutines, each with its own diagScratch, taking the parameters in
// turn; each parameter's numbers depend on its values only, and the
// report is assembled in parameter order, so it does not depend on the
// scheduling. The pool's scratch lives as long as its owner (the history)
// and is reused by every check. A diagPool is not safe for concurrent use.
type diagPool struct {
	workers []*diagScratch
	tab     scoreTable    // shared by the workers' rankers
	crew    crew          // the workers' goroutines besides the caller's
	ready   chan prepared // buffers of the last prepare, for the next hold; nil if none
	pending int           // values per parameter the buffers on ready hold
}

func newDiagPool() *diagPool {
	p := &diagPool{}
	for range max(1, min(runtime.GOMAXPROCS(0), maxDiagWorkers)) {
		sc := newDiagScratch()
		sc.rk.tab = &p.tab
		sc.crew = &p.crew
		p.workers = append(p.workers, sc)
	}
	p.crew.helpers = len(p.workers) - 1
	return p
}

// hold keeps the pool's helper goroutines running until the matching
// release (crew): an evaluation holds it from start to end. It first
// takes up the buffers of a prepare that has finished, and gives up one
// that has not.
func (p *diagPool) hold() {
	if p.ready != nil {
		select {
		case pr := <-p.ready:
			if cap(pr.scores) > cap(p.tab.scores) {
				p.tab.scores, p.tab.size = pr.scores, 0 // filled again at its next set
			}
			for i, sc := range p.workers {
				b := &pr.sets[i]
				sc.dev, sc.rk.keys = larger(sc.dev, b.dev), larger(sc.rk.keys, b.keys)
				sc.rk.idx, sc.rk.tmpI = larger(sc.rk.idx, b.idx), larger(sc.rk.tmpI, b.tmpI)
			}
		default: // still touching pages: this evaluation grows its own
		}
		p.ready = nil
	}
	p.crew.hold()
}

func (p *diagPool) release() { p.crew.release() }

// A bufferSet is a worker's buffers that prepare makes, empty.
type bufferSet struct {
	dev       []float64
	keys      []uint64
	idx, tmpI []int32
}

// prepared is what prepare makes: every worker's buffers and one for the
// shared scores.
type prepared struct {
	sets   []bufferSet
	scores []float64
}

// larger returns the buffer of larger capacity, cut to length 0 if it is
// b; a's contents are not needed.
func larger[T any](a, b []T) []T {
	if cap(b) > cap(a) {
		return b[:0]
	}
	return a
}

// prepare makes, on a goroutine of its own, buffers with room for an
// evaluation of n values per parameter for every worker and for the
// shared scores (a score table is filled afresh for each size, and the
// final report's is the largest), writing a zero
// into every page so that the evaluation finds them in memory: freshly
// allocated memory costs about 0.5 ms per MB to touch here (buffers
// touched in advance took 3.8 ms off the diagnostics of a 28000-step
// SMBHB run, about a fifth of its final report), and Run has it done
// while it samples when the ensemble leaves a core free (see
// prepareFinal). The next hold takes them up if they are ready (the
// buffers' contents are never read before they are written), so that
// results do not depend on it, and nothing waits for it.
func (p *diagPool) prepare(n int) {
	if p.ready != nil && p.pending >= n {
		return // on its way
	}
	room := true
	for _, sc := range p.workers {
		room = room && cap(sc.dev) >= n && cap(sc.rk.keys) >= n && cap(sc.rk.idx) >= n && cap(sc.rk.tmpI) >= n
	}
	room = room && cap(p.tab.scores) >= n
	if room {
		return
	}
	ready := make(chan prepared, 1)
	p.ready, p.pending = ready, n
	workers := len(p.workers)
	go func() {
		bufs := make([]bufferSet, workers)
		for i := range bufs {
			bufs[i] = bufferSet{dev: touched[float64](n), keys: touched[uint64](n), idx: touched[int32](n), tmpI: touched[int32](n)}
		}
		ready <- prepared{sets: bufs, scores: touched[float64](n)}
	}()
}

// pageBytes is the memory page size prepare touches in steps of.
const pageBytes = 4096

// touched returns a zeroed buffer of n values, empty, with a zero
// written into each of its pages.
func touched[T int32 | uint64 | float64](n int) []T {
	q := make([]T, n)
	var zero T
	step := max(1, pageBytes/int(unsafe.Sizeof(zero)))
	for i := 0; i < n; i += step {
		q[i] = zero
	}
	return q[:0]
}

// each calls f(sc, k) for every k < n, each call reading values values of
// the chain, on up to len(p.workers) goroutines (share), each with its own
// scratch, or on this one alone if all of them read fewer than
// eachParMin (heldParMin while the crew is held); with one goroutine in
// use its scratch shares its lag sums between two (the work being one
// parameter), else not.
func (p *diagPool) each(n, values int, f func(sc *diagScratch, k int)) {
	w := min(len(p.workers), n)
	least := eachParMin
	if p.crew.held() {
		least = heldParMin
	}
	if n*values < least {
		w = 1
	}
	par := w == 1 && runtime.GOMAXPROCS(0) > 1
	for _, sc := range p.workers {
		sc.par = par
	}
	p.crew.share(n, w-1, func(worker, k int) { f(p.workers[worker], k) })
}

// work returns an FFT work space equivalent to acf.New(n).
func (sc *diagScratch) work(n int) *acf.Work {
	if !sc.fft.Fits(n) {
		sc.fft = acf.New(n)
	}
	return sc.fft
}

// A lagTable holds the autocovariances C_w(k) of the walkers' series,
// computed lazily in chunks of lags for all walkers: a lag's value does
// not depend on the chunks (acf.Sums), so the chunking is free to follow
// the need.
type lagTable struct {
	n, walkers int
	limit      int // lags from limit on are not computed
	have       int // lags [0, have) are in c
	c          []float64
	par        bool
	chunk      int       // lags computed at once (acf.SumsWidth)
	dev        []float64 // the centred series, walker w's at dev[w*n:(w+1)*n]
	crew       *crew     // the goroutines par shares with (nil: new ones)
}

// reset prepares the table for the centred series in dev (walkers series
// of n values, walker-major), which it reads until the next reset.
func (t *lagTable) reset(n, walkers int, par bool, dev []float64, c *crew) {
	t.n, t.walkers, t.dev, t.crew = n, walkers, dev, c
	t.limit = min(lagLimit(n), n)
	t.have = 0
	t.chunk = acf.SumsWidth()
	t.c = growF64(t.c, walkers*t.limit)
	t.par = par && n*walkers >= parMin
}

// ensure makes lag m available; false if m is at or beyond the limit.
func (t *lagTable) ensure(m int) bool {
	for m >= t.have {
		if t.have >= t.limit {
			return false
		}
		lo, hi := t.have, min(t.have+t.chunk, t.limit)
		split(t.crew, t.par, t.walkers, func(w0, w1 int) {
			for w := w0; w < w1; w++ {
				acf.Sums(t.dev[w*t.n:(w+1)*t.n], lo, t.c[w*t.limit+lo:w*t.limit+hi])
			}
		})
		t.have = hi
	}
	return true
}

// at returns C_w(k) for a k made available by ensure.
func (t *lagTable) at(w, k int) float64 { return t.c[w*t.limit+k] }

// autocorrView is autocorrOf parameter k of v, gathered straight into the
// buffer of the centred series: an estimate of tau alone needs no other
// copy of the chain.
func (sc *diagScratch) autocorrView(v chainView, k, direct int) (float64, error) {
	load := func() { sc.gather(v, k) }
	load()
	return sc.autocorrOf(v.steps, v.walkers, direct, load)
}

// autocorrOf is AutocorrTime of the walker-major chain sc.dev[w*n+s], with
// the autocovariances of series of at least direct steps summed lag by lag
// (autocorrDirect, which centres sc.dev in place), else by FFT. If the
// direct sums give up, load puts the chain back in sc.dev for the FFT.
func (sc *diagScratch) autocorrOf(n, walkers, direct int, load func()) (float64, error) {
	if n < 2 {
		return math.NaN(), fmt.Errorf("%w: %d step", ErrShortChain, n)
	}
	if n >= direct {
		if tau, err, ok := sc.autocorrDirect(n, walkers); ok {
			return tau, err
		}
		load()
	}
	return sc.autocorrFFT(sc.dev, n, walkers)
}

// autocorrFFT is autocorrOf with every walker's autocovariance by FFT.
func (sc *diagScratch) autocorrFFT(x []float64, n, walkers int) (float64, error) {
	w := sc.work(n)
	sc.ac = growF64(sc.ac, n)
	sc.rho = growF64(sc.rho, n)
	ac, rho := sc.ac, sc.rho
	clear(rho)
	used := 0
	for k := range walkers {
		w.Autocov(x[k*n:(k+1)*n], ac)
		if !(ac[0] > 0) {
			continue
		}
		for t := range n {
			rho[t] += ac[t] / ac[0]
		}
		used++
	}
	if used == 0 {
		return math.NaN(), errConstant
	}
	tau, err, _ := sokalTau(n, used, func(m int) (float64, bool) { return rho[m], true })
	return tau, err
}

// autocorrDirect is autocorrOf with the autocovariances summed lag by lag
// up to the window, the walkers' series in sc.dev centred in place; ok is
// false if that would take lags beyond lagLimit.
func (sc *diagScratch) autocorrDirect(n, walkers int) (tau float64, err error, ok bool) {
	sc.mean = growF64(sc.mean, walkers)
	sc.c0 = growF64(sc.c0, walkers)
	mean, c0, x := sc.mean, sc.c0, sc.dev[:walkers*n]
	split(sc.crew, sc.par && n*walkers >= parMin, walkers, func(w0, w1 int) {
		// The means summed in step order, as acf.Lags centres a series.
		runMeans(mean[w0:w1], x[w0*n:w1*n], n)
		for w := w0; w < w1; w++ {
			mu := mean[w]
			dev := x[w*n : (w+1)*n]
			for i, v := range dev {
				dev[i] = v - mu
			}
		}
	})
	t := &sc.tab
	t.reset(n, walkers, sc.par, sc.dev, sc.crew)
	t.ensure(0)
	used := 0
	for w := range walkers {
		c0[w] = t.at(w, 0)
		if c0[w] > 0 {
			used++
		}
	}
	if used == 0 {
		return math.NaN(), errConstant, true
	}
	return sokalTau(n, used, func(m int) (float64, bool) {
		if !t.ensure(m) {
			return 0, false
		}
		r := 0.0
		for w := range walkers {
			if c0[w] > 0 {
				r += t.at(w, m) / c0[w]
			}
		}
		return r, true
	})
}

// ESS returns the effective sample size steps x walkers / tau of one
// parameter, with tau from AutocorrTime (and its error): the ensemble's
// ESS of Goodman & Weare (2010), see the definitions in ensdiag.go.
func ESS(x []float64, steps, walkers int) (float64, error) {
	tau, err := AutocorrTime(x, steps, walkers)
	return float64(steps*walkers) / tau, err
}

// splitChains returns 2 x walkers chains of length steps/2 (first and last
// halves of each walker; the middle step is dropped for odd steps), chain c
// at out[c*n:(c+1)*n].
func splitChains(x []float64, steps, walkers int) (out []float64, n, m int) {
	n = steps / 2
	m = 2 * walkers
	out = make([]float64, n*m)
	for w := range walkers {
		for s := range n {
			out[(2*w)*n+s] = x[s*walkers+w]
			out[(2*w+1)*n+s] = x[(steps-n+s)*walkers+w]
		}
	}
	return out, n, m
}

// rankNormalize replaces values by normal scores of their pooled ranks,
// z = Phi^-1((r - 3/8)/(S + 1/4)), with average ranks for ties
// (Vehtari et al. 2021, eq. 14).
func rankNormalize(v []float64) []float64 {
	var r ranker
	return r.normalize(v, nil)
}

// rhat is the potential scale reduction sqrt(var+/W) of Gelman & Rubin
// (1992) for m chains of length n (Vehtari et al. 2021, eq. 1-4).
func rhat(c []float64, n, m int) float64 {
	if n < 2 || m < 2 {
		return math.NaN()
	}
	means, ss := make([]float64, m), make([]float64, m)
	for j := range m {
		ch := c[j*n : (j+1)*n]
		mu := 0.0
		for _, v := range ch {
			mu += v
		}
		mu /= float64(n)
		s2 := 0.0
		for _, v := range ch {
			s2 += (v - mu) * (v - mu)
		}
		means[j], ss[j] = mu, s2
	}
	return rhatMoments(means, ss, n)
}

// rhatMoments is the potential scale reduction factor of m chains of n
// draws each (Gelman & Rubin 1992; Vehtari et al. 2021, eq. 3-4) from each
// chain's mean and sum of squared deviations about it: W the mean
// within-chain variance, B the between-chain variance times n, and
// R-hat = sqrt(((n-1)/n W + B/n) / W); +Inf when only B is positive.
func rhatMoments(means, ss []float64, n int) float64 {
	m := len(means)
	var W, mm, mv float64
	for j := range m {
		W += ss[j] / float64(n-1)
		mm += means[j]
	}
	W /= float64(m)
	mm /= float64(m)
	for _, mu := range means {
		mv += (mu - mm) * (mu - mm)
	}
	B := float64(n) * mv / float64(m-1)
	if !(W > 0) {
		if B > 0 {
			return math.Inf(1)
		}
		return math.NaN()
	}
	vp := float64(n-1)/float64(n)*W + B/float64(n)
	return math.Sqrt(vp / W)
}

// SplitRhat returns the rank-normalised split R-hat of Vehtari et al.
// (2021), eq. 14-15, treating every walker as an independent chain (for
// independent runs; the diagnostics of an ensemble use EnsembleRhat): each walker's chain is split in halves, draws are
// replaced by normal scores of their pooled ranks, and the result is the
// larger of R-hat for these scores and for the scores of the folded draws
// |x - median|. It is NaN for fewer than 4 steps.
func SplitRhat(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 4 {
		return math.NaN()
	}
	var r ranker
	return splitRhatOf(&r, x, steps, walkers)
}

// splitRhatOf is SplitRhat (for at least 4 steps) ranking with r.
func splitRhatOf(r *ranker, x []float64, steps, walkers int) float64 {
	if steps < 4 {
		return math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	return splitRhatRanked(r, c, n, m)
}

// splitRhatRanked is SplitRhat of the split chains c, ranked with r.
func splitRhatRanked(r *ranker, c []float64, n, m int) float64 {
	z := r.normalize(c, nil)
	return splitRhat(r, c, z, r.median(), n, m)
}

// splitRhat combines the bulk R-hat of the rank-normalised split chains z
// with the R-hat of the rank-normalised folded chains |c - med|.
func splitRhat(r *ranker, c, z []float64, med float64, n, m int) float64 {
	f := make([]float64, len(c))
	for i, v := range c {
		f[i] = math.Abs(v - med)
	}
	return math.Max(rhat(z, n, m), rhat(r.normalize(f, f), n, m))
}

func median(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// multiESS is the multi-chain effective sample size of Vehtari et al.
// (2021), eq. 10-11, with Geyer's (1992) initial monotone sequence
// truncation of the combined autocorrelation estimate.
func multiESS(c []float64, n, m int) float64 {
	if n < 4 || m < 1 {
		return math.NaN()
	}
	if n >= directMinLen {
		if v, ok := multiESSDirect(c, n, m); ok {
			return v
		}
	}
	return multiESSFFT(c, n, m)
}

// multiESSFFT is multiESS with every chain's autocovariance by FFT.
func multiESSFFT(c []float64, n, m int) float64 {
	w := acf.New(n)
	acov := make([]float64, m*n)
	means := make([]float64, m)
	c0 := make([]float64, m)
	for j := range m {
		means[j] = w.Autocov(c[j*n:(j+1)*n], acov[j*n:(j+1)*n])
		c0[j] = acov[j*n]
	}
	v, _ := geyerESS(n, m, c0, means, func(t int) (float64, bool) {
		s := 0.0
		for j := range m {
			s += acov[j*n+t]
		}
		return s, true
	})
	return v
}

// multiESSDirect is multiESS with the autocovariances summed lag by lag
// until the truncation; ok is false if that would take more than
// lagBudget lags.
func multiESSDirect(c []float64, n, m int) (float64, bool) {
	var lg acf.Lags
	lg.LoadChains(c, n, m)
	const B = acf.LagBlock
	buf := make([]float64, m*B)
	lg.Block(0, buf)
	means := make([]float64, m)
	c0 := make([]float64, m)
	for j := range m {
		means[j] = lg.Mean(j)
		c0[j] = buf[j*B]
	}
	var sums [B]float64
	k0 := -B
	budget := lagBudget(n)
	return geyerESS(n, m, c0, means, func(t int) (float64, bool) {
		if t >= k0+B {
			k0 = t - t%B
			if k0 > budget {
				return 0, false
			}
			if k0 > 0 {
				lg.Block(k0, buf)
			}
			for i := range B {
				s := 0.0
				for j := range m {
					s += buf[j*B+i]
				}
				sums[i] = s
			}
		}
		return sums[t-k0], true
	})
}

// geyerESS is the body of multiESS given each chain's lag-0
// autocovariance c0 and mean, and acovSum(t), the sum over chains of the
// lag-t autocovariances; ok is false when acovSum gives up.
func geyerESS(n, m int, c0, means []float64, acovSum func(t int) (float64, bool)) (float64, bool) {
	W := 0.0
	for j := range m {
		W += c0[j] * float64(n) / float64(n-1)
	}
	W /= float64(m)
	vp := W * float64(n-1) / float64(n)
	if m > 1 {
		mm := 0.0
		for _, mu := range means {
			mm += mu
		}
		mm /= float64(m)
		mv := 0.0
		for _, mu := range means {
			mv += (mu - mm) * (mu - mm)
		}
		vp += mv / float64(m-1)
	}
	if !(vp > 0) {
		return math.NaN(), true
	}
	rho := func(t int) (float64, bool) {
		s, ok := acovSum(t)
		return 1 - (W-s/float64(m))/vp, ok
	}
	sum := 0.0
	prev := math.Inf(1)
	for t := 0; t+1 < n; t += 2 {
		p, ok := rho(t)
		if !ok {
			return 0, false
		}
		if t == 0 {
			p = 1
		}
		q, ok := rho(t + 1)
		if !ok {
			return 0, false
		}
		p += q
		if p < 0 {
			break
		}
		if p > prev {
			p = prev
		}
		sum += p
		prev = p
	}
	tau := -1 + 2*sum
	if tau < 1/math.Log10(float64(n*m)) {
		tau = 1 / math.Log10(float64(n*m))
	}
	return float64(n*m) / tau, true
}

// BulkESS returns the bulk effective sample size of Vehtari et al. (2021):
// the multi-chain ESS of the rank-normalised split chains, every walker
// taken as an independent chain (an ensemble's is EnsembleBulkESS). It is NaN for
// fewer than 8 steps.
func BulkESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	return multiESS(rankNormalize(c), n, m)
}

// TailESS returns the tail effective sample size of Vehtari et al. (2021):
// the smaller of the multi-chain ESS of the indicators I(x <= q05) and
// I(x <= q95) over the split chains, every walker taken as an independent
// chain (an ensemble's is EnsembleTailESS). It is NaN for fewer than 8 steps.
func TailESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	c, n, m := splitChains(x, steps, walkers)
	s := slices.Clone(c)
	slices.Sort(s)
	return tailESS(c, s, n, m)
}

// tailESS is TailESS of split chains c with sorted copy s.
func tailESS(c, s []float64, n, m int) float64 {
	ind := make([]float64, len(c))
	out := math.Inf(1)
	for _, p := range []float64{0.05, 0.95} {
		q := numeric.Quantile(s, p)
		for i, v := range c {
			ind[i] = 0
			if v <= q {
				ind[i] = 1
			}
		}
		out = math.Min(out, multiESS(ind, n, m))
	}
	return out
}

// StuckWalkers returns the indices of walkers whose acceptance fraction,
// after steps proposals each, lies both below half the ensemble median and
// more than 5 binomial standard deviations below it (common practice: such
// a walker is trapped, not merely unlucky).
func StuckWalkers(acc []float64, steps int) []int {
	if len(acc) == 0 || steps < 1 {
		return nil
	}
	med := median(acc)
	sd := math.Sqrt(med * (1 - med) / float64(steps))
	var out []int
	for w, a := range acc {
		if a < med/2 && a < med-5*sd {
			out = append(out, w)
		}
	}
	return out
}

// ParamReport holds the convergence diagnostics of one parameter.
type ParamReport struct {
	Index       int     `json:"index"`
	Name        string  `json:"name,omitempty"`
	Tau         float64 `json:"tau"`
	TauReliable bool    `json:"tau_reliable"`
	ESS         float64 `json:"ess"`
	BulkESS     float64 `json:"bulk_ess"`
	TailESS     float64 `json:"tail_ess"`
	Rhat        float64 `json:"rhat"`
}

// Report bundles the diagnostics of a run, per parameter and overall.
// Non-finite numbers are written as JSON null.
type Report struct {
	Steps          int           `json:"steps"`
	Walkers        int           `json:"walkers"`
	Params         []ParamReport `json:"params"`
	MaxTau         float64       `json:"max_tau"`
	MinESS         float64       `json:"min_ess"`
	MaxRhat        float64       `json:"max_rhat"`
	MeanAcceptance float64       `json:"mean_acceptance"`
	StuckWalkers   []int         `json:"stuck_walkers"`
}

// Diagnose computes the diagnostics of a chain of positions laid out as
// pos[(s*walkers+w)*dim+k] (as History.Positions), for every parameter k:
// tau and ESS by AutocorrTime, R-hat by EnsembleRhat, bulk and tail ESS
// by EnsembleBulkESS and EnsembleTailESS (the ensemble-aware definitions
// at the top of ensdiag.go).
// acc, the per-walker acceptance fractions, may be nil; names, if not nil,
// label the parameters.
func Diagnose(pos []float64, steps, walkers, dim int, acc []float64, names []string) (Report, error) {
	return diagnose(pos, steps, walkers, dim, acc, names, true)
}

// diagnose is Diagnose; without tails it leaves BulkESS and TailESS NaN,
// which saves most of the work.
func diagnose(pos []float64, steps, walkers, dim int, acc []float64, names []string, tails bool) (Report, error) {
	if dim < 1 || steps < 1 || walkers < 1 || len(pos) != steps*walkers*dim {
		return Report{}, fmt.Errorf("sampler: Diagnose: have %d values, want steps x walkers x dim = %d x %d x %d", len(pos), steps, walkers, dim)
	}
	if names != nil && len(names) != dim {
		return Report{}, fmt.Errorf("sampler: Diagnose: %d names for %d parameters", len(names), dim)
	}
	v := chainView{pos: pos, steps: steps, walkers: walkers, dim: dim, stride: 1}
	return newDiagPool().diagnose(v, acc, names, true, tails, 1), nil
}

// A chainView is a chain of positions read in place: the value of
// parameter k at step s for walker w is pos[(s*stride*walkers+w)*dim+k],
// so that a view of the history thinned by stride needs no copy.
type chainView struct {
	pos                         []float64
	steps, walkers, dim, stride int
}

// gather sets sc.dev to parameter k of v, walker-major:
// sc.dev[w*v.steps+s].
func (sc *diagScratch) gather(v chainView, k int) {
	dst := growF64(sc.dev, v.steps*v.walkers)
	row := v.stride * v.walkers * v.dim
	width := v.walkers * v.dim // a step's values
	var ahead uint64
	// Eight steps at a time, so that each walker's eight values fill one
	// cache line of dst rather than touching a line per value.
	const block = 8
	for s0 := 0; s0 < v.steps; s0 += block {
		s1 := min(s0+block, v.steps)
		// The steps gatherAhead on are read a value per cache line, so
		// that their lines are on the way while these are copied.
		for s := s0 + gatherAhead; s < min(s1+gatherAhead, v.steps); s++ {
			r := v.pos[s*row : s*row+width]
			for j := 0; j < len(r); j += 8 {
				ahead |= math.Float64bits(r[j])
			}
			ahead |= math.Float64bits(r[len(r)-1])
		}
		for w := range v.walkers {
			d := dst[w*v.steps+s0 : w*v.steps+s1]
			src := w*v.dim + k + s0*row
			for i := range d {
				d[i] = v.pos[src+i*row]
			}
		}
	}
	sc.dev, sc.ahead = dst, ahead
}

// gatherAhead is how many steps ahead of those it copies gather reads a
// value of every cache line of the history. A check reads a step in
// every few, the final report one in three or more, long after they were
// written: a run's history (a 28000-step SMBHB run's is 14 MB) is mostly
// out of the caches by then, and the reads ahead keep more of its lines
// on the way than the copy's own loads do. Measured here, a gather from
// a 6000-step history out of the caches took 0.6-0.8 of the time, and the
// diagnostics of the SMBHB demo's --until ess=20000,rhat=1.01 run a
// median of 28.1 instead of 30.4 ms (12 runs each).
const gatherAhead = 16

// diagnose is Diagnose of the chain v (which the caller has checked).
// Without rhat it leaves BulkESS and TailESS NaN, and R-hat too unless
// show > 1, when R-hat is that of every show-th step of v (the chain
// thinned show times more, taken from the values already read), if that
// leaves at least 8 steps, else of v.
func (p *diagPool) diagnose(v chainView, acc []float64, names []string, rhat, tails bool, show int) Report {
	steps, walkers := v.steps, v.walkers
	rep := Report{Steps: steps, Walkers: walkers, MaxTau: math.Inf(-1), MinESS: math.Inf(1), MaxRhat: math.Inf(-1)}
	rsteps := steps // steps R-hat is computed from
	if !rhat && show > 1 {
		if t := (steps + show - 1) / show; t >= 2*rhatSegments {
			rsteps = t
		} else {
			show = 1
		}
		rhat = true
	} else {
		show = 1
	}
	if rhat {
		p.setScores(rsteps, walkers)
	}
	rep.Params = make([]ParamReport, v.dim)
	for k := range rep.Params {
		pr := &rep.Params[k]
		pr.Index = k
		if names != nil {
			pr.Name = names[k]
		}
		pr.Rhat, pr.BulkESS, pr.TailESS = math.NaN(), math.NaN(), math.NaN()
	}
	setTau := func(k int, t float64, err error) {
		pr := &rep.Params[k]
		pr.Tau, pr.TauReliable, pr.ESS = t, err == nil, float64(steps*walkers)/t
	}
	vehtari := func(sc *diagScratch, k int) {
		pr := &rep.Params[k]
		pr.Rhat, pr.BulkESS, pr.TailESS = sc.vehtari(sc.dev, steps, show, walkers, tails)
	}
	// tau alone reads the chain into the centred series' buffer only
	// (autocorrView); with R-hat the values are kept for it.
	tauAlone := func(sc *diagScratch, k int) {
		t, err := sc.autocorrView(v, k, directMinLen)
		setTau(k, t, err)
	}
	if w := len(p.workers); rhat && w > 1 && v.dim%w != 0 {
		// Parameters do not share out evenly among the goroutines: split
		// each into its R-hat and ESS (the larger part, first) and its
		// tau, each reading the chain afresh. Every statistic is computed
		// as below, so the report is the same.
		p.each(2*v.dim, steps*walkers, func(sc *diagScratch, k int) {
			if k < v.dim {
				sc.gather(v, k)
				vehtari(sc, k)
			} else {
				tauAlone(sc, k-v.dim)
			}
		})
	} else {
		p.each(v.dim, steps*walkers, func(sc *diagScratch, k int) {
			if !rhat {
				tauAlone(sc, k)
				return
			}
			// One copy of the chain serves both: the ranker loads the
			// draws from it, the estimate of tau centres it in place, and
			// the ranks' statistics take it as their buffer.
			load := func() { sc.gather(v, k) }
			load()
			loaded := sc.vehtariLoad(sc.dev, steps, show, walkers)
			t, err := sc.autocorrOf(steps, walkers, directMinLen, load)
			setTau(k, t, err)
			if loaded {
				pr := &rep.Params[k]
				pr.Rhat, pr.BulkESS, pr.TailESS = sc.vehtariRanked(sc.dev, walkers, tails)
			}
		})
	}
	rep.summarize(acc)
	return rep
}

// summarize sets the report's extremes over its parameters and, with acc,
// the acceptance entries.
func (rep *Report) summarize(acc []float64) {
	for _, pr := range rep.Params {
		rep.MaxTau = nanMax(rep.MaxTau, pr.Tau)
		rep.MinESS = nanMin(rep.MinESS, pr.ESS)
		rep.MaxRhat = nanMax(rep.MaxRhat, pr.Rhat)
	}
	if acc != nil {
		for _, a := range acc {
			rep.MeanAcceptance += a
		}
		rep.MeanAcceptance /= float64(len(acc))
		rep.StuckWalkers = StuckWalkers(acc, rep.Steps)
	}
}

// diagnoseWithTaus is diagnose of a check (no rhat, no tails) whose taus
// pass estimated on v itself (pass.from and pass.k are v's start and
// stride): it reads them instead of estimating them again. It leaves
// R-hat NaN, for showRhat.
func (p *diagPool) diagnoseWithTaus(v chainView, acc []float64, pass *tauPass) Report {
	steps, walkers := v.steps, v.walkers
	rep := Report{Steps: steps, Walkers: walkers, MaxTau: math.Inf(-1), MinESS: math.Inf(1), MaxRhat: math.Inf(-1)}
	rep.Params = make([]ParamReport, v.dim)
	for k := range rep.Params {
		t := pass.taus[k]
		rep.Params[k] = ParamReport{Index: k, Tau: t, TauReliable: pass.errs[k] == nil, ESS: float64(steps*walkers) / t,
			Rhat: math.NaN(), BulkESS: math.NaN(), TailESS: math.NaN()}
	}
	rep.summarize(acc)
	return rep
}

// showRhat sets the R-hat of every parameter of rep, and its largest, to
// those diagnose shows for a check of v: from every show-th step, reading
// only those, so that the report is the same as diagnose's.
func (p *diagPool) showRhat(rep *Report, v chainView, show int) {
	walkers := v.walkers
	rv := v // the steps R-hat is computed from
	if t := (v.steps + show - 1) / show; show > 1 && t >= 2*rhatSegments {
		rv.steps, rv.stride = t, v.stride*show
	}
	p.setScores(rv.steps, walkers)
	p.each(v.dim, rv.steps*walkers, func(sc *diagScratch, k int) {
		sc.gather(rv, k)
		rep.Params[k].Rhat, _, _ = sc.vehtari(sc.dev, rv.steps, 1, walkers, false)
	})
	rep.MaxRhat = math.Inf(-1)
	for _, pr := range rep.Params {
		rep.MaxRhat = nanMax(rep.MaxRhat, pr.Rhat)
	}
}

// setScores prepares the shared scores for chains of steps x walkers:
// every parameter ranks the same number of draws (see vehtari).
func (p *diagPool) setScores(steps, walkers int) {
	if steps >= 2*rhatSegments {
		p.tab.set((steps-steps%rhatSegments)*walkers, len(p.workers) > 1, &p.crew)
	}
}

// nanMax and nanMin propagate NaN so that an undefined diagnostic is not
// hidden by a defined one.
func nanMax(a, b float64) float64 {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.NaN()
	}
	return math.Max(a, b)
}

func nanMin(a, b float64) float64 {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.NaN()
	}
	return math.Min(a, b)
}

// jnum encodes non-finite floats as null.
type jnum float64

func (v jnum) MarshalJSON() ([]byte, error) {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// MarshalJSON implements json.Marshaler, writing non-finite values as null.
func (p ParamReport) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Index       int    `json:"index"`
		Name        string `json:"name,omitempty"`
		Tau         jnum   `json:"tau"`
		TauReliable bool   `json:"tau_reliable"`
		ESS         jnum   `json:"ess"`
		BulkESS     jnum   `json:"bulk_ess"`
		TailESS     jnum   `json:"tail_ess"`
		Rhat        jnum   `json:"rhat"`
	}{p.Index, p.Name, jnum(p.Tau), p.TauReliable, jnum(p.ESS), jnum(p.BulkESS), jnum(p.TailESS), jnum(p.Rhat)})
}

// MarshalJSON implements json.Marshaler, writing non-finite values as null.
func (r Report) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Steps          int           `json:"steps"`
		Walkers        int           `json:"walkers"`
		Params         []ParamReport `json:"params"`
		MaxTau         jnum          `json:"max_tau"`
		MinESS         jnum          `json:"min_ess"`
		MaxRhat        jnum          `json:"max_rhat"`
		MeanAcceptance jnum          `json:"mean_acceptance"`
		StuckWalkers   []int         `json:"stuck_walkers"`
	}{r.Steps, r.Walkers, r.Params, jnum(r.MaxTau), jnum(r.MinESS), jnum(r.MaxRhat), jnum(r.MeanAcceptance), r.StuckWalkers})
}
