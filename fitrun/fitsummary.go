package fitrun

import (
	"math"
	"slices"

	"tautline/rundir"
	"tautline/stats"
)

// FitSummary summarises each of the dim columns of the n x dim row-major
// samples post, as a fit's summary.json gives them: the median, the 68 %
// and 95 % equal-tailed intervals (the Phi(-1), Phi(1), 0.025 and 0.975
// quantiles of the sorted column by stats.Quantile), the mean and the
// sample standard deviation (n - 1 in the denominator).
func FitSummary(names []string, post []float64, n, dim int) []rundir.ParamSummary {
	out := make([]rundir.ParamSummary, dim)
	col := make([]float64, n)
	for k := range dim {
		var m, m2 float64
		for i := range n {
			col[i] = post[i*dim+k]
			m += col[i]
		}
		m /= float64(n)
		for _, v := range col {
			m2 += (v - m) * (v - m)
		}
		slices.Sort(col) // stats.Quantile takes sorted samples
		out[k] = rundir.ParamSummary{
			Name: names[k], Median: stats.Quantile(col, 0.5),
			Lo68: stats.Quantile(col, stats.P68Lo), Hi68: stats.Quantile(col, stats.P68Hi),
			Lo95: stats.Quantile(col, stats.P95Lo), Hi95: stats.Quantile(col, stats.P95Hi),
			Mean: m, Std: math.Sqrt(m2 / float64(max(n-1, 1))),
		}
	}
	return out
}
