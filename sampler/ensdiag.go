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
	sc.dev = transpose(sc.dev, x, steps, walkers)
	return sc.vehtari(sc.dev, steps, 1, walkers, ess)
}

// vehtari returns the ensemble R-hat and, with ess, the ensemble bulk and
// tail ESS of one parameter from the walker-major chain x[w*n+s*every],
// s < steps = ceil(n/every), which it overwrites once read: it is
// vehtariLoad then vehtariRanked.
func (sc *diagScratch) vehtari(x []float64, n, every, walkers int, ess bool) (rh, bulk, tail float64) {
	if !sc.vehtariLoad(x, n, every, walkers) {
		return math.NaN(), math.NaN(), math.NaN()
	}
	return sc.vehtariRanked(x, walkers, ess)
}

// vehtariLoad loads the draws vehtari ranks from x (as vehtari) into the
// ranker, and reports whether there are enough; x is then free for the
// caller until vehtariRanked, which writes it.
func (sc *diagScratch) vehtariLoad(x []float64, n, every, walkers int) bool {
	steps := (n + every - 1) / every
	if steps < 2*rhatSegments {
		return false
	}
	drop := steps % rhatSegments
	S := steps - drop
	// Draw i = w*S+s is step drop+s of walker w; the order of the labels
	// does not matter to ranks.
	sc.rk.loadRuns(x, walkers, n, drop, every, S)
	return true
}

