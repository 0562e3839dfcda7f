package sampler

import (
	"cmp"
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat/distuv"
)

// ar1 returns walkers independent AR(1) series x_t = phi x_{t-1} + e_t,
// e_t ~ N(0, 1), started from the stationary N(0, 1/(1-phi^2)), in the
// diagnostic layout x[s*walkers+w].
func ar1(phi float64, steps, walkers int, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 1))
	x := make([]float64, steps*walkers)
	sd := 1 / math.Sqrt(1-phi*phi)
	for w := range walkers {
		v := sd * r.NormFloat64()
		for s := range steps {
			v = phi*v + r.NormFloat64()
			x[s*walkers+w] = v
		}
	}
	return x
}

func TestAutocorrTimeAR1(t *testing.T) {
	tests := []struct {
		phi            float64
		steps, walkers int
	}{
		// Lengths give a relative standard error of the windowed estimate,
		// sqrt(2(2M+1)/N) with M = 5 tau (Sokal 1997, eq. 3.19), of 2-3.3 %,
		// so the 10 % tolerance is at least 3 standard errors.
		{0.5, 5000, 32},
		{0.9, 20000, 32},
		{0.99, 150000, 24},
	}
	for _, tc := range tests {
		x := ar1(tc.phi, tc.steps, tc.walkers, uint64(1000*tc.phi))
		// AR(1) closed form: rho(k) = phi^k, tau = (1+phi)/(1-phi).
		want := (1 + tc.phi) / (1 - tc.phi)
		got, err := AutocorrTime(x, tc.steps, tc.walkers)
		t.Logf("phi = %v: tau = %.4g, closed form %.4g", tc.phi, got, want)
		if err != nil {
			t.Errorf("phi = %v: %v", tc.phi, err)
		}
		if math.Abs(got-want) > 0.1*want {
			t.Errorf("phi = %v: tau = %.4g, want %.4g ± 10%%", tc.phi, got, want)
		}
		// ESS is N/tau by definition; it must agree to the same 10 %. It and
		// the bulk ESS are skipped for the longest series to keep the suite
		// fast (the rank normalisation sorts all 3.6 million draws).
		wantESS := float64(tc.steps*tc.walkers) / want
		if tc.phi > 0.9 {
			continue
		}
		if ess, _ := ESS(x, tc.steps, tc.walkers); math.Abs(ess-wantESS) > 0.1*wantESS {
			t.Errorf("phi = %v: ESS = %.4g, want %.4g ± 10%%", tc.phi, ess, wantESS)
		}
		// Bulk ESS (Vehtari et al. 2021) estimates the same N/tau; 15 %
		// allows for its Geyer truncation, noisier than Sokal's window.
		if ess := BulkESS(x, tc.steps, tc.walkers); math.Abs(ess-wantESS) > 0.15*wantESS {
			t.Errorf("phi = %v: bulk ESS = %.4g, want %.4g ± 15%%", tc.phi, ess, wantESS)
		}
	}
}

func TestAutocorrTimeErrors(t *testing.T) {
	// A chain of 200 steps of an AR(1) with tau = 199 is far shorter than
	// 50 tau: the estimate must come with ErrShortChain.
	x := ar1(0.99, 200, 4, 1)
	if _, err := AutocorrTime(x, 200, 4); !errors.Is(err, ErrShortChain) {
		t.Errorf("short chain: error %v, want ErrShortChain", err)
	}
	if _, err := AutocorrTime(make([]float64, 40), 10, 4); err == nil || !strings.Contains(err.Error(), "constant") {
		t.Errorf("constant chain: error %v", err)
	}
	if _, err := AutocorrTime(make([]float64, 39), 10, 4); err == nil || !strings.Contains(err.Error(), "39 values") {
		t.Errorf("bad layout: error %v", err)
	}
}

