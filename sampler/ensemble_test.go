package sampler

import (
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestConfigErrors(t *testing.T) {
	g3 := newGaussTarget(t, []float64{0, 0, 0}, [][]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}})
	tests := []struct {
		name string
		cfg  Config
		want string
	}{
		{"too few walkers", Config{Walkers: 4}, "4 walkers are too few for 3 dimensions: need at least 2 x 3 = 6"},
		{"odd walkers", Config{Walkers: 7}, "Walkers must be even"},
		{"no walkers", Config{}, "no walkers"},
		{"bad ladder start", Config{Walkers: 8, Betas: []float64{1.5, 0.1}}, "Betas[0] must be in (0, 1]"},
		{"zero ladder start", Config{Walkers: 8, Betas: []float64{0, 0}}, "Betas[0] must be in (0, 1]"},
		{"ladder not decreasing", Config{Walkers: 8, Betas: []float64{1, 0.5, 0.6}}, "Betas[2] = 0.6 after Betas[1] = 0.5"},
		{"negative beta", Config{Walkers: 8, Betas: []float64{1, -0.1}}, "Betas must decrease"},
		{"bad stretch scale", Config{Walkers: 8, Moves: []WeightedMove{{Stretch{A: 1}, 1}}}, "sampler: Moves[0]: stretch move scale A"},
		{"bad weight", Config{Walkers: 8, Moves: []WeightedMove{{Stretch{A: 2}, 0}}}, "Moves[0].Weight"},
		{"nil move", Config{Walkers: 8, Moves: []WeightedMove{{nil, 1}}}, "Moves[0].Move is nil"},
		{"empty moves", Config{Walkers: 8, Moves: []WeightedMove{}}, "Moves is empty"},
		{"bad DE", Config{Walkers: 8, Moves: []WeightedMove{{DiffEvolution{Gamma: 1, JumpProb: 2}, 1}}}, "JumpProb must be in [0, 1]"},
		{"negative workers", Config{Walkers: 8, Workers: -1}, "Workers must be >= 0"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := New(g3, tc.cfg)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("New: error %v, want it to contain %q", err, tc.want)
			}
		})
	}
}

func TestInitialisationFailure(t *testing.T) {
	// A likelihood that is -Inf everywhere: no walker can start.
	tg := funcTarget{dim: 1, draw: boxDraw(0, 1), prior: boxPrior(0, 1),
		like: func([]float64) float64 { return math.Inf(-1) }}
	_, err := New(tg, Config{Walkers: 4})
	if err == nil || !strings.Contains(err.Error(), "4 of 4 walkers found no prior draw") {
		t.Errorf("New: error %v, want the count of failed walkers", err)
	}
}

// sameState reports the first difference, bit for bit, between two
// ensembles.
func sameState(t *testing.T, a, b *Ensemble) {
	t.Helper()
	if a.Steps() != b.Steps() || a.Rungs() != b.Rungs() {
		t.Fatalf("steps/rungs differ: %d/%d vs %d/%d", a.Steps(), a.Rungs(), b.Steps(), b.Rungs())
	}
	eq := func(what string, r int, x, y []float64) {
		t.Helper()
		if len(x) != len(y) {
			t.Fatalf("rung %d %s: lengths %d and %d", r, what, len(x), len(y))
		}
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				t.Fatalf("rung %d %s[%d]: %v vs %v", r, what, i, x[i], y[i])
			}
		}
	}
	for r := range a.Rungs() {
		eq("beta", r, []float64{a.Beta(r)}, []float64{b.Beta(r)})
		eq("positions", r, a.Positions(r), b.Positions(r))
		eq("ln prior", r, a.LnPrior(r), b.LnPrior(r))
		eq("ln like", r, a.LnLike(r), b.LnLike(r))
		eq("ln post", r, a.LnPost(r), b.LnPost(r))
		eq("acceptance", r, a.AcceptanceFractions(r), b.AcceptanceFractions(r))
	}
	eq("swap acceptance", -1, a.SwapAcceptance(), b.SwapAcceptance())
}

