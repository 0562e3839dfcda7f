package sampler

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"tautline/internal/numeric"
)

// recordedEnsemble steps a new ensemble n times recording its history,
// as Run does.
func recordedEnsemble(t testing.TB, tg Target, cfg Config, n int) *Ensemble {
	t.Helper()
	e, err := New(tg, cfg)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(e.Close)
	e.hist = newHistory(e)
	for range n {
		if err := e.Step(); err != nil { // Step records into e.hist
			t.Fatal(err)
		}
	}
	return e
}

// sameFloat is bitwise equality, all NaNs being equal.
func sameFloat(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
}

// reportDiff describes the first difference between two reports, "" if
// they are identical to the bit.
func reportDiff(a, b Report) string {
	if a.Steps != b.Steps || a.Walkers != b.Walkers || len(a.Params) != len(b.Params) || fmt.Sprint(a.StuckWalkers) != fmt.Sprint(b.StuckWalkers) {
		return fmt.Sprintf("shape: %+v vs %+v", a, b)
	}
	for _, f := range []struct {
		name string
		x, y float64
	}{{"MaxTau", a.MaxTau, b.MaxTau}, {"MinESS", a.MinESS, b.MinESS}, {"MaxRhat", a.MaxRhat, b.MaxRhat}, {"MeanAcceptance", a.MeanAcceptance, b.MeanAcceptance}} {
		if !sameFloat(f.x, f.y) {
			return fmt.Sprintf("%s %v vs %v", f.name, f.x, f.y)
		}
	}
	for i := range a.Params {
		p, q := a.Params[i], b.Params[i]
		if p.Index != q.Index || p.Name != q.Name || p.TauReliable != q.TauReliable ||
			!sameFloat(p.Tau, q.Tau) || !sameFloat(p.ESS, q.ESS) || !sameFloat(p.BulkESS, q.BulkESS) ||
			!sameFloat(p.TailESS, q.TailESS) || !sameFloat(p.Rhat, q.Rhat) {
			return fmt.Sprintf("param %d: %+v vs %+v", i, p, q)
		}
	}
	return ""
}

func evaluationDiff(a, b evaluation) string {
	if a.burn != b.burn || a.burnIndex != b.burnIndex || a.thin != b.thin || a.converged != b.converged || !sameFloat(a.needSteps, b.needSteps) {
		return fmt.Sprintf("burn %d/%d index %d/%d thin %d/%d converged %v/%v need %v/%v",
			a.burn, b.burn, a.burnIndex, b.burnIndex, a.thin, b.thin, a.converged, b.converged, a.needSteps, b.needSteps)
	}
	return reportDiff(a.report, b.report)
}

// identityCases are histories that take every route of the diagnostics:
// FFT and lag-by-lag sums, the fallback from the latter to the former
// (slow mixing), ties from rejected moves, a constant chain, one and
// three parameters.
func identityCases(t testing.TB) []struct {
	name string
	e    *Ensemble
} {
	g2 := newGaussTarget(t, []float64{0, 0}, [][]float64{{1, 0.5}, {0.5, 1}})
	g3 := newGaussTarget(t, []float64{1, -2, 0}, [][]float64{{1, 0.99, 0}, {0.99, 1, 0}, {0, 0, 4}})
	g1 := newGaussTarget(t, []float64{5}, [][]float64{{1e-4}})
	// A narrow ridge in a wide box: most stretch moves are rejected, so
	// walkers repeat their positions (tied draws).
	ridge := funcTarget{dim: 2, draw: boxDraw(-1, 1), prior: boxPrior(-1, 1), like: func(x []float64) float64 {
		d := x[0] - x[1]
		return -0.5 * d * d / 1e-6
	}}
	stuck := funcTarget{dim: 2, draw: func(_ *rand.Rand, x []float64) { x[0], x[1] = 0.25, -3 }, prior: func([]float64) float64 { return 0 }, like: func([]float64) float64 { return 0 }}
	return []struct {
		name string
		e    *Ensemble
	}{
		{"gauss2 32x8000", recordedEnsemble(t, g2, Config{Walkers: 32, Seed: 1, Workers: 1}, 8000)},
		{"gauss2 16x300", recordedEnsemble(t, g2, Config{Walkers: 16, Seed: 3, Workers: 1}, 300)},
		{"gauss3 slow 8x6000", recordedEnsemble(t, g3, Config{Walkers: 8, Seed: 2, Workers: 1}, 6000)},
		{"gauss1 10x2500", recordedEnsemble(t, g1, Config{Walkers: 10, Seed: 4, Workers: 1}, 2500)},
		{"ridge 12x3000", recordedEnsemble(t, ridge, Config{Walkers: 12, Seed: 5, Workers: 1}, 3000)},
		{"constant 8x1200", recordedEnsemble(t, stuck, Config{Walkers: 8, Seed: 6, Workers: 1}, 1200)},
		{"gauss2 laddered 16x2000", recordedEnsemble(t, g2, Config{Walkers: 16, Seed: 7, Workers: 1, Betas: []float64{1, 0.5, 0.25}, AdaptLadder: true, AdaptSteps: 300}, 2000)},
	}
}