func TestSplitRhat(t *testing.T) {
	const steps, walkers = 2000, 16
	r := rand.New(rand.NewPCG(5, 6))
	iid := make([]float64, steps*walkers)
	modes := make([]float64, steps*walkers)
	scale := make([]float64, steps*walkers)
	for s := range steps {
		for w := range walkers {
			z := r.NormFloat64()
			iid[s*walkers+w] = z
			// Half the walkers in a mode at -3, half at +3, never mixing.
			modes[s*walkers+w] = z + 6*float64(w%2) - 3
			// Same location, scales 1 and 3: only the folded (tail) R-hat
			// sees this (Vehtari et al. 2021, section 4.2).
			scale[s*walkers+w] = z * (1 + 2*float64(w%2))
		}
	}
	tests := []struct {
		name    string
		x       []float64
		lo, hi  float64
		comment string
	}{
		// Vehtari et al. (2021) recommend R-hat < 1.01 for converged chains;
		// iid draws sit well inside.
		{"iid normal", iid, 0.99, 1.01, "converged chains"},
		{"separate modes", modes, 1.1, math.Inf(1), "chains in modes that never mixed"},
		{"unequal scales", scale, 1.1, math.Inf(1), "chains with different spreads"},
	}
	for _, tc := range tests {
		if got := SplitRhat(tc.x, steps, walkers); !(got >= tc.lo && got <= tc.hi) {
			t.Errorf("%s (%s): R-hat = %.4g, want in [%v, %v]", tc.name, tc.comment, got, tc.lo, tc.hi)
		}
	}
	// Independent draws: bulk and tail ESS near the number of draws; 15 %
	// as in TestAutocorrTimeAR1.
	n := float64(steps * walkers)
	for name, f := range map[string]func([]float64, int, int) float64{"bulk": BulkESS, "tail": TailESS} {
		if ess := f(iid, steps, walkers); math.Abs(ess-n) > 0.15*n {
			t.Errorf("%s ESS of iid draws = %.4g, want %.4g ± 15%%", name, ess, n)
		}
	}
	if !math.IsNaN(SplitRhat(iid[:3*walkers], 3, walkers)) {
		t.Error("R-hat of 3 steps should be NaN")
	}
}

func TestStuckWalkers(t *testing.T) {
	acc := []float64{0.3, 0.31, 0.29, 0.02, 0.33, 0.28, 0.3, 0.0}
	got := StuckWalkers(acc, 1000)
	if len(got) != 2 || got[0] != 3 || got[1] != 7 {
		t.Errorf("StuckWalkers = %v, want [3 7]", got)
	}
	// After 10 steps an acceptance of 0.1 against 0.3 is not significant.
	if got := StuckWalkers([]float64{0.3, 0.3, 0.1, 0.3}, 10); len(got) != 0 {
		t.Errorf("StuckWalkers after 10 steps = %v, want none", got)
	}
}

func TestDiagnoseJSON(t *testing.T) {
	const steps, walkers, dim = 400, 8, 2
	a := ar1(0.5, steps, walkers, 3)
	b := ar1(0.9, steps, walkers, 4)
	pos := make([]float64, steps*walkers*dim)
	for i := range a {
		pos[i*dim], pos[i*dim+1] = a[i], b[i]
	}
	rep, err := Diagnose(pos, steps, walkers, dim, []float64{0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0}, []string{"a", "b"})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Params) != 2 || rep.Params[1].Name != "b" || rep.MaxTau != rep.Params[1].Tau {
		t.Errorf("report %+v: want two parameters, the second with the larger tau", rep)
	}
	if len(rep.StuckWalkers) != 1 || rep.StuckWalkers[0] != 7 {
		t.Errorf("stuck walkers %v, want [7]", rep.StuckWalkers)
	}
	rep.Params[0].Rhat = math.NaN()
	rep.MaxRhat = math.Inf(1)
	out, err := json.Marshal(rep)
	if err != nil {
		t.Fatalf("json: %v", err)
	}
	if !strings.Contains(string(out), `"rhat":null`) || !strings.Contains(string(out), `"max_rhat":null`) {
		t.Errorf("non-finite values not written as null: %s", out)
	}
	if _, err := Diagnose(pos[:10], steps, walkers, dim, nil, nil); err == nil {
		t.Error("Diagnose accepted a short chain")
	}
}