func TestDeterminism(t *testing.T) {
	g := newGaussTarget(t, []float64{0, 1, 2}, [][]float64{{1, 0.5, 0}, {0.5, 2, 0.3}, {0, 0.3, 1}})
	ladder, err := GeometricLadder(4, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	base := Config{
		Walkers: 12, Seed: 42, Betas: ladder, AdaptLadder: true, AdaptSteps: 40,
		Moves: []WeightedMove{{Stretch{A: 2}, 0.7}, {DefaultDiffEvolution(3), 0.3}},
	}
	const steps = 80
	with := func(workers, minBatch int) Config {
		c := base
		c.Workers, c.MinBatch = workers, minBatch
		return c
	}
	ref := runSteps(t, g, with(1, 0), steps)
	t.Run("same seed", func(t *testing.T) {
		sameState(t, ref, runSteps(t, g, with(1, 0), steps))
	})
	t.Run("other seed differs", func(t *testing.T) {
		c := with(1, 0)
		c.Seed++
		o := runSteps(t, g, c, steps)
		if o.Positions(0)[0] == ref.Positions(0)[0] {
			t.Errorf("seeds %d and %d gave the same first coordinate", base.Seed, c.Seed)
		}
	})
	for _, w := range []int{2, 3} {
		t.Run("workers", func(t *testing.T) {
			// MinBatch 1 forces the work onto several goroutines.
			e := runSteps(t, g, with(w, 1), steps)
			defer e.Close()
			sameState(t, ref, e)
		})
	}
	t.Run("GOMAXPROCS", func(t *testing.T) {
		for _, p := range []int{1, 2} {
			old := runtime.GOMAXPROCS(p)
			e := runSteps(t, g, with(0, 1), steps)
			runtime.GOMAXPROCS(old)
			sameState(t, ref, e)
			e.Close()
		}
	})
}

// TestBetaZeroSamplesPrior checks that the beta = 0 rung of a tempered run
// samples the prior, and that a likelihood of -Inf rejects a point at every
// beta (it restricts the prior to the likelihood's domain) without
// producing NaN densities or calling LogLike outside the prior support.
func TestBetaZeroSamplesPrior(t *testing.T) {
	var outside atomic.Int64
	tg := funcTarget{
		dim: 2,
		draw: func(r *rand.Rand, x []float64) {
			for i := range x {
				x[i] = r.NormFloat64()
			}
		},
		prior: func(x []float64) float64 {
			if math.Abs(x[0]) > 50 || math.Abs(x[1]) > 50 {
				return math.Inf(-1)
			}
			return -0.5 * (x[0]*x[0] + x[1]*x[1])
		},
		like: func(x []float64) float64 {
			if math.Abs(x[0]) > 50 || math.Abs(x[1]) > 50 {
				outside.Add(1)
			}
			if x[0] < 0 {
				return math.Inf(-1) // outside the model's domain
			}
			r0, r1 := (x[0]-3)/0.3, (x[1]-3)/0.3
			return -0.5 * (r0*r0 + r1*r1)
		},
	}
	ladder, err := PowerLadder(6, 5)
	if err != nil {
		t.Fatal(err)
	}
	const walkers = 32
	hot := len(ladder) - 1
	pos, e := collect(t, tg, Config{Walkers: walkers, Seed: 9, Betas: ladder}, hot, 500, 4000)
	if e.Beta(hot) != 0 {
		t.Fatalf("hottest beta = %v, want 0", e.Beta(hot))
	}
	for r := range e.Rungs() {
		for w, v := range e.LnPost(r) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Errorf("rung %d walker %d: ln post = %v", r, w, v)
			}
		}
	}
	if n := outside.Load(); n != 0 {
		t.Errorf("LogLike called %d times outside the prior support", n)
	}
	tau := maxTau(t, pos, walkers, 2)
	x0 := thin(param(pos, walkers, 2, 0), walkers, int(math.Ceil(tau)))
	x1 := thin(param(pos, walkers, 2, 1), walkers, int(math.Ceil(tau)))
	for _, c := range []struct {
		name string
		x    []float64
		cdf  func(float64) float64
	}{
		// Prior N(0,1) restricted to x0 >= 0: half-normal, CDF 2 Phi(x) - 1.
		{"x0 ~ half-normal", x0, func(v float64) float64 { return math.Max(0, 2*distuv.UnitNormal.CDF(v)-1) }},
		{"x1 ~ N(0,1)", x1, distuv.UnitNormal.CDF},
	} {
		if D, p := ksPValue(c.x, c.cdf); p < ksAlpha {
			t.Errorf("beta = 0 rung, %s: KS D = %.4g with %d draws, p = %.2g < %g", c.name, D, len(c.x), p, ksAlpha)
		}
	}
}

