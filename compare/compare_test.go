package compare

import (
	"context"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"tautline/chains"
	"tautline/rundir"
)

// gauss is a one-dimensional target: a uniform prior on [-a, a] and a
// normalised Gaussian likelihood of width sigma about 0, whose evidence is
// Z = erf(a / (sigma sqrt 2)) / (2a) in closed form.
type gauss struct{ a, sigma float64 }

func (g gauss) Dim() int                       { return 1 }
func (g gauss) Draw(r *rand.Rand, x []float64) { x[0] = g.a * (2*r.Float64() - 1) }
func (g gauss) LogPrior(x []float64) float64 {
	if math.Abs(x[0]) > g.a {
		return math.Inf(-1)
	}
	return -math.Log(2 * g.a)
}
func (g gauss) LogLike(x []float64) float64 {
	z := x[0] / g.sigma
	return -0.5*z*z - math.Log(g.sigma*math.Sqrt(2*math.Pi))
}

func toyProblem() Problem {
	rec := func(int) any { return map[string]any{"Sampler": map[string]any{"Seed": 7}} }
	return Problem{
		DataName: "toy", DataSHA256: "0", Reference: "wide", ID: "toy-comparison",
		Models: []Model{
			{Name: "wide", Target: gauss{a: 10, sigma: 1}, Params: []string{"x"}, Priors: []string{"uniform(-10, 10)"}, Fingerprint: "w", Config: rec},
			{Name: "narrow", Target: gauss{a: 2, sigma: 1}, Params: []string{"x"}, Priors: []string{"uniform(-2, 2)"}, Fingerprint: "n", Config: rec},
		},
	}
}

func toySettings(out string) Settings {
	return Settings{Rungs: 12, Exponent: 5, Blocks: 1, Walkers: 16, Steps: 1500, Burn: -1, Seed: 7, SwapEvery: 1,
		Task: -1, Tasks: 1, Workers: 2, Out: out, Version: "test"}
}

// TestRunEvidence compares ln Z and ln B of the toy models with the closed
// form Z = erf(a/(sigma sqrt 2))/(2a), within four times the reported total
// error (the estimators' own error budget; four sigma keeps the test from
// failing by chance).
func TestRunEvidence(t *testing.T) {
	out := t.TempDir()
	res, err := Run(context.Background(), toyProblem(), toySettings(out))
	if err != nil {
		t.Fatal(err)
	}
	exact := func(a float64) float64 { return math.Log(math.Erf(a/math.Sqrt2) / (2 * a)) }
	for i, a := range []float64{10, 2} {
		r := res.Rows[i]
		if d := math.Abs(r.TI.LnZ - exact(a)); d > 4*r.TI.Total+1e-3 {
			t.Errorf("%s: ln Z %.4f ± %.4f, closed form %.4f", r.Model, r.TI.LnZ, r.TI.Total, exact(a))
		}
	}
	if res.Rows[0].Reading != "reference" || res.Rows[0].LnB != 0 {
		t.Errorf("reference row %+v", res.Rows[0])
	}
	wantB := exact(2) - exact(10)
	if d := math.Abs(res.Rows[1].LnB - wantB); d > 4*res.Rows[1].LnBErr+1e-3 {
		t.Errorf("ln B %.4f ± %.4f, closed form %.4f", res.Rows[1].LnB, res.Rows[1].LnBErr, wantB)
	}
	for _, f := range []string{"compare.json", "compare.csv", "models/wide/evidence.json", "models/narrow/lnl_beta.csv", "models/narrow/posterior.npy"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Error(err)
		}
	}
}

// TestSplitEqualsSingle runs the toy comparison in two tasks of two rung
// blocks and checks that the merge gives the same compare.csv, evidence
// and posterior bytes as the same blocks run in one process.
func TestSplitEqualsSingle(t *testing.T) {
	one, split, merged := t.TempDir(), t.TempDir(), t.TempDir()
	s := toySettings(one)
	s.Blocks, s.Steps = 2, 600
	if _, err := Run(context.Background(), toyProblem(), s); err != nil {
		t.Fatal(err)
	}
	for task := range 2 {
		st := s
		st.Out, st.Task, st.Tasks = split, task, 2
		if res, err := Run(context.Background(), toyProblem(), st); err != nil || res != nil {
			t.Fatalf("task %d: %v, %v", task, res, err)
		}
	}
	if _, err := Merge(merged, []string{split}, "test"); err != nil {
		t.Fatal(err)
	}
	// The single process integrates each model as soon as its blocks are
	// done; the merge integrates them all at the end: the same bytes.
	for _, f := range []string{"compare.csv", "models/wide/evidence.json", "models/narrow/evidence.json", "models/narrow/lnl_beta.csv", "models/wide/posterior.npy"} {
		a, _ := os.ReadFile(filepath.Join(one, f))
		b, _ := os.ReadFile(filepath.Join(merged, f))
		if len(a) == 0 || string(a) != string(b) {
			t.Errorf("%s: single:\n%.400s\nmerged:\n%.400s", f, a, b)
		}
	}
}