// vehtariRanked is the rest of vehtari, for the draws of walkers walkers
// vehtariLoad loaded, with x (as long as they are) as its buffer. One
// ordering of the draws serves every statistic: the normal scores of the
// draws, the quantiles, the tail indicators, and the scores of the folded
// draws |x - median| (merged from it).
func (sc *diagScratch) vehtariRanked(x []float64, walkers int, ess bool) (rh, bulk, tail float64) {
	bulk, tail = math.NaN(), math.NaN()
	r := &sc.rk
	N := len(r.keys)
	S := N / walkers
	z := x[:N]
	r.sort(asKeys(z)) // z is free until scored
	med := r.median()
	r.score(z)
	rz, zbar := segmentRhat(z, S, walkers, ess)
	hz := walkerHalvesRhat(z, S, walkers)
	if ess {
		Nf := float64(N)
		bulk = Nf / sc.ensembleTau(z, S, walkers, zbar)
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
			tail = math.Min(tail, Nf/sc.ensembleTau(ind, S, walkers, float64(c-nan)/Nf))
		}
	}
	fz := z
	if !r.foldScore(fz, med) {
		// Non-finite draws: rank the folded draws afresh.
		for p, i := range r.idx {
			fz[i] = math.Abs(r.at(p) - med)
		}
		r.load(N, func(i int) float64 { return fz[i] })
		r.sort(nil)
		r.score(fz)
	}
	rh = math.Max(
		math.Max(rz, first(segmentRhat(fz, S, walkers, false))),
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
// walker-major z[w*steps+s] (steps a multiple of rhatSegments). With
// total it also returns the mean of all of z summed step by step over the
// walkers (ensembleTau's), else NaN. The sums of different segments are
// independent: they are interleaved (or, with total, each summed along
// with the total) so that none waits for another's additions, each
// keeping its own order.
func segmentRhat(z []float64, steps, walkers int, total bool) (rh, mean float64) {
	const m = rhatSegments
	seg := steps / m
	n := seg * walkers
	mean = math.NaN()
	if n < 2 {
		if total {
			mean = 0
			for s := range steps {
				for w := range walkers {
					mean += z[w*steps+s]
				}
			}
			mean /= float64(steps * walkers)
		}
		return math.NaN(), mean
	}
	var means, ss [m]float64
	if total {
		tot := 0.0
		for j := range m {
			mu := 0.0
			for s := j * seg; s < (j+1)*seg; s++ {
				for w := range walkers {
					v := z[w*steps+s]
					mu += v
					tot += v
				}
			}
			means[j] = mu
		}
		mean = tot / float64(steps*walkers)
	} else {
		var s0, s1, s2, s3 float64
		for s := range seg {
			for w := range walkers {
				i := w*steps + s
				s0 += z[i]
				s1 += z[i+seg]
				s2 += z[i+2*seg]
				s3 += z[i+3*seg]
			}
		}
		means = [m]float64{s0, s1, s2, s3}
	}
	for j := range means {
		means[j] /= float64(n)
	}
	var q0, q1, q2, q3 float64
	for s := range seg {
		for w := range walkers {
			i := w*steps + s
			d0 := z[i] - means[0]
			d1 := z[i+seg] - means[1]
			d2 := z[i+2*seg] - means[2]
			d3 := z[i+3*seg] - means[3]
			q0 += d0 * d0
			q1 += d1 * d1
			q2 += d2 * d2
			q3 += d3 * d3
		}
	}
	ss = [m]float64{q0, q1, q2, q3}
	return rhatMoments(means[:], ss[:], n), mean
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
	// Run r = 2w+h of z, z[r*n:(r+1)*n], is chain h*walkers+w.
	mean := make([]float64, 2*m)
	ss := mean[m:]
	mean = mean[:m]
	runMeans(mean, z[:m*n], n)
	runSquares(ss, z[:m*n], mean, n)
	cm, cs := make([]float64, m), make([]float64, m)
	for w := range walkers {
		for h := range 2 {
			cm[h*walkers+w], cs[h*walkers+w] = mean[2*w+h], ss[2*w+h]
		}
	}
	return rhatMoments(cm, cs, n)
}

// runMeans sets mean[j] to the mean of run j of x, x[j*n:(j+1)*n], summed
// in order. The sums of different runs are independent: four at a time
// are interleaved so that none waits for another's additions.
func runMeans(mean, x []float64, n int) {
	nf := float64(n)
	j := 0
	for ; j+4 <= len(mean); j += 4 {
		a := x[j*n : (j+1)*n]
		b := x[(j+1)*n : (j+2)*n][:len(a)]
		c := x[(j+2)*n : (j+3)*n][:len(a)]
		d := x[(j+3)*n : (j+4)*n][:len(a)]
		var sa, sb, sc, sd float64
		for t, v := range a {
			sa += v
			sb += b[t]
			sc += c[t]
			sd += d[t]
		}
		mean[j], mean[j+1], mean[j+2], mean[j+3] = sa/nf, sb/nf, sc/nf, sd/nf
	}
	for ; j < len(mean); j++ {
		s := 0.0
		for _, v := range x[j*n : (j+1)*n] {
			s += v
		}
		mean[j] = s / nf
	}
}

// runSquares sets ss[j] to the sum of (x_t - mean[j])^2 over run j of x,
// in order, four runs at a time as runMeans.
func runSquares(ss, x, mean []float64, n int) {
	j := 0
	for ; j+4 <= len(ss); j += 4 {
		a := x[j*n : (j+1)*n]
		b := x[(j+1)*n : (j+2)*n][:len(a)]
		c := x[(j+2)*n : (j+3)*n][:len(a)]
		d := x[(j+3)*n : (j+4)*n][:len(a)]
		ma, mb, mc, md := mean[j], mean[j+1], mean[j+2], mean[j+3]
		var sa, sb, sc, sd float64
		for t, v := range a {
			da, db, dc, dd := v-ma, b[t]-mb, c[t]-mc, d[t]-md
			sa += da * da
			sb += db * db
			sc += dc * dc
			sd += dd * dd
		}
		ss[j], ss[j+1], ss[j+2], ss[j+3] = sa, sb, sc, sd
	}
	for ; j < len(ss); j++ {
		s := 0.0
		for _, v := range x[j*n : (j+1)*n] {
			d := v - mean[j]
			s += d * d
		}
		ss[j] = s
	}
}

// ensembleTau is the integrated autocorrelation time, Sokal's window c =
// SokalWindow, of
//
//	rho(k) = sum_w C_w(k) / sum_w C_w(0),
//	C_w(k) = (1/n) sum_t (x_w,t - xbar)(x_w,t+k - xbar),
//
// with xbar the mean over all walkers and steps: the walker-averaged
// autocovariance about the ensemble's mean, of the walker-major chain
// x[w*steps+s]. NaN for a constant chain. mean is xbar, summed step by
// step over the walkers (segmentRhat's, or for values 0 and 1, whose
// partial sums are exact, their count over steps x walkers). It may
// overwrite x with x - mean.
func (sc *diagScratch) ensembleTau(x []float64, steps, walkers int, mean float64) float64 {
	if steps >= directMinLen {
		// Centred in place: x - mean - 0 is x - mean, to the bit, so the
		// FFT below can take these deviations about 0.
		for i, v := range x[:steps*walkers] {
			x[i] = v - mean
		}
		mean = 0
		if tau, ok := sc.ensembleTauDirect(x, steps, walkers); ok {
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

// ensembleTauDirect is ensembleTau of the deviations dev from the
// ensemble's mean, with the autocovariances summed lag by lag; ok is false
// beyond lagLimit.
func (sc *diagScratch) ensembleTauDirect(dev []float64, steps, walkers int) (float64, bool) {
	t := &sc.tab
	t.reset(steps, walkers, sc.par, dev, sc.crew)
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

// first returns the first of two values.
func first(a, _ float64) float64 { return a }