// TestTemperingBimodal is why tempering exists: two well-separated modes
// (16 sigma apart) with weights 0.3 and 0.7. A single ensemble cannot move
// walkers between them (a stretch move between walkers in different modes
// lands between the modes and is rejected), so its weights stay those of
// the starting points; with parallel tempering the hot rungs cross freely
// and swaps carry the walkers down to the cold rung.
func TestTemperingBimodal(t *testing.T) {
	const w1, w2, sig = 0.3, 0.7, 0.5
	tg := funcTarget{
		dim: 2, draw: boxDraw(-10, 10), prior: boxPrior(-10, 10),
		like: func(x []float64) float64 {
			a := (x[0]+4)*(x[0]+4) + x[1]*x[1]
			b := (x[0]-4)*(x[0]-4) + x[1]*x[1]
			la := math.Log(w1) - a/(2*sig*sig)
			lb := math.Log(w2) - b/(2*sig*sig)
			m := math.Max(la, lb)
			return m + math.Log(math.Exp(la-m)+math.Exp(lb-m))
		},
	}
	weight := func(pos []float64) float64 {
		n := 0
		for i := 0; i < len(pos); i += 2 {
			if pos[i] > 0 {
				n++
			}
		}
		return float64(n) / float64(len(pos)/2)
	}
	const walkers = 32
	ladder, err := GeometricLadder(10, 1e-3)
	if err != nil {
		t.Fatal(err)
	}
	pt, e := collect(t, tg, Config{Walkers: walkers, Seed: 21, Betas: ladder}, 0, 1000, 6000)
	// Tolerance 0.05, the accuracy asked of the default settings; the Monte-Carlo error of the
	// weight with this many swaps is about 0.01.
	t.Logf("tempered weight %.4f, swap acceptance %.3f", weight(pt), e.SwapAcceptance())
	if got := weight(pt); math.Abs(got-w2) > 0.05 {
		t.Errorf("tempered weight of the x > 0 mode = %.3f, want %.1f ± 0.05 (swap acceptance %v)", got, w2, e.SwapAcceptance())
	}
	// R-hat (Vehtari et al. 2021) tells the two apart: near 1 when the
	// walkers visit both modes, far above 1.1 when each stays in its own.
	// 1.05: well mixed but only 6000 steps of a bimodal target.
	if rh := SplitRhat(param(pt, walkers, 2, 0), 6000, walkers); rh > 1.05 {
		t.Errorf("tempered R-hat of x0 = %.4g, want <= 1.05", rh)
	}
	single, _ := collect(t, tg, Config{Walkers: walkers, Seed: 21}, 0, 1000, 6000)
	if rh := SplitRhat(param(single, walkers, 2, 0), 6000, walkers); rh < 1.1 {
		t.Errorf("untempered R-hat of x0 = %.4g, want > 1.1 (walkers never change mode)", rh)
	}
	t.Logf("untempered weight %.4f", weight(single))
	if got := weight(single); math.Abs(got-w2) <= 0.05 {
		t.Errorf("untempered weight = %.3f is within 0.05 of %.1f: the demonstration of why tempering is needed no longer holds", got, w2)
	}
}

