package sampler

import (
	"math"
	"slices"

	"tautline/internal/numeric"
	"tautline/sampler/internal/acf"
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
	var r ranker
	rh, _, _ := ensembleVehtari(&r, x, steps, walkers, false)
	return rh
}

// EnsembleBulkESS returns the ensemble bulk ESS of one parameter in the
// layout x[s*walkers+w]; NaN for fewer than 8 steps.
func EnsembleBulkESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	var r ranker
	_, bulk, _ := ensembleVehtari(&r, x, steps, walkers, true)
	return bulk
}

// EnsembleTailESS returns the ensemble tail ESS of one parameter in the
// layout x[s*walkers+w]; NaN for fewer than 8 steps.
func EnsembleTailESS(x []float64, steps, walkers int) float64 {
	if checkLayout(x, steps, walkers) != nil || steps < 8 {
		return math.NaN()
	}
	var r ranker
	_, _, tail := ensembleVehtari(&r, x, steps, walkers, true)
	return tail
}

// ensembleVehtari returns the ensemble R-hat and, with ess, the ensemble
// bulk and tail ESS of one parameter, sharing one rank normalisation of
// the draws and one of the folded draws between them.
func ensembleVehtari(r *ranker, x []float64, steps, walkers int, ess bool) (rh, bulk, tail float64) {
	bulk, tail = math.NaN(), math.NaN()
	if steps < 2*rhatSegments {
		return math.NaN(), bulk, tail
	}
	drop := steps % rhatSegments
	S := steps - drop
	xs := x[drop*walkers:]
	z := r.normalize(xs, nil)
	var sorted []float64
	if ess {
		sorted = slices.Clone(r.sorted)
	}
	med := medianSorted(r.sorted)
	f := make([]float64, len(xs))
	for i, v := range xs {
		f[i] = math.Abs(v - med)
	}
	fz := r.normalize(f, f)
	n := S / rhatSegments * walkers
	rh = math.Max(
		math.Max(rhat(z, n, rhatSegments), rhat(fz, n, rhatSegments)),
		math.Max(walkerHalvesRhat(z, S, walkers), walkerHalvesRhat(fz, S, walkers)))
	if !ess {
		return rh, bulk, tail
	}
	N := float64(S * walkers)
	bulk = N / ensembleTau(z, S, walkers)
	ind := f // the folded draws are no longer needed
	tail = math.Inf(1)
	for _, p := range []float64{0.05, 0.95} {
		q := numeric.Quantile(sorted, p)
		for i, v := range xs {
			ind[i] = 0
			if v <= q {
				ind[i] = 1
			}
		}
		tail = math.Min(tail, N/ensembleTau(ind, S, walkers))
	}
	return rh, bulk, tail
}

// walkerHalvesRhat is the R-hat of Gelman & Rubin (1992) (Vehtari et al.
// 2021, eq. 1-4) of the 2 x walkers chains made of each walker's first and
// second half, read in place from the layout z[s*walkers+w] (steps even).
func walkerHalvesRhat(z []float64, steps, walkers int) float64 {
	n := steps / 2
	if n < 2 {
		return math.NaN()
	}
	m := 2 * walkers
	sum := make([]float64, m)
	for s := range steps {
		h := (s / n) * walkers
		row := z[s*walkers : (s+1)*walkers]
		for w, v := range row {
			sum[h+w] += v
		}
	}
	for j := range sum {
		sum[j] /= float64(n)
	}
	ss := make([]float64, m)
	for s := range steps {
		h := (s / n) * walkers
		row := z[s*walkers : (s+1)*walkers]
		for w, v := range row {
			d := v - sum[h+w]
			ss[h+w] += d * d
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
// autocovariance about the ensemble's mean. NaN for a constant chain.
func ensembleTau(x []float64, steps, walkers int) float64 {
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	if steps >= directMinLen {
		if tau, ok := ensembleTauDirect(x, steps, walkers, mean); ok {
			return tau
		}
	}
	w := acf.New(steps)
	series := make([]float64, steps)
	ac := make([]float64, steps)
	sum := make([]float64, steps)
	for k := range walkers {
		for s := range steps {
			series[s] = x[s*walkers+k]
		}
		w.AutocovAbout(series, mean, ac)
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
// lag (acf.Lags); ok is false beyond lagBudget lags.
func ensembleTauDirect(x []float64, steps, walkers int, mean float64) (float64, bool) {
	var lg acf.Lags
	lg.LoadInterleavedAbout(x, steps, walkers, mean)
	const B = acf.LagBlock
	buf := make([]float64, walkers*B)
	lg.Block(0, buf)
	c0 := 0.0
	for w := range walkers {
		c0 += buf[w*B]
	}
	if !(c0 > 0) {
		return math.NaN(), true
	}
	var rho [B]float64
	k0 := 0
	budget := lagBudget(steps)
	fill := func() {
		rho = [B]float64{}
		for w := range walkers {
			for i := range B {
				rho[i] += buf[w*B+i]
			}
		}
		for i := range B {
			rho[i] /= c0
		}
	}
	fill()
	tau, _, ok := sokalTau(steps, 1, func(m int) (float64, bool) {
		if m >= k0+B {
			k0 = m - m%B
			if k0 > budget {
				return 0, false
			}
			lg.Block(k0, buf)
			fill()
		}
		return rho[m-k0], true
	})
	return tau, ok
}
