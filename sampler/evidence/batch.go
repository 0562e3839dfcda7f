package evidence

import "math"

// sokalWindow is the c of Sokal's automatic windowing: the autocorrelation
// sum is truncated at the first lag M with M >= c tau(M).
const sokalWindow = 5

// obmVarOfMean returns the overlapping-batch-means estimate of the variance
// of the mean of g with batch length b (Meketon & Schmeiser 1984):
//
//	sigma^2 = n b / ((n - b)(n - b + 1)) sum_{j=0}^{n-b} (Ybar_j - Ybar)^2,
//	Var(Ybar) = sigma^2 / n,
//
// where Ybar_j is the mean of g[j:j+b]. For b = 1 it is the sample variance
// over n. Batch sums slide along g, so nothing is allocated.
func obmVarOfMean(g []float64, b int) float64 {
	n := len(g)
	if n < 2 {
		return 0
	}
	if b < 1 {
		b = 1
	}
	if b > n-1 {
		b = n - 1
	}
	var mean float64
	for _, v := range g {
		mean += v
	}
	mean /= float64(n)
	var win float64
	for i := 0; i < b; i++ {
		win += g[i] - mean
	}
	var ss float64
	for j := 0; ; j++ {
		d := win / float64(b)
		ss += d * d
		if j+b >= n {
			break
		}
		win += g[j+b] - mean
		win -= g[j] - mean
	}
	nb := float64(n - b)
	sigma2 := float64(n) * float64(b) / (nb * (nb + 1)) * ss
	return sigma2 / float64(n)
}

// seriesVar is the Monte-Carlo variance of the mean of one influence series
// together with what was learnt on the way.
type seriesVar struct {
	varMean float64 // variance of the mean
	tau     float64 // integrated autocorrelation time, in steps
	batch   int     // batch length used
	short   bool    // too few steps for the requested batch length
}

// minBatches is the least number of non-overlapping batch lengths the series
// must hold for the batch-means variance to be usable (common practice:
// 10 to 30 batches).
const minBatches = 10

// batchLen returns the batch length ceil(factor * tau) for a series of n
// steps, capped so that at least minBatches batches fit, and whether the
// cap (or an unclosed autocorrelation window) made it shorter than asked.
func batchLen(tau float64, windowOK bool, n int, factor float64) (b int, short bool) {
	b = max(int(math.Ceil(factor*tau)), 1)
	short = !windowOK
	if limit := n / minBatches; b > limit {
		b = max(limit, 1)
		short = true
	}
	return b, short
}