func TestLadders(t *testing.T) {
	g, err := GeometricLadder(5, 1e-4)
	if err != nil {
		t.Fatal(err)
	}
	p, err := PowerLadder(5, 5)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name      string
		got, want []float64
	}{
		// beta_r = betaMin^(r/(n-1)) and ((n-1-r)/(n-1))^5, evaluated by hand.
		{"geometric", g, []float64{1, 0.1, 0.01, 0.001, 1e-4}},
		{"power 5", p, []float64{1, math.Pow(0.75, 5), math.Pow(0.5, 5), math.Pow(0.25, 5), 0}},
	}
	for _, tc := range tests {
		for i := range tc.want {
			// 1e-12 relative: exp/log round-off only.
			if math.Abs(tc.got[i]-tc.want[i]) > 1e-12*tc.want[i] {
				t.Errorf("%s[%d] = %v, want %v", tc.name, i, tc.got[i], tc.want[i])
			}
		}
	}
	if _, err := GeometricLadder(3, 1.5); err == nil {
		t.Error("GeometricLadder accepted betaMin 1.5")
	}
	if _, err := PowerLadder(1, 5); err == nil {
		t.Error("PowerLadder accepted 1 rung")
	}
}

// TestLadderAdaptation checks that adaptation equalises the swap acceptance
// between neighbouring rungs (the fixed point of Vousden, Farr & Mandel
// 2016, eq. 12) and stops at AdaptSteps.
func TestLadderAdaptation(t *testing.T) {
	g := newGaussTarget(t, make([]float64, 4), [][]float64{{1, 0, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 0}, {0, 0, 0, 1}})
	// A geometric ladder far too wide at the cold end.
	ladder := []float64{1, 0.05, 0.02, 0.01, 1e-3}
	cfg := Config{Walkers: 16, Seed: 3, Betas: ladder, AdaptLadder: true, AdaptSteps: 4000}
	e := runSteps(t, g, cfg, 4000)
	frozen := e.Betas()
	if e.LadderFrozenAt() != 4000 {
		t.Errorf("LadderFrozenAt = %d, want 4000", e.LadderFrozenAt())
	}
	// Measure acceptance on the frozen ladder.
	f := runSteps(t, g, Config{Walkers: 16, Seed: 4, Betas: frozen}, 3000)
	acc := f.SwapAcceptance()
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, a := range acc {
		lo, hi = math.Min(lo, a), math.Max(hi, a)
	}
	t.Logf("adapted ladder %.4g, swap acceptance %.3f", frozen, acc)
	// Equal acceptance within 0.15: adaptation runs 4000 steps with a
	// decaying gain, so the fixed point is approached, not reached.
	if hi-lo > 0.15 {
		t.Errorf("swap acceptance after adaptation %v spans %.2f; ladder %v", acc, hi-lo, frozen)
	}
	for range 10 {
		e.Step()
	}
	for r, b := range e.Betas() {
		if b != frozen[r] {
			t.Errorf("beta[%d] changed after freezing: %v -> %v", r, frozen[r], b)
		}
	}
}

// TestStepAllocs enforces the zero-allocation steady state of Step, serial
// and with the work split across goroutines, with tempering and a move mix.
func TestStepAllocs(t *testing.T) {
	ladder, err := GeometricLadder(3, 0.1)
	if err != nil {
		t.Fatal(err)
	}
	for _, workers := range []int{1, 2} {
		e, err := New(noopTarget{3}, Config{
			Walkers: 16, Seed: 1, Workers: workers, MinBatch: 1, Betas: ladder,
			Moves: []WeightedMove{{Stretch{A: 2}, 1}, {DefaultDiffEvolution(3), 1}},
		})
		if err != nil {
			t.Fatal(err)
		}
		e.Step()
		if n := testing.AllocsPerRun(100, func() { e.Step() }); n != 0 {
			t.Errorf("workers = %d: %v allocations per Step, want 0", workers, n)
		}
		e.Close()
	}
}

