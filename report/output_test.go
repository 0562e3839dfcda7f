package report

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"tautline/stats"
)

func TestPosteriorWrite(t *testing.T) {
	src := rand.New(rand.NewPCG(31, 32))
	const n = 5000
	a, b := correlated(src, n, 1, 0.5, 0.6, true)
	c := make([]float64, n)
	for i := range c {
		c[i] = 3 + src.NormFloat64()
	}
	inf := math.Inf(1)
	ps := []stats.Param{
		{Name: "log10_Gmu", Label: `\log_{10} G\mu`, Bounds: [2]float64{0, 5}, Samples: a},
		{Name: "beta", Bounds: [2]float64{-inf, inf}, Samples: b},
		{Name: "odd name/x", Unit: "Hz", Bounds: [2]float64{-inf, inf}, Samples: c},
	}
	var calls, last int
	post, err := stats.Analyze(ps, stats.Options{Two: stats.Options2D{GridPoints: 32}}, func(done, total int) {
		calls++
		if done != calls || total != 6 {
			t.Errorf("progress(%d, %d) at call %d, want (%d, 6)", done, total, calls, calls)
		}
		last = done
	})
	if err != nil {
		t.Fatal(err)
	}
	if last != 6 || len(post.Pairs) != 3 || post.Pair(2, 0) == nil {
		t.Fatalf("progress reached %d, %d pairs", last, len(post.Pairs))
	}
	dir := t.TempDir()
	meta := Metadata{Run: "sim-1", Model: "strings", Dataset: "simulated", Version: "test"}
	if err := WritePosterior(dir, meta, post, nil); err != nil {
		t.Fatal(err)
	}
	// The first parameter rails at 0: its JSON limit is a number and the
	// second one's (no rail) is null, as NaN cannot be encoded in JSON.
	var sj struct {
		Meta       Metadata `json:"metadata"`
		Parameters []struct {
			LimitKind string   `json:"limit_kind"`
			Limit     *float64 `json:"limit"`
		} `json:"parameters"`
	}
	readJSON(t, filepath.Join(dir, "summary.json"), &sj)
	if sj.Meta.Run != meta.Run || sj.Meta.Version != meta.Version || sj.Meta.Dataset != meta.Dataset {
		t.Errorf("metadata %+v, want %+v", sj.Meta, meta)
	}
	if len(sj.Parameters) != 3 || sj.Parameters[0].LimitKind != "upper" || sj.Parameters[0].Limit == nil || sj.Parameters[1].Limit != nil {
		t.Errorf("summary.json parameters: %+v", sj.Parameters)
	}
	var mj struct {
		Levels []float64   `json:"density_levels"`
		X      []float64   `json:"x"`
		Rows   [][]float64 `json:"density_rows"`
	}
	readJSON(t, filepath.Join(dir, "marginal2d_log10_Gmu__odd_name_x.json"), &mj)
	if len(mj.Levels) != 2 || !(mj.Levels[0] > mj.Levels[1]) || len(mj.X) != 32 || len(mj.Rows) != 32 {
		t.Errorf("2-D JSON: %d levels %v, %d x, %d rows", len(mj.Levels), mj.Levels, len(mj.X), len(mj.Rows))
	}
	f, err := os.Open(filepath.Join(dir, "marginal1d_beta.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil || len(recs) != 257 || strings.Join(recs[0], ",") != "x,density" {
		t.Errorf("marginal1d_beta.csv: %d records, err %v", len(recs), err)
	}
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.Contains(e.Name(), ".tmp") {
			t.Errorf("temporary file %s left behind", e.Name())
		}
	}
	if len(ents) != 2+2*3+2*3 {
		t.Errorf("%d files written, want 14", len(ents))
	}
	pts, err := stats.ExclusionCurve(b, a, stats.LinearEdges(-1.5, 1.5, 6), 0.95, 0)
	if err != nil {
		t.Fatal(err)
	}
	if err := WriteExclusion(dir, meta, "beta", "log10_Gmu", 0.95, pts); err != nil {
		t.Fatal(err)
	}
	if err := WriteSummaryTable(dir, post.Summaries(), 2); err != nil {
		t.Fatal(err)
	}
	rows := []Evidence{
		{Model: "a", LnZTI: -3, LnZTIErr: 0.1, LnZSS: math.NaN(), LnZSSErr: math.NaN()},
		{Model: "b", LnZTI: -1, LnZTIErr: 0.1, LnZSS: math.NaN(), LnZSSErr: math.NaN(),
			LnB: 2, LnBErr: math.Hypot(0.1, 0.1), Reading: "positive"},
	}
	if err := WriteComparison(dir, meta, rows, "a", 2); err != nil {
		t.Fatal(err)
	}
	var cj comparisonRead
	readJSON(t, filepath.Join(dir, "comparison.json"), &cj)
	// The row's given ln B and reading are written; the missing SS is null.
	if len(cj.Models) != 2 || !eqPtr(cj.Models[1].LnB, 2) || cj.Models[1].Evidence != "positive" || cj.Models[0].LnZSS != nil {
		t.Errorf("comparison.json models: %+v", cj.Models)
	}
	if err := WriteSummaries(filepath.Join(dir, "missing", "deeper"), meta, nil); err == nil {
		t.Error("writing into a missing directory did not fail")
	}
}

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

func TestAnalyzeErrors(t *testing.T) {
	inf := [2]float64{math.Inf(-1), math.Inf(1)}
	for _, c := range []struct {
		name string
		ps   []stats.Param
		o    stats.Options
	}{
		{"no parameters", nil, stats.Options{}},
		{"length mismatch", []stats.Param{{Name: "a", Bounds: inf, Samples: []float64{1, 2, 3}}, {Name: "b", Bounds: inf, Samples: []float64{1}}}, stats.Options{}},
		{"unnamed", []stats.Param{{Bounds: inf, Samples: []float64{1, 2, 3}}}, stats.Options{}},
		{"bad mass", []stats.Param{{Name: "a", Bounds: inf, Samples: []float64{1, 2, 3}}}, stats.Options{Masses: []float64{1.5}}},
	} {
		if _, err := stats.Analyze(c.ps, c.o, nil); err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
}

// comparisonRead reads comparison.json back; pointers tell null from 0.
type comparisonRead struct {
	Models []struct {
		LnB      *float64 `json:"ln_b"`
		LnBErr   *float64 `json:"ln_b_err"`
		LnZSS    *float64 `json:"ln_z_ss"`
		Evidence string   `json:"evidence"`
	} `json:"models"`
}

// eqPtr reports whether p holds exactly v (a value written by
// strconv.FormatFloat(v, 'g', -1) reads back exactly).
func eqPtr(p *float64, v float64) bool { return p != nil && *p == v }
