package fitrun

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"tautline/chains"
	"tautline/rundir"
	"tautline/sampler"
)

// normals is a product of independent normal likelihoods N(mu_i, sd_i)
// under a uniform prior box of +-10 sd, so wide that the posterior is the
// normal itself to better than 1e-20.
type normals struct{ mu, sd []float64 }

func (n normals) Dim() int { return len(n.mu) }
func (n normals) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = n.mu[i] + n.sd[i]*(20*r.Float64()-10)
	}
}
func (n normals) LogPrior(x []float64) float64 {
	lp := 0.0
	for i, v := range x {
		if math.Abs(v-n.mu[i]) > 10*n.sd[i] {
			return math.Inf(-1)
		}
		lp -= math.Log(20 * n.sd[i])
	}
	return lp
}
func (n normals) LogLike(x []float64) float64 {
	ll := 0.0
	for i, v := range x {
		z := (v - n.mu[i]) / n.sd[i]
		ll -= 0.5 * z * z
	}
	return ll
}

var target = normals{mu: []float64{1, -2}, sd: []float64{0.5, 2}}

func problem() Problem {
	return Problem{Target: target, Names: []string{"a", "b"},
		Meta:       chains.Meta{Version: "test", Seed: 7, Start: time.Now(), Outputs: rundir.FitOutputs()},
		Likelihood: Likelihood{BandwidthRule: "scott", Bandwidths: []float64{0.1}, AboveRangePenalty: 3}}
}

func settings(out string, steps int) Settings {
	return Settings{Sampler: sampler.Config{Walkers: 16, Seed: 7, Workers: 1, Fingerprint: "fp"},
		Steps: steps, Burn: -1, CheckpointEvery: 100, FlushEvery: 50, Out: out}
}

// TestRunNormal: the summary of a fit of a normal target matches the normal
// distribution's median and central 68 % interval (the Phi(-1) and Phi(1)
// quantiles, mu -+ sd by definition), and every file of the fit folder is
// written.
func TestRunNormal(t *testing.T) {
	out := t.TempDir()
	res, err := Run(context.Background(), problem(), settings(out, 3000))
	if err != nil {
		t.Fatal(err)
	}
	if res.Samples == 0 || len(res.Summary) != 2 {
		t.Fatalf("got %d samples, %d summaries", res.Samples, len(res.Summary))
	}
	for k, s := range res.Summary {
		mu, sd := target.mu[k], target.sd[k]
		// 16 walkers x ~2700 steps with tau of a few tens leave over a
		// thousand independent samples: the quantiles' standard errors are
		// below 0.05 sd, and 0.2 sd is four of them.
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"median", s.Median, mu}, {"lo68", s.Lo68, mu - sd}, {"hi68", s.Hi68, mu + sd}, {"std", s.Std, sd}} {
			if math.Abs(c.got-c.want) > 0.2*sd {
				t.Errorf("%s %s = %.4f, want %.4f (normal)", s.Name, c.name, c.got, c.want)
			}
		}
	}
	for _, f := range []string{rundir.ChainFile, rundir.PosteriorFile, rundir.SummaryFile, rundir.MetaFile, rundir.CheckpointFile} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("missing %s: %v", f, err)
		}
	}
	m, err := chains.ReadMeta(filepath.Join(out, rundir.MetaFile))
	if err != nil {
		t.Fatal(err)
	}
	if m.Status != res.Sampler.Status.String() || m.Sampling == nil || m.Sampling.PosteriorSamples != res.Samples ||
		m.Sampling.Steps != 3000 || m.Sampling.AboveRangePenalty != 3 || len(m.Sampling.Acceptance) != 16 {
		t.Errorf("meta.json status %q sampling %+v", m.Status, m.Sampling)
	}
	raw, err := os.ReadFile(filepath.Join(out, rundir.SummaryFile))
	if err != nil {
		t.Fatal(err)
	}
	// summary.json's members are in alphabetical order, as a generic map
	// would write them.
	if !bytes.HasPrefix(raw, []byte("{\n  \"burn\": ")) {
		t.Errorf("summary.json does not start with burn:\n%.80s", raw)
	}
	var sum rundir.Summary
	if err := json.Unmarshal(raw, &sum); err != nil || sum.Samples != res.Samples {
		t.Errorf("summary.json: %v, %d samples", err, sum.Samples)
	}
}