// pickyMove is a user-defined move that checks its settings and needs
// three partners.
type pickyMove struct {
	Stretch
	bad bool
}

func (m pickyMove) Validate() error {
	if m.bad {
		return errors.New("picky: bad settings")
	}
	return nil
}
func (pickyMove) Partners() int { return 3 }

// TestOptionalMoveInterfaces checks that New honours Validator and
// Partnered on moves defined outside the package.
func TestOptionalMoveInterfaces(t *testing.T) {
	tg := newGaussTarget(t, []float64{0}, [][]float64{{1}})
	for _, tc := range []struct {
		move    Move
		walkers int
		want    string
	}{
		{pickyMove{Stretch: Stretch{A: 2}, bad: true}, 8, "picky: bad settings"},
		{pickyMove{Stretch: Stretch{A: 2}}, 4, "needs 3 walkers in each half"},
		{pickyMove{Stretch: Stretch{A: 2}}, 6, ""},
	} {
		_, err := New(tg, Config{Walkers: tc.walkers, Seed: 1, Moves: []WeightedMove{{Move: tc.move, Weight: 1}}})
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%d walkers: %v", tc.walkers, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("%d walkers: error %v, want one containing %q", tc.walkers, err, tc.want)
		}
	}
}

// refStep is Step written the plain way: the move through the Move
// interface with the walker's *rand.Rand, math.Log for the Metropolis
// test, one flattened loop over (rung, walker of the half). Step must
// produce the same chain bit for bit.
func refStep(e *Ensemble) {
	hw := e.nw / 2
	d := e.dim
	for h := range 2 {
		for j := range hw * len(e.rungs) {
			r := j / hw
			w := h*hw + j%hw
			g := &e.rungs[r]
			o := (1 - h) * hw
			others := g.pos[o*d : (o+hw)*d]
			rng := g.rng[w]
			m := e.moves[0].Move
			if len(e.moves) > 1 {
				u := rng.Float64()
				for i, c := range e.cumW {
					if u < c {
						m = e.moves[i].Move
						break
					}
				}
			}
			x := g.pos[w*d : w*d+d]
			y := g.prop[w*d : w*d+d]
			lnf := m.Propose(rng, x, others, hw, y)
			lp := e.t.LogPrior(y)
			if math.IsNaN(lp) || math.IsInf(lp, 0) {
				continue
			}
			ll := e.t.LogLike(y)
			if math.IsNaN(ll) || math.IsInf(ll, 0) {
				continue
			}
			post := lnPost(e.betas[r], lp, ll)
			lnA := lnf + post - g.lpost[w]
			if math.IsNaN(lnA) {
				continue
			}
			if lnA >= 0 || math.Log(rng.Float64()) < lnA {
				copy(x, y)
				g.lp[w], g.ll[w], g.lpost[w] = lp, ll, post
				g.acc[w]++
			}
		}
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
}

// wrappedStretch is the stretch move behind a type of its own, so that the
// ensemble can only reach it through the Move interface.
type wrappedStretch struct{ Stretch }

// TestStepMatchesReference checks Step against refStep bit for bit over
// dimensions, half sizes that are and are not powers of two, stretch
// scales from barely above 1 to very wide, move mixtures, user-defined
// moves, tempered ladders with beta = 0 and adaptation, targets with
// forbidden regions, and several workers.
func TestStepMatchesReference(t *testing.T) {
	ladder, err := GeometricLadder(4, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	hot, err := PowerLadder(3, 5)
	if err != nil {
		t.Fatal(err)
	}
	g2 := newGaussTarget(t, []float64{0, 1}, [][]float64{{1, 0.9}, {0.9, 1}})
	g3 := newGaussTarget(t, []float64{0, 1, 2}, [][]float64{{1, 0.5, 0}, {0.5, 2, 0.3}, {0, 0.3, 1}})
	// A density that is -Inf on half of its box and huge elsewhere, so
	// that ln A spans many orders of magnitude.
	wild := funcTarget{dim: 2, draw: boxDraw(0.5, 1), prior: boxPrior(-3, 3),
		like: func(x []float64) float64 {
			if x[0] < 0 {
				return math.Inf(-1)
			}
			return 1e6 * x[0] * x[1]
		}}
	mix := []WeightedMove{{Stretch{A: 2}, 0.5}, {DefaultDiffEvolution(3), 0.3}, {wrappedStretch{Stretch{A: 1.5}}, 0.2}}
	tests := []struct {
		name string
		tg   Target
		cfg  Config
	}{
		{"noop d=1", noopTarget{1}, Config{Walkers: 8}},
		{"noop d=2", noopTarget{2}, Config{Walkers: 32}},
		{"noop d=3", noopTarget{3}, Config{Walkers: 32}},
		{"noop d=3 half 5", noopTarget{3}, Config{Walkers: 10}},
		{"noop d=7", noopTarget{7}, Config{Walkers: 14}},
		{"gauss d=2", g2, Config{Walkers: 12}},
		{"gauss d=3 A=1.0001", g3, Config{Walkers: 16, Moves: []WeightedMove{{Stretch{A: 1.0001}, 1}}}},
		{"gauss d=3 A=1e3", g3, Config{Walkers: 16, Moves: []WeightedMove{{Stretch{A: 1e3}, 1}}}},
		{"gauss d=3 mixture", g3, Config{Walkers: 12, Moves: mix}},
		{"gauss d=3 wrapped", g3, Config{Walkers: 12, Moves: []WeightedMove{{wrappedStretch{Stretch{A: 2}}, 1}}}},
		{"gauss d=3 tempered adapted", g3, Config{Walkers: 12, Betas: ladder, AdaptLadder: true, AdaptSteps: 50}},
		{"gauss d=3 tempered mixture", g3, Config{Walkers: 12, Betas: ladder, SwapEvery: 3, Moves: mix}},
		{"wild beta=0", wild, Config{Walkers: 8, Betas: hot}},
		{"wild workers=2", wild, Config{Walkers: 8, Betas: hot, Workers: 2, MinBatch: 1}},
		{"gauss d=3 tempered workers=3", g3, Config{Walkers: 12, Betas: ladder, Workers: 3, MinBatch: 1, Moves: mix}},
	}
	const steps = 300
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tc.cfg.Seed = 11
			got, err := New(tc.tg, tc.cfg)
			if err != nil {
				t.Fatal(err)
			}
			defer got.Close()
			c := tc.cfg
			c.Workers = 1
			want, err := New(tc.tg, c)
			if err != nil {
				t.Fatal(err)
			}
			for range steps {
				if err := got.Step(); err != nil {
					t.Fatal(err)
				}
				refStep(want)
			}
			sameState(t, want, got)
			// The chains must have moved: a reference that accepts nothing
			// would agree with a sampler that does nothing.
			if a := got.AcceptanceFractions(0); a[0] == 0 && a[len(a)-1] == 0 {
				t.Errorf("no proposal accepted in %d steps", steps)
			}
		})
	}
}

