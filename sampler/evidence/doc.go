// Package evidence estimates the marginal likelihood (evidence) Z of a model
// from samples of ln L drawn on a ladder of power posteriors
//
//	p_beta(theta) ∝ L(theta)^beta pi(theta),   0 = beta_0 < ... < beta_K = 1,
//
// and compares models through Bayes factors.
//
// Two estimators are computed from the same samples.
//
// Thermodynamic integration (Gelman & Meng 1998; Friel & Pettitt 2008):
//
//	ln Z = ∫_0^1 E_beta[ln L] dbeta,
//
// evaluated with the trapezoidal rule and with the derivative-corrected
// trapezoid of Friel, Hurn & Wyse (2014), which uses
// d E_beta[ln L] / dbeta = Var_beta[ln L]:
//
//	ln Z ≈ sum_k h_k (E_k + E_{k+1}) / 2 - sum_k h_k^2 (V_{k+1} - V_k) / 12,
//
// with h_k = beta_{k+1} - beta_k. The correction is exact for a cubic
// E_beta and is what this package recommends (Result.TIHigher). Simpson's
// rule for uneven grids was considered instead: it ignores the derivative,
// and on (k/K)^5 ladders, where E_beta bends sharply, it was several times
// less accurate than the correction.
//
// Stepping-stone sampling (Xie et al. 2011):
//
//	ln Z = sum_k ln E_{beta_k}[ exp((beta_{k+1} - beta_k) ln L) ],
//
// evaluated in log-sum-exp form with the samples of the lower rung of each
// interval.
//
// # Monte-Carlo errors
//
// Every estimator is, to first order, a sum over rungs of sample means, so its
// Monte-Carlo error follows from the influence series of each rung: per step
// s, the walker-averaged quantity whose mean is the rung's linearised
// contribution (w_k ln L for the trapezoid, plus u_k (ln L - E_k)^2 for the
// derivative correction, and exp(h_k ln L)/r_k - 1 for stepping-stone, the
// delta method in log space). Averaging over walkers first keeps the
// correlation between walkers of one ensemble. The variance of the mean of
// each series is estimated by overlapping batch means (Meketon & Schmeiser
// 1984; Flegal & Jones 2010) with batch length Options.BatchFactor (10)
// times the integrated autocorrelation time of the rung, the largest of its
// three base series' times measured with Sokal's automatic window (c = 5),
// and at most a tenth of the steps (a warning says when that cap binds). Rung contributions are added in quadrature,
// which assumes independent rungs. Parallel-tempering swaps correlate
// neighbouring rungs; when the rungs were recorded step by step together
// (Options.Synchronous), the per-rung series are summed step by step before
// batching, so the cross-rung covariances swaps create are included.
//
// # Discretisation errors
//
// The trapezoid's discretisation error is reported as the larger of
// |T - C| (the derivative correction is the leading Euler-Maclaurin term of
// the trapezoid's error) and |T - T'|/3 (Richardson's estimate for an h^2
// rule, T' being the trapezoid on the every-other-rung sub-ladder). The
// corrected rule's is |C - C'|/3: it assumes only that halving the ladder at
// least quadruples the error, which holds on coarse ladders where the h^4
// rate is not yet reached; on fine ladders it overstates the error by up to a
// factor five, a price paid so that coarse ladders are not overconfident.
// Stepping-stone has no quadrature error; its DiscErr is the estimated
// first-order bias of the log of a sample mean, sum_k sigma_k^2 / 2.
// Estimate.Total is MCErr + DiscErr. The sub-ladder and rule differences
// carry Monte-Carlo noise of their own; Estimate.DiscNoise is its standard
// error, so that Advise can tell a ladder that is too coarse from a run
// that is too short.
//
// # Zero likelihood on part of the prior
//
// When the likelihood is exactly zero on part of the prior (a model above
// the data's range, docs/physics.md section 5), the rungs sample the prior
// restricted to the region R where it is not, and estimate ln Z_R.
// Options.PriorMass, the fraction p of independent prior draws inside R
// (NewPriorMass), adds ln p to every estimate and its binomial error
// sqrt((1-p)/(p M)) to every budget as Estimate.PriorMassErr, so that
// Total = MCErr + DiscErr + PriorMassErr.
//
// TIHigher and SS are compared through their difference, whose Monte-Carlo
// error is computed from the paired influence series (both use the same
// samples, so most of the noise cancels) and combined in quadrature with
// both discretisation errors; Result.Disagree flags a difference beyond
// Options.DisagreeAt (3) such errors.
//
// # References (bibliographic details from memory)
//
//   - Gelman & Meng 1998, Statistical Science 13, 163.
//   - Friel & Pettitt 2008, J. R. Statist. Soc. B 70, 589.
//   - Friel, Hurn & Wyse 2014, Statistics and Computing 24, 709.
//   - Xie, Lewis, Fan, Kuo & Chen 2011, Systematic Biology 60, 150.
//   - Meketon & Schmeiser 1984, Proc. Winter Simulation Conference, 227.
//   - Flegal & Jones 2010, Annals of Statistics 38, 1034.
//   - Sokal 1997, in Functional Integration: Basics and Applications, Plenum.
//   - Kass & Raftery 1995, J. Am. Statist. Assoc. 90, 773.
package evidence