// TestResume: a run cancelled midway and resumed gives the bytes of a run
// that never stopped; a second fresh run in the same folder is refused.
func TestResume(t *testing.T) {
	const steps = 600
	whole := t.TempDir()
	if _, err := Run(context.Background(), problem(), settings(whole, steps)); err != nil {
		t.Fatal(err)
	}
	split := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	s := settings(split, steps)
	s.Reporter.Step = func(n int) {
		if n == 230 {
			cancel()
		}
	}
	_, err := Run(ctx, problem(), s)
	if err == nil || !strings.Contains(err.Error(), "interrupted at step 230") {
		t.Fatalf("cancelled run: %v", err)
	}
	if m, err := chains.ReadMeta(filepath.Join(split, rundir.MetaFile)); err != nil || m.Status != "interrupted" {
		t.Fatalf("meta after interruption: %v, %+v", err, m)
	}
	_, err = Run(context.Background(), problem(), settings(split, steps))
	if err == nil || !strings.Contains(err.Error(), "exists: this folder holds a run already") {
		t.Fatalf("fresh run over a checkpoint: %v", err)
	}
	s = settings(split, steps)
	s.Resume = true
	var logged string
	s.Reporter.Infof = func(f string, a ...any) { logged = f }
	if _, err := Run(context.Background(), problem(), s); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(logged, "resuming from step") {
		t.Errorf("no resume log line, got %q", logged)
	}
	for _, f := range []string{rundir.ChainFile, rundir.PosteriorFile, rundir.SummaryFile} {
		a, errA := os.ReadFile(filepath.Join(whole, f))
		b, errB := os.ReadFile(filepath.Join(split, f))
		if errA != nil || errB != nil || !bytes.Equal(a, b) {
			t.Errorf("%s differs between the whole and the resumed run (%v, %v)", f, errA, errB)
		}
	}
	other := settings(split, steps)
	other.Resume, other.Sampler.Fingerprint = true, "another"
	if _, err := Run(context.Background(), problem(), other); err == nil || !strings.Contains(err.Error(), "was the configuration or data changed") {
		t.Errorf("resume with another fingerprint: %v", err)
	}
}

// interruptAt runs a fit of steps steps into out, cancelled after step
// stop, then resumes it; it returns the resumed run's result and the
// checkpoint sizes seen after each checkpoint step.
func interruptAt(t *testing.T, out string, steps, stop int, edit func(*Settings)) (*Result, []int64) {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	s := settings(out, steps)
	edit(&s)
	var sizes []int64
	s.Reporter.Step = func(n int) {
		if n%s.CheckpointEvery == 0 {
			fi, err := os.Stat(filepath.Join(out, rundir.CheckpointFile))
			if err != nil {
				t.Errorf("step %d: %v", n, err)
				return
			}
			sizes = append(sizes, fi.Size())
		}
		if n == stop {
			cancel()
		}
	}
	if _, err := Run(ctx, problem(), s); err == nil || !strings.Contains(err.Error(), "interrupted at step") {
		t.Fatalf("cancelled run: %v", err)
	}
	s.Resume, s.Reporter.Step = true, nil
	res, err := Run(context.Background(), problem(), s)
	if err != nil {
		t.Fatal(err)
	}
	return res, sizes
}

func sameFiles(t *testing.T, a, b string, files ...string) {
	t.Helper()
	for _, f := range files {
		x, errA := os.ReadFile(filepath.Join(a, f))
		y, errB := os.ReadFile(filepath.Join(b, f))
		if errA != nil || errB != nil || !bytes.Equal(x, y) {
			t.Errorf("%s differs between the whole and the resumed run (%v, %v; %d vs %d bytes)", f, errA, errB, len(x), len(y))
		}
	}
}