// pcgPair returns the sampler's pcg and math/rand/v2's PCG in the same
// state.
func pcgPair(seed uint64) (*pcg, *rand.PCG) {
	return &pcg{seed, seed ^ 0x9e37}, rand.NewPCG(seed, seed^0x9e37)
}

// samePCG reports whether p and q are in the same state, by their
// encodings.
func samePCG(p *pcg, q *rand.PCG) bool {
	a, _ := p.MarshalBinary()
	b, _ := q.MarshalBinary()
	return string(a) == string(b)
}

// TestPCGDraws checks pcgIntN and pcgFloat64 against math/rand/v2's own
// IntN and Float64 on a Rand wrapping an identical PCG: same values, same
// draws consumed. The n include powers of two (masking), small odd n, and
// 3 x 2^61, for which the standard library rejects a quarter of the draws.
func TestPCGDraws(t *testing.T) {
	for _, n := range []int{1, 2, 3, 5, 16, 17, 1000, 1 << 20, 3 << 61, math.MaxInt64} {
		p, q := pcgPair(uint64(n))
		r := rand.New(q)
		for i := range 2000 {
			if got, want := pcgIntN(p, n), r.IntN(n); got != want {
				t.Fatalf("n = %d, draw %d: pcgIntN = %d, IntN = %d", n, i, got, want)
			}
			if got, want := pcgFloat64(p), r.Float64(); math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("n = %d, draw %d: pcgFloat64 = %v, Float64 = %v", n, i, got, want)
			}
		}
		if p.Uint64() != q.Uint64() {
			t.Errorf("n = %d: the streams consumed different numbers of draws", n)
		}
	}
}

