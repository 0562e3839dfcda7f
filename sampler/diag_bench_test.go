package sampler

import (
	"context"
	"testing"
	"time"
)

// benchHistory returns an ensemble of 32 walkers on a correlated 2-D
// Gaussian that has recorded steps steps (the size of the demo fits).
func benchHistory(b *testing.B, steps int) *Ensemble {
	b.Helper()
	return recordedHistory(b, newGaussTarget(b, []float64{0, 0}, [][]float64{{1, 0.5}, {0.5, 1}}), steps)
}

// recordedHistory returns an ensemble of 32 walkers on tg that has
// recorded steps steps.
func recordedHistory(b *testing.B, tg Target, steps int) *Ensemble {
	b.Helper()
	e, err := New(tg, Config{Walkers: 32, Seed: 1, Workers: 1})
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(e.Close)
	e.hist = newHistory(e)
	e.hist.reserve(steps)
	for range steps {
		if err := e.Step(); err != nil { // Step records into e.hist
			b.Fatal(err)
		}
	}
	return e
}

// BenchmarkDiagRun runs 20000 steps of 32 walkers on a cheap 2-D Gaussian
// with the fit command's check interval (500), without criteria (checks
// only feed progress output) and with criteria that never hold (every
// check is evaluated), and reports the share of the wall time spent on
// diagnostics (Result.DiagnosticsTime) and that time per run.
func BenchmarkDiagRun(b *testing.B) {
	tg := newGaussTarget(b, []float64{0, 0}, [][]float64{{1, 0.5}, {0.5, 1}})
	for _, c := range []struct {
		name  string
		until Criteria
	}{
		{"progress", Criteria{}},
		{"until", Criteria{ESS: 1e12, Rhat: 1.0001}},
	} {
		b.Run(c.name, func(b *testing.B) {
			var diag, total time.Duration
			for b.Loop() {
				e, err := New(tg, Config{Walkers: 32, Seed: 1, Workers: 1})
				if err != nil {
					b.Fatal(err)
				}
				t := time.Now()
				res, err := Run(context.Background(), e, RunOptions{MaxSteps: 20000, Burn: -1, CheckEvery: 500, Until: c.until})
				total += time.Since(t)
				if err != nil {
					b.Fatal(err)
				}
				diag += res.DiagnosticsTime
				e.Close()
			}
			b.ReportMetric(100*diag.Seconds()/total.Seconds(), "%diag")
			b.ReportMetric(diag.Seconds()*1e3/float64(b.N), "diag-ms/op")
		})
	}
}
