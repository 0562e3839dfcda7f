package evidence

import "math"

// BayesFactor returns ln B = ln Z_a - ln Z_b, the log Bayes factor of model
// a over model b, and its error. The runs are taken to be independent, so
// their total errors (Monte-Carlo plus discretisation) add in quadrature:
//
//	err = sqrt(a.Total^2 + b.Total^2).
//
// Discretisation errors of two runs on similar ladders tend to share a sign
// and partly cancel in the difference, so this is, if anything, cautious.
func BayesFactor(a, b Estimate) (lnB, err float64) {
	return a.LnZ - b.LnZ, math.Hypot(a.Total, b.Total)
}

// BayesFactorEstimate returns ln B = ln Z_a - ln Z_b with the error budget
// split as for an evidence, so both parts and their sum can be reported:
// the Monte-Carlo errors and the discretisation errors of the two
// independent runs each add in quadrature, and Total is their sum (which is
// at least the err of BayesFactor).
func BayesFactorEstimate(a, b Estimate) Estimate {
	mc, disc := math.Hypot(a.MCErr, b.MCErr), math.Hypot(a.DiscErr, b.DiscErr)
	return Estimate{
		LnZ: a.LnZ - b.LnZ, MCErr: mc, DiscErr: disc, Total: mc + disc,
		DiscNoise: math.Hypot(a.DiscNoise, b.DiscNoise),
	}
}

// KassRaftery describes the strength of evidence a log Bayes factor ln B
// (first model over second) carries, on the scale of Kass & Raftery (1995),
// whose thresholds 2, 6 and 10 on 2 ln B become 1, 3 and 5 on ln B. The
// scale is symmetric: a negative ln B favours the second model. A value
// exactly on a threshold takes the stronger category.
func KassRaftery(lnB float64) string {
	return KassRafteryNamed(lnB, "the first model", "the second model")
}

// KassRafteryNamed is KassRaftery for ln B = ln Z(first) - ln Z(second),
// naming the favoured model in the words.
func KassRafteryNamed(lnB float64, first, second string) string {
	if math.IsNaN(lnB) {
		return "undefined (ln B is NaN)"
	}
	side := first
	if lnB < 0 {
		side = second
	}
	switch a := math.Abs(lnB); {
	case a < 1:
		return "inconclusive: hardly worth mentioning either way"
	case a < 3:
		return "positive support for " + side
	case a < 5:
		return "strong support for " + side
	default:
		return "very strong support for " + side
	}
}