// TestLnBracket checks lo <= math.Log(x) <= hi (the standard library as
// the reference) over the whole range of normal float64, at the ends of
// each binade and next to 1, and that other x are refused.
func TestLnBracket(t *testing.T) {
	xs := []float64{1, math.Nextafter(1, 0), math.Nextafter(1, 2), 2, 0.5, math.Sqrt2, 1.0 / 3,
		math.MaxFloat64, 0x1p-1022, math.Nextafter(0x1p-1022, 1), math.E}
	for k := -1022; k <= 1023; k++ {
		b := math.Ldexp(1, k)
		xs = append(xs, b, math.Nextafter(2*b, 0))
	}
	r := rand.New(rand.NewPCG(5, 6))
	for range 200000 {
		xs = append(xs, math.Ldexp(1+r.Float64(), r.IntN(2046)-1022), r.Float64()*1.5+0.5)
	}
	tab := newLnTable()
	worst := 0.0
	for _, x := range xs {
		if math.IsInf(x, 0) {
			continue // 2 x MaxFloat64's binade
		}
		lo, hi, ok := tab.bracket(x)
		want := math.Log(x)
		if !ok || !(lo <= want && want <= hi) {
			t.Fatalf("bracket(%v) = [%v, %v], %v; math.Log = %v", x, lo, hi, ok, want)
		}
		// Rounding of l -+ lnTol at |l| up to 745: 1e-12.
		if w := hi - lo; w > 2*lnTol+1e-12 {
			t.Fatalf("bracket(%v) is %v wide, want 2 lnTol = %v", x, w, 2*lnTol)
		}
		worst = math.Max(worst, math.Abs((lo+hi)/2-want))
	}
	// The series bound |r|^3 / (3 (1 - |r|)) at |r| = 1/256, and the
	// rounding of k ln 2 at |k| up to 1022.
	if r := 1.0 / 256; worst > r*r*r/(3*(1-r))+1e-12 {
		t.Errorf("largest error %v exceeds the truncation bound", worst)
	}
	for _, x := range []float64{0, math.Copysign(0, -1), 5e-324, math.Nextafter(0x1p-1022, 0), -1, math.Inf(1), math.Inf(-1), math.NaN()} {
		if _, _, ok := tab.bracket(x); ok {
			t.Errorf("bracket(%v) claims a bracket", x)
		}
	}
}

// refMetropolis is the Metropolis–Hastings test as the sampler first
// wrote it: NaN rejects, lnA >= 0 accepts, otherwise one uniform draw u
// and math.Log(u) < lnA.
func refMetropolis(r *rand.Rand, lnA float64) bool {
	if math.IsNaN(lnA) {
		return false
	}
	return lnA >= 0 || math.Log(r.Float64()) < lnA
}