// TestEvaluateMatchesReference checks every check and final evaluation
// against the implementation kept in diagref_test.go, to the bit, for
// several burn-in, thinning and criteria settings: all of the final
// report, and of a check all but its R-hat, which decides nothing (shown
// as progress, estimated from a thinner chain) and must stay close.
func TestEvaluateMatchesReference(t *testing.T) {
	opts := []RunOptions{
		{Burn: -1},
		{Burn: 100, Thin: 3, Until: Criteria{ESS: 500, TauMultiple: 20, Rhat: 1.05}},
		{Burn: -1, MinSteps: 10, Until: Criteria{Rhat: 1.2}},
		{Burn: -1, Until: Criteria{ESS: 1e9, Rhat: 1.01}},
	}
	var routes [3]int // checks estimating tau once, twice (checkPass), by the final report's rule
	cases := identityCases(t)
	for _, c := range cases {
		for i, opt := range opts {
			opt.MaxSteps = c.e.steps
			st := stateOf(c.e)
			first := st.first()
			switch _, burn, ok := checkPass(st, opt); {
			case !ok:
				routes[2]++
			case opt.Burn >= 0 || burn == first+(c.e.steps-first)/10:
				routes[0]++
			default:
				routes[1]++
			}
			for _, final := range []bool{false, true} {
				got := evaluate(c.e, opt, final)
				want := refEvaluate(c.e, opt, final)
				if !final {
					// Tolerance (common practice): R-hat - 1 from a
					// quarter of the draws, spaced about tau apart,
					// within a third of the checked chain's R-hat - 1
					// (its sampling noise is of the order of itself),
					// plus 0.002 for the three decimals shown.
					if g, w := got.report.MaxRhat, want.report.MaxRhat; !sameFloat(g, w) && !(math.Abs(g-w) <= 0.35*(w-1)+0.002) {
						t.Errorf("%s, options %d: shown R-hat %v, checked chain's %v", c.name, i, g, w)
					}
					got.report.MaxRhat = want.report.MaxRhat
					for k := range got.report.Params {
						got.report.Params[k].Rhat = want.report.Params[k].Rhat
					}
				}
				if d := evaluationDiff(got, want); d != "" {
					t.Errorf("%s, options %d, final %v: %s", c.name, i, final, d)
				}
			}
		}
	}
	if routes[0] == 0 || routes[1] == 0 || routes[2] == 0 {
		t.Errorf("checks estimating tau once, twice and by the final report's rule: %v; every route must run", routes)
	}
}

// TestDiagnoseMatchesReference checks Diagnose against the reference on
// chains of every length class, to the bit.
func TestDiagnoseMatchesReference(t *testing.T) {
	for _, c := range []struct {
		phi                 float64
		steps, walkers, dim int
	}{
		{0.5, 1, 2, 1}, {0.5, 7, 3, 2}, {0.9, 9, 4, 1}, {0.95, 500, 6, 3},
		{0.9, 1024, 4, 2}, {0.99, 3000, 6, 2}, {0.999, 2000, 4, 1}, {0.3, 5003, 5, 2},
		{0.9, 1500, 4, 5}, // five parameters: an uneven share on two or more goroutines
	} {
		pos := make([]float64, c.steps*c.walkers*c.dim)
		for k := range c.dim {
			x := ar1(c.phi, c.steps, c.walkers, uint64(10+k))
			for i, v := range x {
				pos[i*c.dim+k] = v
			}
		}
		acc := make([]float64, c.walkers)
		for w := range acc {
			acc[w] = 0.2 + 0.01*float64(w)
		}
		for _, tails := range []bool{false, true} {
			got, gerr := diagnose(pos, c.steps, c.walkers, c.dim, acc, nil, tails)
			want, werr := refDiagnose(pos, c.steps, c.walkers, c.dim, acc, nil, tails)
			if (gerr == nil) != (werr == nil) {
				t.Fatalf("%+v: errors %v vs %v", c, gerr, werr)
			}
			if d := reportDiff(got, want); d != "" {
				t.Errorf("%+v tails %v: %s", c, tails, d)
			}
		}
	}
}

// tiedDraws returns n values with ties: rounded normals, repeats (as
// rejected moves make), signed zeros, and with nonFinite infinities and a
// NaN.
func tiedDraws(n int, seed uint64, nonFinite bool) []float64 {
	r := rand.New(rand.NewPCG(seed, 9))
	v := make([]float64, n)
	for i := range v {
		switch {
		case i%5 == 0:
			v[i] = math.Round(r.NormFloat64() * 3)
		case i%5 == 1 && i > 0:
			v[i] = v[i-1]
		case i%11 == 2:
			v[i] = math.Copysign(0, -1)
		default:
			v[i] = r.NormFloat64()*1e3 + 7
		}
	}
	if nonFinite && n > 4 {
		v[1], v[3], v[4] = math.Inf(1), math.Inf(-1), math.NaN()
	}
	return v
}

