package sampler

import (
	"fmt"
	"slices"
	"testing"
	"time"
)

// abBench times old and new alternately (swapping which goes first) in
// every iteration, so that both see the same load of a shared machine,
// and reports the median time of each and the median ratio new/old of
// the pairs.
func abBench(b *testing.B, old, new func()) {
	var to, tn, ratio []float64
	for i := 0; b.Loop(); i++ {
		var do, dn time.Duration
		for j := range 2 {
			t := time.Now()
			if (i+j)%2 == 0 {
				old()
				do = time.Since(t)
			} else {
				new()
				dn = time.Since(t)
			}
		}
		to = append(to, do.Seconds()*1e3)
		tn = append(tn, dn.Seconds()*1e3)
		ratio = append(ratio, dn.Seconds()/do.Seconds())
	}
	med := func(v []float64) float64 {
		slices.Sort(v)
		return v[len(v)/2]
	}
	b.ReportMetric(med(to), "old-ms")
	b.ReportMetric(med(tn), "new-ms")
	b.ReportMetric(med(ratio), "new/old")
}

// gaussHistory returns an ensemble of 32 walkers on a correlated Gaussian
// in dim 2 or 3 that has recorded steps steps.
func gaussHistory(b *testing.B, dim, steps int) *Ensemble {
	b.Helper()
	mu := []float64{0, 1, 2}[:dim]
	cov := [][]float64{{1, 0.5, 0}, {0.5, 2, 0.3}, {0, 0.3, 1}}[:dim]
	for i := range cov {
		cov[i] = cov[i][:dim]
	}
	return recordedHistory(b, newGaussTarget(b, mu, cov), steps)
}

// BenchmarkFinalReport times Run's final report (evaluate with final set)
// on the history of a 6000- and a 20000-step, 32-walker run in 2 and 3
// dimensions: warm reuses the diagnostics' buffers and score table of the
// previous report, as repeated checks of one size do; fresh starts from a
// new pool, as the final report of a run does (its checks had other
// sizes). The short history is the length of an --until run that stops
// early, whose first estimate of tau is of a coarsely thinned chain.
func BenchmarkFinalReport(b *testing.B) {
	for _, steps := range []int{6000, 20000} {
		for _, dim := range []int{2, 3} {
			e := gaussHistory(b, dim, steps)
			opt := RunOptions{MaxSteps: steps, Burn: -1}
			for _, fresh := range []bool{false, true} {
				kind := "warm"
				if fresh {
					kind = "fresh"
				}
				b.Run(fmt.Sprintf("steps=%d/dim=%d/%s", steps, dim, kind), func(b *testing.B) {
					c0 := cpuTime()
					for b.Loop() {
						if fresh {
							e.hist.diag = nil
						}
						evaluate(e, opt, true)
					}
					b.ReportMetric((cpuTime()-c0).Seconds()*1e3/float64(b.N), "cpu-ms/op")
				})
			}
		}
	}
}

// finalDraws returns parameter k of the chain a final report of
// gaussHistory(dim, 20000) diagnoses (burn-in 2000 steps, thinned by 3),
// in the layout x[s*walkers+w], plus shift.
func finalDraws(b *testing.B, e *Ensemble, k int, shift float64) []float64 {
	v := e.hist.view(2000, 3, 6000)
	sc := newDiagScratch()
	sc.gather(v, k)
	x := sc.dev
	out := make([]float64, len(x))
	for w := range v.walkers {
		for s := range v.steps {
			out[s*v.walkers+w] = x[w*v.steps+s] + shift
		}
	}
	return out
}

// BenchmarkRankSort compares the ranker's loading and sort of 192000 draws
// of a final report (loadRuns, sort) with loading and the radix sort alone
// (load, sortPairs), on the two parameters of
// a Gaussian and on the first shifted to -14.6 (all of one sign and
// binade).
func BenchmarkRankSort(b *testing.B) {
	e := gaussHistory(b, 2, 20000)
	for _, c := range []struct {
		name  string
		k     int
		shift float64
	}{{"p0", 0, 0}, {"p1", 1, 0}, {"p0-14.6", 0, -14.6}} {
		x := finalDraws(b, e, c.k, c.shift)
		b.Run(c.name, func(b *testing.B) {
			var r, q ranker
			abBench(b, func() {
				q.load(len(x), func(i int) float64 { return x[i] })
				q.tmpK = growU64(q.tmpK, len(x))
				q.tmpI = growI32(q.tmpI, len(x))
				q.idx = growI32(q.idx, len(x))
				for i := range q.idx {
					q.idx[i] = int32(i)
				}
				sortPairs(q.keys, q.idx, q.tmpK, q.tmpI)
			}, func() {
				r.loadRuns(x, 1, len(x), 0, 1, len(x))
				r.sort(nil)
			})
		})
	}
}