// TestAcceptStretch checks metropolis, acceptStretch, decideStretch and the
// decision passes of stretchRange against refMetropolis with
// lnA = (c ln z + post) - lpost, on cases built to sit where the brackets
// cannot decide (ln A within a few ulp of 0, or of ln u for the u about to
// be drawn) and on infinities, NaN, overflow and z outside the normal
// range: same outcome, same draws.
func TestAcceptStretch(t *testing.T) {
	type tc struct{ c, z, post, lpost float64 }
	var cases []tc
	inf, nan := math.Inf(1), math.NaN()
	for _, c := range []float64{0, 1, 2, 6} {
		for _, z := range []float64{0.5, 1, math.Nextafter(1, 0), math.Nextafter(1, 2), 1.0001, 0.9999, 2, 1e-300, 1e300,
			0, 5e-324, inf, nan} {
			for _, d := range []float64{0, 1e-300, -1e-300, 1e-15, -1e-15, 1e-4, -1e-4, 0.3, -0.3, -40, 40} {
				base := -c * math.Log(z) // lnA near d
				cases = append(cases, tc{c, z, base + d, 0}, tc{c, z, 7 + base + d, 7})
			}
			for _, pl := range [][2]float64{{inf, 0}, {-inf, 0}, {inf, inf}, {-inf, -inf}, {0, inf}, {0, -inf},
				{nan, 0}, {0, nan}, {math.MaxFloat64, -math.MaxFloat64}, {-math.MaxFloat64, math.MaxFloat64}} {
				cases = append(cases, tc{c, z, pl[0], pl[1]})
			}
		}
	}
	tab, utab := newLnTable(), newUTable()
	lnA := func(k tc) float64 { return float64(float64(k.c*math.Log(k.z))+k.post) - k.lpost }
	for i, k := range cases {
		for seed := range uint64(20) {
			p, q := pcgPair(seed)
			// Put ln A within a few ulp of ln u for the u the test will
			// draw if it draws one.
			peek := *q
			u := rand.New(&peek).Float64()
			for _, shift := range []float64{0, math.Log(u)} {
				for ulps := -2; ulps <= 2; ulps++ {
					k := k
					if shift != 0 && finite(k.post) && finite(k.lpost) {
						k.post += shift
						for range max(ulps, -ulps) {
							k.post = math.Nextafter(k.post, math.Inf(ulps))
						}
					}
					b := *q
					want := refMetropolis(rand.New(&b), lnA(k))
					for _, f := range []struct {
						name string
						run  func(p *pcg) bool
					}{
						{"acceptStretch", func(p *pcg) bool { return acceptStretch(tab, p, k.c, k.z, k.post, k.lpost) }},
						{"decideStretch", func(p *pcg) bool { return decideStretch(tab, p, k.c, k.z, k.post, k.lpost) == 1 }},
						{"metropolis", func(p *pcg) bool { return metropolis(tab, p, lnA(k)) }},
						{"stretchFirst+Second", func(p *pcg) bool {
							pcgs, lpost := []pcg{*p}, []float64{k.lpost}
							// beta = 1, ln prior = 0: post = 0 + ln L = ln L.
							ps := []proposal{{z: k.z, lp: 0, ll: k.post, ok: true}}
							q, kept := stretchFirst(tab, nil, pcgs, k.c, 1, lpost, ps, make([]int, 1), make([]int, 1))
							kept = stretchSecond(utab, pcgs, k.c, lpost, ps, q, kept)
							*p = pcgs[0]
							return len(kept) == 1
						}},
					} {
						a := *p
						if got := f.run(&a); got != want || !samePCG(&a, &b) {
							t.Fatalf("case %d %+v seed %d: %s = %v, reference %v (ln A = %v, ln u = %v); same draws: %v",
								i, k, seed, f.name, got, want, lnA(k), math.Log(u), samePCG(&a, &b))
						}
					}
				}
			}
		}
	}
}