// TestSortPairsMatchesSlicesSort checks the radix sort against the
// standard library's comparison sort (slices.Sort) on data with ties.
func TestSortPairsMatchesSlicesSort(t *testing.T) {
	for _, n := range []int{1, 2, 31, 32, 1000, 70001} {
		v := tiedDraws(n, uint64(n), false)
		var r ranker
		r.load(n, func(i int) float64 { return v[i] })
		r.sort(nil)
		want := slices.Clone(v)
		slices.Sort(want)
		seen := make([]bool, n)
		for p := range n {
			if got := r.at(p); got != want[p] {
				t.Fatalf("n=%d: position %d holds %v, want %v", n, p, got, want[p])
			}
			i := r.idx[p]
			if seen[i] || math.Float64bits(v[i]) != math.Float64bits(r.at(p)) {
				t.Fatalf("n=%d: position %d points at value %d = %v, holds %v", n, p, i, v[i], r.at(p))
			}
			seen[i] = true
		}
	}
}

// TestScoresMatchReferenceRanker checks the scores of the draws and of the
// folded draws |x - median| (merged from the order of the draws, or ranked
// afresh for non-finite draws) against the radix ranker kept in
// diagref_test.go, to the bit.
func TestScoresMatchReferenceRanker(t *testing.T) {
	for _, c := range []struct {
		n         int
		nonFinite bool
	}{{1, false}, {2, false}, {9, false}, {1000, false}, {4097, false}, {1000, true}} {
		v := tiedDraws(c.n, uint64(c.n)+100, c.nonFinite)
		var ref refRanker
		want := ref.normalize(v, nil)
		med := medianSorted(ref.sorted)
		sorted := slices.Clone(ref.sorted)
		f := make([]float64, c.n)
		for i, x := range v {
			f[i] = math.Abs(x - med)
		}
		wantF := ref.normalize(f, nil)
		var r ranker
		got := r.normalize(v, nil)
		if m := r.median(); !sameFloat(m, med) {
			t.Errorf("n=%d: median %v, want %v", c.n, m, med)
		}
		for _, p := range []float64{0, 0.05, 0.5, 0.95, 1} {
			if q, w := r.quantile(p), numeric.Quantile(sorted, p); !sameFloat(q, w) {
				t.Errorf("n=%d: quantile %v = %v, want %v (numeric.Quantile)", c.n, p, q, w)
			}
		}
		gotF := make([]float64, c.n)
		if !r.foldScore(gotF, med) {
			if !c.nonFinite {
				t.Fatalf("n=%d: the merge refused finite draws", c.n)
			}
			gotF = r.normalize(f, nil)
		}
		for i := range v {
			if !sameFloat(got[i], want[i]) || !sameFloat(gotF[i], wantF[i]) {
				t.Fatalf("n=%d value %d = %v: scores %v and %v, want %v and %v", c.n, i, v[i], got[i], gotF[i], want[i], wantF[i])
			}
		}
	}
}

// TestDiagnoseNonFinite checks Diagnose against the reference on chains
// holding ties, infinities and NaNs, where the folded draws are ranked
// afresh.
func TestDiagnoseNonFinite(t *testing.T) {
	const steps, walkers, dim = 1100, 4, 2
	pos := tiedDraws(steps*walkers*dim, 3, true)
	got, _ := diagnose(pos, steps, walkers, dim, nil, nil, true)
	want, _ := refDiagnose(pos, steps, walkers, dim, nil, nil, true)
	if d := reportDiff(got, want); d != "" {
		t.Error(d)
	}
}

// TestDiagnoseSchedulingIndependent checks that the report is the same to
// the bit whether the parameters are diagnosed on one goroutine or two and
// whether the lag sums are shared between two goroutines (run under -race
// to check the sharing too).
func TestDiagnoseSchedulingIndependent(t *testing.T) {
	e := identityCases(t)[0].e
	h := e.hist
	v := h.view(0, 2, h.n/2)
	var reports []Report
	for _, c := range []struct{ workers int }{{1}, {2}} {
		p := newDiagPool()
		if len(p.workers) < c.workers {
			p.workers = append(p.workers, newDiagScratch())
			p.workers[1].rk.tab = &p.tab
		}
		p.workers = p.workers[:c.workers]
		for _, par := range []bool{false, true} {
			// each sets par itself for one worker; force the other case.
			if c.workers == 1 {
				sc := p.workers[0]
				sc.par = par
				tau, _ := sc.autocorrView(v, 0, directMinLen)
				sc2 := newDiagScratch()
				sc2.par = !par
				tau2, _ := sc2.autocorrView(v, 0, directMinLen)
				if !sameFloat(tau, tau2) {
					t.Errorf("tau with shared lag sums %v: %v vs %v", par, tau, tau2)
				}
			}
			reports = append(reports, p.diagnose(v, e.AcceptanceFractions(0), nil, true, true, 1))
		}
	}
	for i, r := range reports[1:] {
		if d := reportDiff(r, reports[0]); d != "" {
			t.Errorf("schedule %d: %s", i+1, d)
		}
	}
}
