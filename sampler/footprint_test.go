package sampler

import (
	"context"
	"math"
	"testing"
	"unsafe"
)

// TestFootprintCheckpoint: the checkpoint bound holds, and is close, for
// the encoding MarshalBinary actually writes after Run; the reference is
// the length of that encoding, counted by len.
func TestFootprintCheckpoint(t *testing.T) {
	cases := []struct {
		dim, walkers, steps int
		betas               []float64
	}{
		{1, 4, 10, nil},
		{3, 8, 50, []float64{1, 0.5, 0.1}},
		{2, 16, 120, []float64{1, 0.3}},
	}
	for _, c := range cases {
		mu := make([]float64, c.dim)
		cov := make([][]float64, c.dim)
		for i := range cov {
			cov[i] = make([]float64, c.dim)
			cov[i][i] = 1
		}
		e, err := New(newGaussTarget(t, mu, cov), Config{Walkers: c.walkers, Seed: 3, Betas: c.betas, Fingerprint: "fp"})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := Run(context.Background(), e, RunOptions{MaxSteps: c.steps, CheckEvery: 100}); err != nil {
			t.Fatal(err)
		}
		raw, err := e.MarshalBinary()
		e.Close()
		if err != nil {
			t.Fatal(err)
		}
		f := Footprint{Walkers: c.walkers, Dim: c.dim, Rungs: max(len(c.betas), 1), Steps: c.steps}
		// The bound carries 4 kB of room for the header and counters; it
		// must hold and stay within that room of the real length.
		got, bound := float64(len(raw)), f.Checkpoint()
		if got > bound || bound-got > 4096+float64(f.Rungs)*80 {
			t.Errorf("%+v: checkpoint %g bytes, bound %g", c, got, bound)
		}
		if h := float64(8 * (len(e.hist.pos) + len(e.hist.ll))); h != f.History() {
			t.Errorf("%+v: history %g bytes, estimate %g", c, h, f.History())
		}
	}
}

// TestFootprintNoOverflow: absurd settings give large finite numbers.
func TestFootprintNoOverflow(t *testing.T) {
	f := Footprint{Walkers: 1 << 62, Dim: 1 << 40, Rungs: 1 << 40, Steps: 1 << 62}
	if p := f.Peak(); !(p > 1e50) || math.IsInf(p, 0) {
		t.Errorf("Peak of absurd settings = %g", p)
	}
}

// TestFootprintTables: the tables State counts once per ensemble hold
// what an Ensemble allocates for them; the reference is unsafe.Sizeof of
// the two types.
func TestFootprintTables(t *testing.T) {
	if got := unsafe.Sizeof(stretchTable{}) + unsafe.Sizeof(uTable{}); float64(got) > stateTables {
		t.Errorf("tables take %d bytes, State counts %d", got, stateTables)
	}
}
