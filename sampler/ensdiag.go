package sampler

import (
	"math"
	"unsafe"
)

// The walkers of one affine-invariant ensemble are not independent chains:
// every move of a walker uses another walker's position (Goodman & Weare
// 2010, section 3). The diagnostics below therefore treat the ensemble, not
// the walker, as the unit that is compared, and never use the spread of the
// walkers' means as if it came from independent runs:
//
//   - tau and ESS (AutocorrTime, ESS): tau is the integrated autocorrelation
//     time of the walker-averaged autocorrelation function, summed to
//     Sokal's window (c = 5), and ESS = walkers x steps / tau (Goodman &
//     Weare 2010, section 4; Sokal 1997). This is the variance of the
//     ensemble-mean estimate up to the covariances between walkers, which
//     the estimator cannot see without sqrt(walkers) times more noise; for
//     the stretch move on a Gaussian target a reference from hundreds of
//     independent ensembles agrees with it (TestESSAgainstReplicates).
//   - R-hat (EnsembleRhat): the larger of the rank-normalised R-hat of four
//     consecutive time segments of the run, each segment holding the whole
//     ensemble as one chain (segments are the independent units: they
//     differ when the ensemble as a whole still drifts), and the split
//     R-hat of the walkers' halves (Vehtari et al. 2021), which sees walkers
//     that stay in separate modes. Both are the maximum of the bulk and the
//     folded (tail) version.
//   - bulk and tail ESS (EnsembleBulkESS, EnsembleTailESS): walkers x steps
//     / tau as above, of the normal scores of the pooled ranks (bulk) and
//     of the indicators of the 5 % and 95 % quantiles (tail, the smaller of
//     the two), with every walker's autocovariance taken about the
//     ensemble's mean and normalised by the ensemble's variance, so that
//     walkers whose means disagree (one trapped in a tail) lower the ESS as
//     between-chain variance does in Vehtari et al. (2021).

// rhatSegments is the number of consecutive time segments EnsembleRhat
// compares: with two, the between-segment variance has one degree of
// freedom and falls below any threshold by chance too often for a stopping
// rule (P(chi^2_1 < 0.01) = 8 %); four give three.
const rhatSegments = 4

// EnsembleRhat returns the ensemble R-hat of one parameter in the layout
// x[s*walkers+w] (see the definitions above). The first steps % 4 steps
// are left out so that the segments are equal. It is NaN for fewer than 8
// steps.
func EnsembleRhat(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 2*rhatSegments {
		return math.NaN()
	}
	rh, _, _ := ensembleVehtari(x, steps, walkers, false)
	return rh
}

// EnsembleBulkESS returns the ensemble bulk ESS of one parameter in the
// layout x[s*walkers+w]; NaN for fewer than 8 steps.
func EnsembleBulkESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	_, bulk, _ := ensembleVehtari(x, steps, walkers, true)
	return bulk
}

// EnsembleTailESS returns the ensemble tail ESS of one parameter in the
// layout x[s*walkers+w]; NaN for fewer than 8 steps.
func EnsembleTailESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	_, _, tail := ensembleVehtari(x, steps, walkers, true)
	return tail
}

// ensembleVehtari is vehtari of the chain x[s*walkers+w].
func ensembleVehtari(x []float64, steps, walkers int, ess bool) (rh, bulk, tail float64) {
	sc := newDiagScratch()
	sc.a = transpose(sc.a, x, steps, walkers)
	return sc.vehtari(sc.a, steps, walkers, ess)
}

// vehtari returns the ensemble R-hat and, with ess, the ensemble bulk and
// tail ESS of one parameter from its walker-major chain x[w*steps+s],
// which it overwrites. One ordering of the draws serves every statistic:
// the normal scores of the draws, the quantiles, the tail indicators, and
// the scores of the folded draws |x - median| (merged from it).
func (sc *diagScratch) vehtari(x []float64, steps, walkers int, ess bool) (rh, bulk, tail float64) {
	bulk, tail = math.NaN(), math.NaN()
	if steps < 2*rhatSegments {
		return math.NaN(), bulk, tail
	}
	drop := steps % rhatSegments
	S := steps - drop
	N := S * walkers
	r := &sc.rk
	// Draw i = w*S+s is step drop+s of walker w; the order of the labels
	// does not matter to ranks.
	r.loadRuns(x, walkers, steps, drop)
	r.sort(asKeys(x)) // the draws are no longer needed: the ranker holds them
	med := r.median()
	z := x[:N]
	r.score(z)
	rz, hz := segmentRhat(z, S, walkers), walkerHalvesRhat(z, S, walkers)
	if ess {
		Nf := float64(N)
		bulk = Nf / sc.ensembleTau(z, S, walkers)
		// The indicators I(x <= q) are 1 on the positions of the order
		// from the first non-NaN value to the last one <= q.
		nan := 0
		for nan < N && r.keys[nan] == 0 {
			nan++
		}
		tail = math.Inf(1)
		for _, p := range []float64{0.05, 0.95} {
			q := r.quantile(p)
			c, hi := nan, N
			for c < hi {
				m := int(uint(c+hi) >> 1)
				if r.at(m) <= q {
					c = m + 1
				} else {
					hi = m
				}
			}
			// Filled with the more frequent value, then the others set.
			ind := z
			if c-nan <= N/2 {
				clear(ind)
				for _, i := range r.idx[nan:c] {
					ind[i] = 1
				}
			} else {
				for i := range ind {
					ind[i] = 1
				}
				for _, i := range r.idx[:nan] {
					ind[i] = 0
				}
				for _, i := range r.idx[c:] {
					ind[i] = 0
				}
			}
			tail = math.Min(tail, Nf/sc.ensembleTau(ind, S, walkers))
		}
	}
	fz := z
	if !r.foldScore(fz, med) {
		// Non-finite draws: rank the folded draws afresh.
		for p, i := range r.idx {
			fz[i] = math.Abs(r.at(p) - med)
		}
		r.load(N, func(i int) float64 { return fz[i] })
		r.sort(asKeys(x))
		r.score(fz)
	}
	rh = math.Max(
		math.Max(rz, segmentRhat(fz, S, walkers)),
		math.Max(hz, walkerHalvesRhat(fz, S, walkers)))
	return rh, bulk, tail
}