// TestPlan checks the units against the power ladder's definition,
// beta_k = (k/(K-1))^exponent, listed decreasing and cut into blocks.
func TestPlan(t *testing.T) {
	units, err := Plan([]string{"a", "b"}, 6, 5, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(units) != 4 {
		t.Fatalf("%d units, want 4", len(units))
	}
	var ladder []float64
	for _, u := range units[:2] {
		ladder = append(ladder, u.Betas...)
	}
	for i, b := range ladder {
		want := math.Pow(float64(5-i)/5, 5)
		if math.Abs(b-want) > 1e-15 {
			t.Errorf("beta[%d] = %g, want %g", i, b, want)
		}
	}
	if units[3].Model != "b" || units[3].Index != 1 || units[3].Block != 1 {
		t.Errorf("last unit %+v", units[3])
	}
	if _, err := Plan([]string{"a"}, 4, 5, 5); err == nil {
		t.Error("more blocks than rungs accepted")
	}
}

func TestUnitSeed(t *testing.T) {
	seen := map[uint64]bool{}
	for m := range 4 {
		for b := range 4 {
			s := UnitSeed(1, m, b)
			if seen[s] || s != UnitSeed(1, m, b) {
				t.Fatalf("seed of unit (%d, %d) repeats or is not deterministic", m, b)
			}
			seen[s] = true
		}
	}
}

func TestMergeLadder(t *testing.T) {
	for _, c := range []struct {
		betas, extra []float64
		max          int
		want         []float64
	}{
		{[]float64{1, 0.5, 0}, []float64{0.25}, 10, []float64{1, 0.5, 0.25, 0}},
		{[]float64{1, 0.5, 0}, []float64{0.25, 0.75}, 4, []float64{1, 0.5, 0.25, 0}},
		{[]float64{1, 0.5, 0}, []float64{0.5, 0, 1.5}, 10, []float64{1, 0.5, 0}},
	} {
		if got := MergeLadder(c.betas, c.extra, c.max); !slices.Equal(got, c.want) {
			t.Errorf("MergeLadder(%v, %v, %d) = %v, want %v", c.betas, c.extra, c.max, got, c.want)
		}
	}
}

// TestMergeRefuses checks that parts a user could have altered give errors
// naming the file and what is wrong, never a panic.
func TestMergeRefuses(t *testing.T) {
	good := `{"schema":1,"unit":{"model":"a","model_index":0,"block":0,"blocks":1,"betas":[1,0]},"reference":"a","models":["a"],"walkers":2,"recorded_steps":1,"params":[],"priors":[]}`
	for _, c := range []struct {
		what, from, to, want string
	}{
		{"reference not among models", `"reference":"a"`, `"reference":"z"`, "reference"},
		{"unit model not among models", `"models":["a"]`, `"models":["b","a"]`, "unit.model_index"},
		{"model name with a path", `"model":"a"`, `"model":"../a"`, "unit.model"},
		{"increasing betas", `[1,0]`, `[0,1]`, "unit.betas"},
		{"no walkers", `"walkers":2`, `"walkers":0`, "walkers"},
		{"wrong model index", `"model_index":0`, `"model_index":3`, "model_index"},
		{"missing lnl.npy", `"schema":1`, `"schema":1`, "lnl.npy"},
	} {
		dir := t.TempDir()
		pd := filepath.Join(dir, "parts", "a.block0")
		if err := os.MkdirAll(pd, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(pd, "part.json"), []byte(strings.Replace(good, c.from, c.to, 1)), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := Merge(t.TempDir(), []string{dir}, "test")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one mentioning %q", c.what, err, c.want)
		}
	}
}

// FuzzMerge feeds arbitrary bytes as part.json, beside a small valid
// lnl.npy, through Merge (the decoding and every cross-check): an error
// naming the file, or a merged result, never a panic.
func FuzzMerge(f *testing.F) {
	f.Add([]byte(`{"schema":1,"unit":{"model":"a","model_index":0,"block":0,"blocks":1,"betas":[1,0]},"reference":"a","models":["a"],"walkers":2,"recorded_steps":2,"params":[],"priors":[]}`))
	f.Add([]byte(`{"schema":1,"unit":{"model":"a","model_index":0,"block":0,"blocks":1,"betas":[1,0]},"reference":"z","models":["a"],"walkers":2,"recorded_steps":2,"params":[],"priors":[]}`))
	f.Add([]byte(`{"schema":1,"unit":{"model":"x","blocks":0}}`))
	f.Add([]byte(`{"schema":1,"config":5}`))
	f.Add([]byte(`[]`))
	f.Fuzz(func(t *testing.T, raw []byte) {
		dir := t.TempDir()
		pd := filepath.Join(dir, "parts", "a.block0")
		if err := os.MkdirAll(pd, 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(pd, "part.json"), raw, 0o644); err != nil {
			t.Fatal(err)
		}
		if err := writeToyLnL(filepath.Join(pd, "lnl.npy")); err != nil {
			t.Fatal(err)
		}
		if _, err := Merge(filepath.Join(dir, "out"), []string{dir}, "test"); err != nil && !strings.Contains(err.Error(), dir) &&
			!strings.HasPrefix(err.Error(), "model ") {
			t.Errorf("error names no file: %v", err)
		}
	})
}

// writeToyLnL writes 2 rungs x 2 steps x 2 walkers of ln L values.
func writeToyLnL(path string) error {
	return chains.WriteNPY(path, 4, 2, []float64{-1, -1.1, -1.2, -0.9, -5, -6, -4, -5.5})
}

// TestMergeHugeBlockCount checks that a part claiming an enormous number
// of rung blocks is refused at once, listing a few of the missing ones,
// instead of looping over every block it claims.
func TestMergeHugeBlockCount(t *testing.T) {
	dir := t.TempDir()
	pd := filepath.Join(dir, "parts", "a.block0")
	if err := os.MkdirAll(pd, 0o755); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(pd, "part.json")
	raw := `{"schema":1,"unit":{"model":"a","model_index":0,"block":0,"blocks":1000000000000,"betas":[1,0]},"reference":"a","models":["a"],"walkers":2,"recorded_steps":2,"params":[],"priors":[]}`
	if err := os.WriteFile(p, []byte(raw), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := writeToyLnL(filepath.Join(pd, "lnl.npy")); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { _, err := Merge(filepath.Join(dir, "out"), []string{dir}, "test"); done <- err }()
	select {
	case err := <-done:
		want := "no parts for a block 1, a block 2, a block 3, a block 4, a block 5, a block 6, a block 7, a block 8, a block 9, a block 10 and 999999999989 more (of the 1000000000000 rung block(s) per model that " + p + " names): run every task before merging"
		if err == nil || err.Error() != want {
			t.Errorf("error\n got: %v\nwant: %s", err, want)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("Merge did not return within 5 s")
	}
}

// TestLongestFirst checks the start order of units run side by side: the
// longest-processing-time rule (Graham 1969) starts the costliest first,
// keeps ties in their given order, and leaves the order alone when every
// unit starts at once or units run one at a time.
func TestLongestFirst(t *testing.T) {
	for _, c := range []struct {
		cost []float64
		par  int
		want []int
	}{
		{[]float64{1, 1, 2}, 2, []int{2, 0, 1}},
		{[]float64{3, 1, 2, 5}, 2, []int{3, 0, 2, 1}},
		{[]float64{1, 2, 2, 0.5}, 3, []int{1, 2, 0, 3}},
		{[]float64{1, 1, 2}, 1, []int{0, 1, 2}},
		{[]float64{1, 1, 2}, 3, []int{0, 1, 2}},
		{nil, 2, []int{}},
	} {
		if got := longestFirst(c.cost, c.par); !slices.Equal(got, c.want) {
			t.Errorf("longestFirst(%v, %d) = %v, want %v", c.cost, c.par, got, c.want)
		}
	}
}

// slowTarget is a one-dimensional uniform target whose LogLike sleeps.
type slowTarget struct{ d time.Duration }

func (slowTarget) Dim() int                       { return 1 }
func (slowTarget) Draw(r *rand.Rand, x []float64) { x[0] = r.Float64() }
func (slowTarget) LogPrior(x []float64) float64   { return 0 }
func (s slowTarget) LogLike(x []float64) float64  { time.Sleep(s.d); return 0 }

// TestUnitCostsRankSlowModelFirst: a model whose likelihood takes a
// millisecond is ranked above a free one even with fewer rungs, so it
// starts first.
func TestUnitCostsRankSlowModelFirst(t *testing.T) {
	p := Problem{Models: []Model{{Name: "fast", Target: slowTarget{}}, {Name: "slow", Target: slowTarget{time.Millisecond}}}}
	units := []rundir.Unit{
		{Model: "fast", Index: 0, Betas: []float64{1, 0.5, 0}},
		{Model: "fast", Index: 0, Betas: []float64{1, 0.5, 0}},
		{Model: "slow", Index: 1, Betas: []float64{1, 0}},
	}
	cost := unitCosts(p, units)
	if !(cost[2] > cost[0]) || cost[0] != cost[1] {
		t.Fatalf("costs %v: want the slow model's unit costliest and the fast model's two equal", cost)
	}
	if got := longestFirst(cost, 2); got[0] != 2 {
		t.Errorf("start order %v: want the slow model's unit (2) first", got)
	}
}
