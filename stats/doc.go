// Package stats condenses posterior samples into the numbers a paper
// quotes: 1-D and 2-D marginal densities, quantiles, credible intervals,
// one-sided limits, credible-region levels and exclusion curves.
//
// It takes plain inputs (one []float64 of samples per parameter, with prior
// bounds) and knows nothing about samplers, chain files, tables or figures;
// package report turns its results into files. The methods it implements:
//
//   - Quantiles of sorted samples by linear interpolation between order
//     statistics (Hyndman & Fan 1996, definition 7):
//
//     Q(p) = x_(j) + (h - j) (x_(j+1) - x_(j)),  h = (n-1) p, j = floor(h)
//
//     and equal-tailed intervals [Q((1-p)/2), Q((1+p)/2)] from them. An
//     interval called "68 %" is [Q(Phi(-1)), Q(Phi(1))], of mass
//     erf(1/sqrt 2) = 0.6827, one called "95 %" [Q(0.025), Q(0.975)]
//     (Central68, Central95; docs/physics.md section 8).
//
//   - Highest-density intervals as the shortest interval holding a fraction
//     p of the sorted samples (Chen & Shao 1999). This assumes a unimodal
//     marginal; for a multimodal one it returns the shortest single interval.
//
//   - 1-D densities by a Gaussian kernel density estimate with Silverman's
//     rule-of-thumb bandwidth (Silverman 1986, eq. 3.31)
//
//     h = 0.9 min(sigma, IQR/1.34) n^(-1/5),
//
//     evaluated by linear binning on an equally spaced grid (Wand 1994) and
//     made consistent at a prior edge by reflection (Silverman 1986, sec.
//     2.10): every sample x contributes a kernel at x and at its mirror image
//     2a - x about the edge a.
//
//   - 2-D densities by a Gaussian kernel with full bandwidth matrix from
//     Scott's rule (Scott 1992, eq. 6.42), H = n^(-1/3) Sigma, the sample
//     covariance, binned and reflected in the same way.
//
//   - Credible regions bounded by a density contour: grid cells are sorted by
//     density and their mass accumulated until it reaches the stated
//     probability; the threshold is interpolated between the two cells that
//     straddle it (the highest-posterior-density region of Box & Tiao 1973).
//     The mass is that of the smoothed density (Density2D.Levels) or of the
//     binned samples (Density2D.SampleLevels).
//
//   - A one-sided limit replaces the two-sided intervals when the posterior
//     rails against a prior edge: the reflected density at the edge is at
//     least Options1D.RailFraction (0.5) of its peak.
//
//   - Exclusion curves as conditional quantiles of one parameter within
//     slices of another, from the joint samples, withheld where a slice has
//     fewer samples than MinSlice.
//
// Typical use: Analyze the samples of every parameter, which returns a
// Posterior with every 1-D marginal and its Summary and every pairwise 2-D
// marginal with its contour levels; ExclusionCurve for a limit curve.
package stats
