package sampler

import (
	"fmt"
	"math"
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
	tg := newGaussTarget(b, mu, cov)
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

// BenchmarkFinalReport times Run's final report (evaluate with final set)
// on the history of a 20000-step, 32-walker run in 2 and 3 dimensions:
// warm reuses the diagnostics' buffers and score table of the previous
// report, as repeated checks of one size do; fresh starts from a new pool,
// as the final report of a run does (its checks had other sizes).
func BenchmarkFinalReport(b *testing.B) {
	for _, dim := range []int{2, 3} {
		e := gaussHistory(b, dim, 20000)
		opt := RunOptions{MaxSteps: 20000, Burn: -1}
		for _, fresh := range []bool{false, true} {
			name := fmt.Sprintf("dim=%d/warm", dim)
			if fresh {
				name = fmt.Sprintf("dim=%d/fresh", dim)
			}
			b.Run(name, func(b *testing.B) {
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

// finalDraws returns parameter k of the chain a final report of
// gaussHistory(dim, 20000) diagnoses (burn-in 2000 steps, thinned by 3),
// in the layout x[s*walkers+w], plus shift.
func finalDraws(b *testing.B, e *Ensemble, k int, shift float64) []float64 {
	v := e.hist.view(2000, 3, 6000)
	x := v.gather(nil, k)
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

// BenchmarkScores compares ranker.score and foldScore with the versions
// kept below, on the draws of BenchmarkRankSort.
func BenchmarkScores(b *testing.B) {
	e := gaussHistory(b, 2, 20000)
	x := finalDraws(b, e, 1, 0)
	var r ranker
	r.load(len(x), func(i int) float64 { return x[i] })
	r.sort(nil)
	z := make([]float64, len(x))
	med := r.median()
	b.Run("score", func(b *testing.B) {
		abBench(b, func() { oldScore(&r, z) }, func() { r.score(z) })
	})
	b.Run("fold", func(b *testing.B) {
		abBench(b, func() { oldFoldScore(&r, z, med) }, func() { r.foldScore(z, med) })
	})
}

// oldScore is ranker.score before it was tuned, kept for A/B timing: it writes the score of every loaded, ordered value into z[i] for
// its index i, with average ranks for equal values.
func oldScore(r *ranker, z []float64) {
	S := len(r.keys)
	sc := r.scores(S)
	keys, idx := r.keys, r.idx
	for i := 0; i < S; {
		vi := keyValue(keys[i])
		j := i
		for j+1 < S && keyValue(keys[j+1]) == vi {
			j++
		}
		q := tiedScore(sc, i, j, S)
		for k := i; k <= j; k++ {
			z[idx[k]] = q
		}
		i = j + 1
	}
}

// oldFoldScore is ranker.foldScore before it was tuned, kept for A/B
// timing: it writes into z[i] the score of |v_i - med| among the folded
// values, for the ordered values v of the ranker, and reports whether it
// could: the folded values are ordered by merging those below med
// (decreasing) with those above (increasing), which needs finite values;
// it leaves z alone and returns false otherwise. Rounding is monotone, so
// the merge orders the folded values exactly as sorting them would.
func oldFoldScore(r *ranker, z []float64, med float64) bool {
	S := len(r.keys)
	if S == 0 || math.IsNaN(med) || math.IsInf(med, 0) {
		return false
	}
	if lo, hi := r.at(0), r.at(S-1); math.IsNaN(lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return false
	}
	sc := r.scores(S)
	keys, idx := r.keys, r.idx
	// p0 is the first position whose value is at least med.
	p0, hi := 0, S
	for p0 < hi {
		m := int(uint(p0+hi) >> 1)
		if keyValue(keys[m]) < med {
			p0 = m + 1
		} else {
			hi = m
		}
	}
	// Merge the run below med, read downwards, with the run above; fl and
	// fu are the folded values at their heads l and u (+Inf past the end,
	// with the runs' lengths deciding which is exhausted).
	l, u := p0-1, p0
	inf := math.Inf(1)
	fold := func(p int) float64 { return math.Abs(keyValue(keys[p]) - med) }
	fl, fu := inf, inf
	if l >= 0 {
		fl = fold(l)
	}
	if u < S {
		fu = fold(u)
	}
	for rank := 0; rank < S; {
		g := fu
		if l >= 0 && (u >= S || fl < fu) {
			g = fl
		}
		l0, u0 := l, u
		for l >= 0 && fl == g {
			if l--; l >= 0 {
				fl = fold(l)
			}
		}
		for u < S && fu == g {
			if u++; u < S {
				fu = fold(u)
			}
		}
		n := (l0 - l) + (u - u0)
		q := tiedScore(sc, rank, rank+n-1, S)
		for p := l + 1; p <= l0; p++ {
			z[idx[p]] = q
		}
		for p := u0; p < u; p++ {
			z[idx[p]] = q
		}
		rank += n
	}
	return true
}

// BenchmarkRhats compares segmentRhat (with the ensemble mean, as the bulk
// ESS needs it, and an ensemble mean summed as before) and
// walkerHalvesRhat with the versions kept below, on 6000 steps of 32
// walkers.
func BenchmarkRhats(b *testing.B) {
	e := gaussHistory(b, 2, 20000)
	v := e.hist.view(2000, 3, 6000)
	z := v.gather(nil, 1)
	b.Run("segments", func(b *testing.B) {
		abBench(b, func() {
			oldSegmentRhat(z, v.steps, v.walkers)
			mean := 0.0
			for s := range v.steps {
				for w := range v.walkers {
					mean += z[w*v.steps+s]
				}
			}
			_ = mean / float64(len(z))
		}, func() { segmentRhat(z, v.steps, v.walkers, true) })
	})
	b.Run("halves", func(b *testing.B) {
		abBench(b, func() { oldWalkerHalvesRhat(z, v.steps, v.walkers) }, func() { walkerHalvesRhat(z, v.steps, v.walkers) })
	})
}

// oldSegmentRhat is segmentRhat before it was tuned, kept for A/B
// timing: the R-hat of Gelman & Rubin (1992) (Vehtari et al. 2021,
// eq. 1-4) of rhatSegments chains, consecutive time segments of the whole
// ensemble, each summed step by step over the walkers, read from the
// walker-major z[w*steps+s] (steps a multiple of rhatSegments).
func oldSegmentRhat(z []float64, steps, walkers int) float64 {
	const m = rhatSegments
	seg := steps / m
	n := seg * walkers
	if n < 2 {
		return math.NaN()
	}
	var means, ss [m]float64
	for j := range m {
		mu := 0.0
		for s := j * seg; s < (j+1)*seg; s++ {
			for w := range walkers {
				mu += z[w*steps+s]
			}
		}
		mu /= float64(n)
		s2 := 0.0
		for s := j * seg; s < (j+1)*seg; s++ {
			for w := range walkers {
				d := z[w*steps+s] - mu
				s2 += d * d
			}
		}
		means[j], ss[j] = mu, s2
	}
	return rhatMoments(means[:], ss[:], n)
}

// oldWalkerHalvesRhat is walkerHalvesRhat before it was tuned, kept for
// A/B timing: the R-hat of Gelman & Rubin (1992) (Vehtari et al.
// 2021, eq. 1-4) of the 2 x walkers chains made of each walker's first and
// second half (chain h*walkers+w), read in place from the walker-major
// z[w*steps+s] (steps even).
func oldWalkerHalvesRhat(z []float64, steps, walkers int) float64 {
	n := steps / 2
	if n < 2 {
		return math.NaN()
	}
	m := 2 * walkers
	sum := make([]float64, m)
	ss := make([]float64, m)
	for h := range 2 {
		for w := range walkers {
			ch := z[w*steps+h*n : w*steps+(h+1)*n]
			mu := 0.0
			for _, v := range ch {
				mu += v
			}
			mu /= float64(n)
			s2 := 0.0
			for _, v := range ch {
				d := v - mu
				s2 += d * d
			}
			sum[h*walkers+w], ss[h*walkers+w] = mu, s2
		}
	}
	return rhatMoments(sum, ss, n)
}