// TestResumeLong: over a run of 6000 steps the checkpoint keeps one size
// (it holds the sampler's state, not the history), and a run interrupted
// late and resumed, its history read back from chain.csv, gives the bytes
// of one that never stopped, burn-in and thinning included.
func TestResumeLong(t *testing.T) {
	const steps = 6000
	edit := func(s *Settings) { s.CheckpointEvery, s.FlushEvery = 500, 0 }
	whole := t.TempDir()
	s := settings(whole, steps)
	edit(&s)
	if _, err := Run(context.Background(), problem(), s); err != nil {
		t.Fatal(err)
	}
	split := t.TempDir()
	_, sizes := interruptAt(t, split, steps, 4321, edit)
	if len(sizes) != 8 {
		t.Fatalf("saw %d checkpoints before step 4321, want 8", len(sizes))
	}
	for i, n := range sizes {
		if n != sizes[0] {
			t.Errorf("checkpoint %d has %d bytes, the first %d: its size grows with the run", i+1, n, sizes[0])
		}
	}
	sameFiles(t, whole, split, rundir.ChainFile, rundir.PosteriorFile, rundir.SummaryFile)
	if _, err := os.Stat(filepath.Join(split, rundir.RungsFile)); err == nil {
		t.Errorf("an untempered fit wrote %s", rundir.RungsFile)
	}
}

// TestResumeTempered: a tempered fit keeps its hot rungs' ln likelihoods in
// rundir.RungsFile; interrupted and resumed, its chain, posterior, summary
// and rungs file are those of a run that never stopped.
func TestResumeTempered(t *testing.T) {
	const steps = 900
	ladder, err := sampler.GeometricLadder(3, 0.1)
	if err != nil {
		t.Fatal(err)
	}
	edit := func(s *Settings) { s.Sampler.Betas = ladder }
	whole := t.TempDir()
	s := settings(whole, steps)
	edit(&s)
	want, err := Run(context.Background(), problem(), s)
	if err != nil {
		t.Fatal(err)
	}
	split := t.TempDir()
	got, _ := interruptAt(t, split, steps, 377, edit)
	sameFiles(t, whole, split, rundir.ChainFile, rundir.PosteriorFile, rundir.SummaryFile, rundir.RungsFile)
	// The history read back on resume (every rung's ln L) is the one
	// recorded by the run that never stopped, bit for bit.
	hw, hg := want.Sampler.History, got.Sampler.History
	for r := range hw.Rungs() {
		a, b := hw.LnLike(r, 0), hg.LnLike(r, 0)
		if len(a) != len(b) {
			t.Fatalf("rung %d: %d vs %d ln L values", r, len(a), len(b))
		}
		for i := range a {
			if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
				t.Fatalf("rung %d ln L [%d]: %v vs %v", r, i, a[i], b[i])
			}
		}
	}
	fi, err := os.Stat(filepath.Join(whole, rundir.RungsFile))
	if want := int64(24 + steps*2*16*8); err != nil || fi.Size() != want {
		t.Errorf("%s: %v, want %d bytes (24-byte header, 2 hot rungs x 16 walkers x 8 bytes per step)", rundir.RungsFile, err, want)
	}
}

// TestResumeDamagedHistory: a resume whose chain.csv lost rows the
// checkpoint records, or whose rungs file is cut short, is refused.
func TestResumeDamagedHistory(t *testing.T) {
	ladder, err := sampler.GeometricLadder(2, 0.2)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name, file, text string
	}{
		{"chain cut", rundir.ChainFile, "incomplete last line"},
		{"rungs cut", rundir.RungsFile, "the checkpoint needs"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			out := t.TempDir()
			s := settings(out, 300)
			s.Sampler.Betas = ladder
			if _, err := Run(context.Background(), problem(), s); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(out, tc.file)
			fi, err := os.Stat(path)
			if err != nil {
				t.Fatal(err)
			}
			if err := os.Truncate(path, fi.Size()/2); err != nil {
				t.Fatal(err)
			}
			s.Resume = true
			if _, err := Run(context.Background(), problem(), s); err == nil || !strings.Contains(err.Error(), tc.text) {
				t.Errorf("resume: %v, want an error containing %q", err, tc.text)
			}
		})
	}
}
