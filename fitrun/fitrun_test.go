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
// distribution's median and central 68 % interval (mu +- 0.9945 sd, the
// 0.16 and 0.84 quantiles of the standard normal; handbook value), and
// every file of the fit folder is written.
func TestRunNormal(t *testing.T) {
	out := t.TempDir()
	res, err := Run(context.Background(), problem(), settings(out, 3000))
	if err != nil {
		t.Fatal(err)
	}
	if res.Samples == 0 || len(res.Summary) != 2 {
		t.Fatalf("got %d samples, %d summaries", res.Samples, len(res.Summary))
	}
	const z84 = 0.994458 // standard normal quantile at 0.84
	for k, s := range res.Summary {
		mu, sd := target.mu[k], target.sd[k]
		// 16 walkers x ~2700 steps with tau of a few tens leave over a
		// thousand independent samples: the quantiles' standard errors are
		// below 0.05 sd, and 0.2 sd is four of them.
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"median", s.Median, mu}, {"lo68", s.Lo68, mu - z84*sd}, {"hi68", s.Hi68, mu + z84*sd}, {"std", s.Std, sd}} {
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