// TestRankerMatchesComparisonSort checks the radix-sorted ranks against
// the definition computed with a comparison sort (Vehtari et al. 2021,
// eq. 14), to the bit, with ties, signed zeros and infinities.
func TestRankerMatchesComparisonSort(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	v := make([]float64, 3001)
	for i := range v {
		switch i % 7 {
		case 0:
			v[i] = float64(r.IntN(5)) // ties
		case 1:
			v[i] = -r.ExpFloat64()
		default:
			v[i] = r.NormFloat64() * 1e3
		}
	}
	v[10], v[11], v[12], v[13] = math.Copysign(0, -1), 0, math.Inf(1), math.Inf(-1)
	type vi struct {
		v float64
		i int
	}
	idx := make([]vi, len(v))
	for i, x := range v {
		idx[i] = vi{x, i}
	}
	slices.SortFunc(idx, func(a, b vi) int { return cmp.Compare(a.v, b.v) })
	want := make([]float64, len(v))
	S := len(v)
	for i := 0; i < S; {
		j := i
		for j+1 < S && idx[j+1].v == idx[i].v {
			j++
		}
		q := distuv.UnitNormal.Quantile((float64(i+j)/2 + 1 - 0.375) / (float64(S) + 0.25))
		for k := i; k <= j; k++ {
			want[idx[k].i] = q
		}
		i = j + 1
	}
	var rk ranker
	for range 2 { // the second call reuses the cached scores
		got := rk.normalize(v, nil)
		for i := range v {
			if got[i] != want[i] {
				t.Fatalf("score of v[%d] = %g: %g, want %g", i, v[i], got[i], want[i])
			}
		}
	}
	sorted := slices.Clone(v)
	slices.Sort(sorted)
	for i := range sorted {
		if got := rk.at(i); got != sorted[i] && !(math.IsNaN(got) && math.IsNaN(sorted[i])) {
			t.Fatalf("sorted[%d] = %g, want %g", i, got, sorted[i])
		}
	}
}

// TestDirectSumsMatchFFT checks that the lag-by-lag autocorrelation time
// and multi-chain ESS agree with the FFT versions (the same estimators,
// Sokal 1997 and Vehtari et al. 2021) to rounding, on AR(1) chains long
// enough for the direct route.
func TestDirectSumsMatchFFT(t *testing.T) {
	const steps, walkers = 4000, 6
	x := ar1(0.9, steps, walkers, 11)
	sc := newDiagScratch()
	xw := transpose(nil, x, steps, walkers)
	sc.dev = transpose(nil, x, steps, walkers) // centred in place
	direct, derr, ok := sc.autocorrDirect(steps, walkers)
	if !ok {
		t.Fatal("direct sums gave up within their lag budget")
	}
	fft, ferr := sc.autocorrFFT(xw, steps, walkers)
	// Tolerance: two summation orders of ~steps terms, 1e-12 relative.
	if math.Abs(direct-fft) > 1e-12*fft || (derr == nil) != (ferr == nil) {
		t.Errorf("tau direct %.15g (%v), FFT %.15g (%v)", direct, derr, fft, ferr)
	}
	c, n, m := splitChains(x, steps, walkers)
	de, ok := multiESSDirect(c, n, m)
	if !ok {
		t.Fatal("direct ESS gave up within its lag budget")
	}
	if fe := multiESSFFT(c, n, m); math.Abs(de-fe) > 1e-10*fe {
		t.Errorf("ESS direct %.15g, FFT %.15g", de, fe)
	}
}

// TestShare checks that share calls f once for every i, on worker 0 or a
// helper's index, whatever the number of helpers.
func TestShare(t *testing.T) {
	for n := range 6 {
		for helpers := range 3 {
			calls := make([]atomic.Int32, n)
			var bad atomic.Bool
			share(n, helpers, func(worker, i int) {
				if worker < 0 || worker > helpers {
					bad.Store(true)
				}
				calls[i].Add(1)
			})
			if bad.Load() {
				t.Errorf("n=%d helpers=%d: a call on a worker out of range", n, helpers)
			}
			for i := range calls {
				if c := calls[i].Load(); c != 1 {
					t.Errorf("n=%d helpers=%d: f(_, %d) called %d times", n, helpers, i, c)
				}
			}
		}
	}
}

