package sampler

import (
	"errors"
	"slices"
	"sync/atomic"
	"testing"
)

// makerTarget is a gaussTarget that hands out per-worker evaluators and
// records how many it made and whether any was ever entered by two
// goroutines at once.
type makerTarget struct {
	*gaussTarget
	made, overlaps atomic.Int32
	fail           bool
}

func (m *makerTarget) NewLogLike() (func(x []float64) float64, error) {
	if m.fail {
		return nil, errors.New("cannot bind the model")
	}
	m.made.Add(1)
	var busy atomic.Bool
	return func(x []float64) float64 {
		if !busy.CompareAndSwap(false, true) {
			m.overlaps.Add(1)
		}
		defer busy.Store(false)
		return m.gaussTarget.LogLike(x)
	}, nil
}

// TestLogLikeMaker checks that the ensemble takes one evaluator per
// worker, never uses one from two goroutines at once, gives the same chain
// as a target without evaluators (they return what LogLike returns), and
// fails New when an evaluator cannot be made.
func TestLogLikeMaker(t *testing.T) {
	mu := []float64{0, 1}
	cov := [][]float64{{1, 0.5}, {0.5, 2}}
	cfg := Config{Walkers: 64, Seed: 9, Workers: 2, MinBatch: 1, Betas: []float64{1, 0.5, 0.25}}
	plain := runSteps(t, newGaussTarget(t, mu, cov), cfg, 200)
	mt := &makerTarget{gaussTarget: newGaussTarget(t, mu, cov)}
	withEval := runSteps(t, mt, cfg, 200)
	if got := mt.made.Load(); got != 2 {
		t.Errorf("%d evaluators made for 2 workers", got)
	}
	if n := mt.overlaps.Load(); n != 0 {
		t.Errorf("an evaluator was entered by two goroutines at once %d times", n)
	}
	for r := range 3 {
		if !slices.Equal(plain.Positions(r), withEval.Positions(r)) {
			t.Errorf("rung %d: positions differ between LogLike and per-worker evaluators", r)
		}
	}
	plain.Close()
	withEval.Close()
	bad := &makerTarget{gaussTarget: newGaussTarget(t, mu, cov), fail: true}
	if _, err := New(bad, cfg); err == nil || err.Error() != "sampler: log-likelihood evaluator 0: cannot bind the model" {
		t.Errorf("New with a failing evaluator: error %v", err)
	}
}
