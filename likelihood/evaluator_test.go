package likelihood

import (
	"errors"
	"math"
	"runtime"
	"sync/atomic"
	"testing"

	"tautline/models"
	"tautline/priors"
)

// flakyModel is powerLaw whose At fails from its second call on: a model
// that cannot be bound to the data again must surface as an error when an
// evaluator is made, never as a silent -Inf later.
type flakyModel struct {
	powerLaw
	calls *atomic.Int32
}

func (m flakyModel) At(f []float64) (models.Spectrum, error) {
	if m.calls.Add(1) > 1 {
		return nil, errors.New("flaky: out of table memory")
	}
	return m.powerLaw.At(f)
}

// TestEvaluators checks the per-worker evaluators: they give LogLike's
// value bit for bit, allocate nothing even across garbage collections (the
// scratch is theirs, not a pool's that a collection empties), and a
// failure of the model's At is an error from NewLogLike.
func TestEvaluators(t *testing.T) {
	ds := gaussData(5)
	fs, err := NewFreeSpectrum(ds, Options{})
	if err != nil {
		t.Fatal(err)
	}
	pl := powerLaw{pri: []priors.Prior{uniform{-18, -12}, uniform{0, 7}}}
	p, err := NewPosterior(pl, nil, ds, fs, testH0)
	if err != nil {
		t.Fatal(err)
	}
	f, err := p.NewLogLike()
	if err != nil {
		t.Fatal(err)
	}
	fx, err := p.NewLogLikeExact()
	if err != nil {
		t.Fatal(err)
	}
	for _, x := range [][]float64{{-14.6, 13.0 / 3}, {-15, 5.5}, {-12.5, 0.5}, {-14, 9}} {
		if a, b := f(x), p.LogLike(x); a != b && !(math.IsInf(a, -1) && math.IsInf(b, -1)) {
			t.Errorf("evaluator(%v) = %v, LogLike %v", x, a, b)
		}
		if a, b := fx(x), p.LogLikeExact(x); a != b && !(math.IsInf(a, -1) && math.IsInf(b, -1)) {
			t.Errorf("exact evaluator(%v) = %v, LogLikeExact %v", x, a, b)
		}
	}
	x := []float64{-14.6, 13.0 / 3}
	for name, call := range map[string]func(){"evaluator": func() { f(x) }, "LogLike": func() { p.LogLike(x) }} {
		if n := testing.AllocsPerRun(50, func() { runtime.GC(); call() }); n != 0 {
			t.Errorf("%s: %v allocations per call across garbage collections, want 0", name, n)
		}
	}

	var calls atomic.Int32
	q, err := NewPosterior(flakyModel{pl, &calls}, nil, ds, fs, testH0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := q.NewLogLike(); err == nil || err.Error() != "likelihood: model testpl: flaky: out of table memory" {
		t.Errorf("NewLogLike with a failing At: error %v", err)
	}
	if got := q.LogLike(x); math.IsInf(got, 0) || math.IsNaN(got) {
		t.Errorf("LogLike on the scratch made at NewPosterior = %v, want finite", got)
	}
}