// TestCrewShare checks that a crew's share calls f once for every i, on
// worker 0 or one of the share's helpers, held or not, with nested holds,
// after a release and with the helpers asleep between parts; that a call
// a helper took is over when share returns; that no two goroutines ever
// act as one worker at once, also across holds begun right after a
// release (whose helpers may not have returned); and that released
// helpers return.
func TestCrewShare(t *testing.T) {
	c := &crew{helpers: 2}
	var busy [3]atomic.Bool // workers in a call
	check := func(c *crew, stage string, n, helpers int) {
		calls := make([]atomic.Int32, n)
		var bad, twice atomic.Bool
		var slow atomic.Int32 // calls still running
		c.share(n, helpers, func(worker, i int) {
			slow.Add(1)
			defer slow.Add(-1)
			if worker < 0 || worker > helpers {
				bad.Store(true)
				return
			}
			if !busy[worker].CompareAndSwap(false, true) {
				twice.Store(true)
			}
			defer busy[worker].Store(false)
			if i%2 == 1 {
				time.Sleep(100 * time.Microsecond) // a helper's call outlasts this goroutine's
			}
			calls[i].Add(1)
		})
		if slow.Load() != 0 {
			t.Errorf("%s n=%d helpers=%d: share returned with a call running", stage, n, helpers)
		}
		if bad.Load() {
			t.Errorf("%s n=%d helpers=%d: a call on a worker out of range", stage, n, helpers)
		}
		if twice.Load() {
			t.Errorf("%s n=%d helpers=%d: two goroutines acted as one worker at once", stage, n, helpers)
		}
		for i := range calls {
			if k := calls[i].Load(); k != 1 {
				t.Errorf("%s n=%d helpers=%d: f(_, %d) called %d times", stage, n, helpers, i, k)
			}
		}
	}
	for _, stage := range []string{"free", "held", "nested", "asleep", "released once", "released"} {
		switch stage {
		case "held", "nested":
			c.hold()
		case "asleep":
			time.Sleep(20 * crewSpin) // the helpers go to sleep
		case "released once", "released":
			c.release()
		}
		if want := stage != "free" && stage != "released"; c.held() != want {
			t.Fatalf("%s: held() = %v", stage, c.held())
		}
		for n := range 7 {
			for helpers := range 3 {
				check(c, stage, n, helpers)
			}
		}
	}
	// Holds begun right after a release, their helpers racing the last
	// ones.
	for range 200 {
		c.hold()
		check(c, "again", 4, 2)
		c.release()
	}
	for deadline := time.Now().Add(10 * time.Second); c.running.Load() != 0 && time.Now().Before(deadline); {
		time.Sleep(time.Millisecond)
	}
	if r := c.running.Load(); r != 0 {
		t.Errorf("%d helpers still running 10 s after the last release", r)
	}
	var none *crew // no crew: share's
	none.hold()
	check(none, "nil", 5, 1)
	none.release()
}

// TestGather checks the scratch's gather against the definition of a
// chain view, value by value, for views shorter and longer than its
// blocks and reads ahead, thinned or not.
func TestGather(t *testing.T) {
	for _, c := range []struct{ steps, walkers, dim, stride int }{
		{1, 1, 1, 1}, {7, 3, 2, 1}, {8, 4, 1, 3}, {17, 5, 3, 2}, {40, 32, 2, 7}, {100, 6, 4, 1},
	} {
		pos := make([]float64, ((c.steps-1)*c.stride+1)*c.walkers*c.dim)
		for i := range pos {
			pos[i] = float64(i) + 0.5
		}
		v := chainView{pos: pos, steps: c.steps, walkers: c.walkers, dim: c.dim, stride: c.stride}
		sc := newDiagScratch()
		for k := range c.dim {
			sc.gather(v, k)
			if len(sc.dev) != c.steps*c.walkers {
				t.Fatalf("%+v k=%d: %d values, want %d", c, k, len(sc.dev), c.steps*c.walkers)
			}
			for w := range c.walkers {
				for s := range c.steps {
					want := pos[(s*c.stride*c.walkers+w)*c.dim+k]
					if got := sc.dev[w*c.steps+s]; got != want {
						t.Fatalf("%+v k=%d: walker %d step %d: %v, want %v", c, k, w, s, got, want)
					}
				}
			}
		}
	}
}

