package sampler

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// noopTarget has a constant density: Step's own cost per walker.
type noopTarget struct{ d int }

func (n noopTarget) Dim() int { return n.d }
func (n noopTarget) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = r.Float64()
	}
}
func (noopTarget) LogPrior([]float64) float64 { return 0 }
func (noopTarget) LogLike([]float64) float64  { return 0 }

// BenchmarkStepNoop measures the sampler's own cost per walker-step (one
// stretch proposal, its Metropolis test and the bookkeeping) with a density
// that costs nothing, for 32 walkers in 2 and 3 dimensions; allocs/op must
// be 0. workers=2 adds the hand-off between goroutines.
func BenchmarkStepNoop(b *testing.B) {
	for _, dim := range []int{2, 3} {
		for _, workers := range []int{1, 2} {
			b.Run(fmt.Sprintf("dim=%d/workers=%d", dim, workers), func(b *testing.B) {
				benchSteps(b, noopTarget{dim}, Config{Walkers: 32, Seed: 1, Workers: workers})
			})
		}
	}
}

// BenchmarkStepGauss is BenchmarkStepNoop on a cheap realistic target, a
// correlated normal under a uniform box prior (gaussTarget), with the cost
// of its density alone for comparison: the difference is the sampler's
// share.
func BenchmarkStepGauss(b *testing.B) {
	targets := map[int]*gaussTarget{
		2: newGaussTarget(b, []float64{0, 1}, [][]float64{{1, 0.5}, {0.5, 2}}),
		3: newGaussTarget(b, []float64{0, 1, 2}, [][]float64{{1, 0.5, 0}, {0.5, 2, 0.3}, {0, 0.3, 1}}),
	}
	for _, dim := range []int{2, 3} {
		tg := targets[dim]
		b.Run(fmt.Sprintf("dim=%d/workers=1", dim), func(b *testing.B) {
			benchSteps(b, tg, Config{Walkers: 32, Seed: 1, Workers: 1})
		})
		b.Run(fmt.Sprintf("dim=%d/density", dim), func(b *testing.B) {
			e, err := New(tg, Config{Walkers: 32, Seed: 1, Workers: 1})
			if err != nil {
				b.Fatal(err)
			}
			defer e.Close()
			for range 100 {
				e.Step()
			}
			pos := e.Positions(0)
			v := 0.0
			for b.Loop() {
				for w := range 32 {
					x := pos[w*dim : w*dim+dim]
					v += tg.LogPrior(x) + tg.LogLike(x)
				}
			}
			if math.IsNaN(v) {
				b.Fatal("NaN density")
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*32), "ns/walker-step")
		})
	}
}

// benchSteps times Step on a new ensemble and reports the time per
// walker-step.
func benchSteps(b *testing.B, tg Target, cfg Config) {
	e, err := New(tg, cfg)
	if err != nil {
		b.Fatal(err)
	}
	defer e.Close()
	b.ReportAllocs()
	for b.Loop() {
		e.Step()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*cfg.Walkers), "ns/walker-step")
}

// slowGauss is a 3-D standard normal whose LogLike repeats its work to
// cost about 0.3 µs, a typical cheap model density.
type slowGauss struct{ reps int }

func (s slowGauss) Dim() int { return 3 }
func (s slowGauss) Draw(r *rand.Rand, x []float64) {
	for i := range x {
		x[i] = r.NormFloat64()
	}
}
func (slowGauss) LogPrior([]float64) float64 { return 0 }
func (s slowGauss) LogLike(x []float64) float64 {
	q := 0.0
	for k := range s.reps {
		for i, v := range x {
			q += math.Exp(-float64(k+i)*1e-9) * v * v
		}
	}
	return -0.5 * q / float64(s.reps)
}

// BenchmarkDensity reports the cost of one slowGauss evaluation.
func BenchmarkDensity(b *testing.B) {
	x := []float64{0.1, 0.2, 0.3}
	s := slowGauss{reps: 8}
	v := 0.0
	for b.Loop() {
		v += s.LogLike(x)
	}
	_ = v
}

// BenchmarkHalfStep compares serial and parallel updates for a ~0.3 µs
// density, over ensemble sizes, rungs and batch sizes; compare
// workers=1 with workers=2 at equal walkers and rungs.
func BenchmarkHalfStep(b *testing.B) {
	tg := slowGauss{reps: 8}
	for _, rungs := range []int{1, 8} {
		for _, walkers := range []int{16, 32, 128} {
			for _, mb := range []int{0, 1} {
				for _, workers := range []int{1, 2} {
					if workers == 1 && mb != 0 {
						continue
					}
					name := fmt.Sprintf("rungs=%d/walkers=%d/minbatch=%d/workers=%d", rungs, walkers, mb, workers)
					b.Run(name, func(b *testing.B) {
						betas := []float64{1}
						if rungs > 1 {
							betas, _ = GeometricLadder(rungs, 0.01)
						}
						e, err := New(tg, Config{Walkers: walkers, Seed: 1, Workers: workers, MinBatch: mb, Betas: betas})
						if err != nil {
							b.Fatal(err)
						}
						defer e.Close()
						b.ReportAllocs()
						for b.Loop() {
							e.Step()
						}
						b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*walkers*rungs), "ns/walker-step")
					})
				}
			}
		}
	}
}

// BenchmarkEvaluate measures one convergence check and the final report
// on the history of a 20000-step, 32-walker run of a 2-D Gaussian (the
// size of the demo fits), with the thinning each uses.
func BenchmarkEvaluate(b *testing.B) {
	e := benchHistory(b, 20000)
	opt := RunOptions{MaxSteps: 20000, Burn: -1}
	for _, final := range []bool{false, true} {
		name := "check"
		if final {
			name = "final"
		}
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				evaluate(e, opt, final)
			}
		})
	}
}
