// Package likelihood reads free-spectrum data sets and scores
// gravitational-wave background models against them.
//
// A free spectrum gives, for each frequency bin f_i of a timing array with
// time span T, the marginal posterior of log10 rho_i, where rho_i^2 (s^2) is
// the variance of the bin's Fourier amplitudes of the timing residuals,
//
//	rho_i^2 = S(f_i) / T = H0^2 Omega_GW(f_i) / (8 pi^4 f_i^5 T),
//
// obtained under a uniform prior on log10 rho_i over a stated range
// [lo, hi]. Because that prior is flat, the free-spectrum likelihood of a
// model with parameters theta is, up to a constant,
//
//	ln L(theta) = sum_i ln p_i(log10 rho_i(theta)),
//
// the sum of the per-bin posterior log densities (the factorised
// free-spectrum likelihood). FreeSpectrum tabulates each ln p_i once and
// evaluates ln L by table look-up; Posterior combines it with a model and
// priors into the sampler's target.
//
// # Data-set format
//
// A data set is a YAML description plus one to three CSV tables; see
// FORMAT.md beside this file for the full reference. In short:
//
//	name: demo
//	provenance: "simulated: invented array of 20 pulsars ..."
//	span_seconds: 4.7e8          # or span_years (Julian years)
//	frequencies:
//	  harmonics: 14              # f_i = i/T, i = 1..14
//	  # hz: [2.1e-9, ...]        # or list them (relative tolerance 1e-6 to i/T)
//	  # irregular: true          # listed frequencies that are not i/T
//	log10_rho_prior: [-9, -4]
//	tables:                      # at least one; paths relative to this file
//	  samples: demo-samples.csv  # header bin,log10_rho       (long format)
//	  grid: demo-grid.csv        # header bin,log10_rho,density
//	  gaussian: demo-gaussian.csv # header bin,mean,sd
//
// Bins are numbered 1..n in the tables. Each bin takes exactly one
// representation; rows of a bin are contiguous. Load reports the first
// problem as one sentence naming the file, line and field.
//
// # Densities
//
// Samples are turned into a density by a Gaussian kernel density estimate
// with reflection at both prior edges (the reflection method for boundary
// bias), bandwidth by Scott's normal-reference rule h = (4/(3n))^(1/5) sigma
// (Scott 1992) or Silverman's rule h = 0.9 min(sigma, IQR/1.34) n^(-1/5)
// (Silverman 1986, eq. 3.31). Grids are interpolated linearly in ln density
// and renormalised over the prior range; summaries use the normal density
// renormalised over the prior range. Tabulated densities are floored at
// DensityFloor (1e-12) times the bin's peak so that zero densities stay
// finite.
//
// Outside the prior range (docs/physics.md section 5): below lo the per-bin
// posterior is flat, the noise floor, so ln p_i is clamped to its value at
// lo; above hi the likelihood is exactly zero (ln p_i = -Inf; NaN counts as
// above), since the data's posteriors were made under a prior that is zero
// there. Options.Penalty selects a finite stand-in,
// ln p_i(hi) - Penalty (1 + (x - hi)), for callers that need one;
// LogLikeExact ignores it, and evidence calculations use LogLikeExact.
//
// # Posterior
//
// Posterior is the sampler's target: priors of the free parameters (point
// masses, priors implementing priors.PointMass, are held fixed and not
// sampled)
// times the free-spectrum likelihood of the model, with
// log10 rho_i = ln Omega_i / (2 ln 10) + 0.5 log10(H0^2 / (8 pi^4 f_i^5 T)).
// A parameter vector outside the model's domain has LogLike = -Inf, which
// the sampler treats as zero prior support.
//
// Joint sums the free-spectrum log likelihoods of several independent data
// sets, each with its own span, bins and prior range, for one model.
// Dataset.Select keeps a subset of a data set's bins and records which.
package likelihood