// TestGrowth checks that the buffers' growth gives the length asked for,
// keeps the memory while the capacity suffices, and at least doubles the
// capacity when it reallocates.
func TestGrowth(t *testing.T) {
	var f []float64
	for _, n := range []int{0, 1, 3, 2, 10, 11, 40, 5, 100} {
		before := cap(f)
		g := growF64(f, n)
		if len(g) != n {
			t.Fatalf("growF64 to %d: length %d", n, len(g))
		}
		switch {
		case n <= before && before > 0 && &g[:1][0] != &f[:1][0]:
			t.Errorf("growF64 to %d within capacity %d reallocated", n, before)
		case n > before && cap(g) < max(n, 2*before):
			t.Errorf("growF64 from capacity %d to %d: capacity %d, want at least %d", before, n, cap(g), max(n, 2*before))
		}
		f = g
	}
	if k, i := growU64(nil, 7), growI32(make([]int32, 2, 4), 5); len(k) != 7 || len(i) != 5 || cap(i) < 8 {
		t.Errorf("growU64(nil, 7): %d values; growI32 from capacity 4 to 5: %d values, capacity %d", len(k), len(i), cap(i))
	}
}

// TestPrepare checks that the next hold takes up the buffers of a prepare
// that has finished (each worker then has room for the values asked for)
// and gives up one that has not, without waiting, and that a report is
// the same with prepared buffers as without.
func TestPrepare(t *testing.T) {
	const steps, walkers, dim = 3000, 16, 2
	pos := make([]float64, steps*walkers*dim)
	r := rand.New(rand.NewPCG(3, 4))
	for i := range pos {
		pos[i] = r.NormFloat64()
	}
	v := chainView{pos: pos, steps: steps, walkers: walkers, dim: dim, stride: 1}
	p := newDiagPool()
	want := p.diagnose(v, nil, nil, true, true, 1)

	const n = 1 << 17
	p.prepare(n)
	for deadline := time.Now().Add(10 * time.Second); len(p.ready) == 0 && time.Now().Before(deadline); {
		time.Sleep(time.Millisecond)
	}
	p.hold()
	if p.ready != nil {
		t.Error("hold left the prepare pending")
	}
	for i, sc := range p.workers {
		if cap(sc.dev) < n || cap(sc.rk.keys) < n || cap(sc.rk.idx) < n || cap(sc.rk.tmpI) < n {
			t.Errorf("worker %d: capacities %d %d %d %d after a prepare of %d", i, cap(sc.dev), cap(sc.rk.keys), cap(sc.rk.idx), cap(sc.rk.tmpI), n)
		}
	}
	if cap(p.tab.scores) < n || p.tab.size != 0 {
		t.Errorf("shared scores: capacity %d, size %d after a prepare of %d; want the room, and no size until filled", cap(p.tab.scores), p.tab.size, n)
	}
	got := p.diagnose(v, nil, nil, true, true, 1)
	p.release()
	if !reflect.DeepEqual(got, want) {
		t.Errorf("report with prepared buffers %+v, without %+v", got, want)
	}

	// A prepare for no more than the buffers hold is skipped.
	if p.prepare(n); p.ready != nil {
		t.Error("a prepare for buffers already large enough is pending")
	}

	// A prepare still running is given up: hold returns at once.
	p.prepare(1 << 20)
	t0 := time.Now()
	p.hold()
	p.release()
	if p.ready != nil {
		t.Error("hold left the prepare pending")
	}
	t.Logf("hold after a large prepare took %v", time.Since(t0))
}