// asKeys is x's memory as uint64 values, a buffer for the sort while x
// holds nothing needed (the sizes and alignments of the two types agree).
func asKeys(x []float64) []uint64 {
	if len(x) == 0 {
		return nil
	}
	return unsafe.Slice((*uint64)(unsafe.Pointer(&x[0])), len(x))
}

// segmentRhat is the R-hat of Gelman & Rubin (1992) (Vehtari et al. 2021,
// eq. 1-4) of rhatSegments chains, consecutive time segments of the whole
// ensemble, each summed step by step over the walkers, read from the
// walker-major z[w*steps+s] (steps a multiple of rhatSegments).
func segmentRhat(z []float64, steps, walkers int) float64 {
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

// walkerHalvesRhat is the R-hat of Gelman & Rubin (1992) (Vehtari et al.
// 2021, eq. 1-4) of the 2 x walkers chains made of each walker's first and
// second half (chain h*walkers+w), read in place from the walker-major
// z[w*steps+s] (steps even).
func walkerHalvesRhat(z []float64, steps, walkers int) float64 {
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

// ensembleTau is the integrated autocorrelation time, Sokal's window c =
// SokalWindow, of
//
//	rho(k) = sum_w C_w(k) / sum_w C_w(0),
//	C_w(k) = (1/n) sum_t (x_w,t - xbar)(x_w,t+k - xbar),
//
// with xbar the mean over all walkers and steps: the walker-averaged
// autocovariance about the ensemble's mean, of the walker-major chain
// x[w*steps+s]. NaN for a constant chain.
func (sc *diagScratch) ensembleTau(x []float64, steps, walkers int) float64 {
	// The mean summed step by step over the walkers.
	mean := 0.0
	for s := range steps {
		for w := range walkers {
			mean += x[w*steps+s]
		}
	}
	mean /= float64(steps * walkers)
	if steps >= directMinLen {
		if tau, ok := sc.ensembleTauDirect(x, steps, walkers, mean); ok {
			return tau
		}
	}
	w := sc.work(steps)
	sc.ac = growF64(sc.ac, steps)
	sc.rho = growF64(sc.rho, steps)
	ac, sum := sc.ac, sc.rho
	clear(sum)
	for k := range walkers {
		w.AutocovAbout(x[k*steps:(k+1)*steps], mean, ac)
		for t := range steps {
			sum[t] += ac[t]
		}
	}
	if !(sum[0] > 0) {
		return math.NaN()
	}
	tau, _, _ := sokalTau(steps, 1, func(m int) (float64, bool) { return sum[m] / sum[0], true })
	return tau
}

// ensembleTauDirect is ensembleTau with the autocovariances summed lag by
// lag; ok is false beyond lagLimit.
func (sc *diagScratch) ensembleTauDirect(x []float64, steps, walkers int, mean float64) (float64, bool) {
	t := &sc.tab
	t.reset(steps, walkers, sc.par, func(w int, dev []float64) {
		for i, v := range x[w*steps : (w+1)*steps] {
			dev[i] = v - mean
		}
	})
	t.ensure(0)
	c0 := 0.0
	for w := range walkers {
		c0 += t.at(w, 0)
	}
	if !(c0 > 0) {
		return math.NaN(), true
	}
	tau, _, ok := sokalTau(steps, 1, func(m int) (float64, bool) {
		if !t.ensure(m) {
			return 0, false
		}
		r := 0.0
		for w := range walkers {
			r += t.at(w, m)
		}
		return r / c0, true
	})
	return tau, ok
}
