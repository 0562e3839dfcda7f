// Package cosmicstrings computes the stochastic gravitational-wave background of
// a cosmic-string loop network in the one-scale model (docs/physics.md section
// 3; the published form of Cui, Lewicki, Morrissey & Wells 2018-2019 and
// Sousa, Avelino & Guedes 2020), with the loop-production coefficient C_eff
// from the velocity-dependent one-scale equations (Martins & Shellard 1996,
// 2002) solved on the tabulated Lambda-CDM background of package cosmology.
//
// # Direct path
//
// Direct evaluates
//
//	Omega_GW(f) = P^(-kappa) sum_{k=1}^{N} (Gamma_k/Gamma_1) Omega^(1)(f/k),
//	Omega^(1)(f) = (8 pi/(3 H0^2)) (Gmu)^2 (2/f) F Gamma_1 / (alpha (alpha + Gamma Gmu))
//	               * integral d ln t  t C_eff(t_i) a(t_i)^3 a(t)^2 / t_i^4,
//
// with l = 2 a(t)/f and t_i = (l + Gamma Gmu t)/(alpha + Gamma Gmu) <= t.
// Omega^(1) is integrated by globally adaptive Gauss-Kronrod 7-15 in ln t
// (relative tolerance 1e-7; agreement with gonum's fixed Gauss-Legendre rule
// to better than 1e-6 is tested) on a grid in frequency (below). The first
// 32 harmonics are summed term by term with cubic interpolation on the grid;
// harmonics 33..N by the Euler-Maclaurin formula, the integral over k being
// the trapezoidal rule on the same grid. The grid is uniform (step 0.04) in
// y = ln(f - f_low) rather than ln f, where f_low = 2/(alpha t0) is the
// cutoff below which Omega^(1) vanishes: just above it Omega^(1) rises
// steeply (over about 0.05 in ln f, because H0 t0 = 0.95 makes the lower
// time limit move fast), and for large Gmu and small alpha that rise
// dominates the mode sum. Measured accuracy of Omega_GW: 2e-5 at worst
// (median about 1e-6) against brute-force mode sums and a grid four times
// finer. One spectrum at 30 frequencies costs of order 15 ms
// (BenchmarkDirect30).
//
// Modes = N (default 1e5) truncates the sum; Modes = 0 sums to infinity
// (the sum is then finite because Omega^(1) vanishes below 2/(alpha t0)).
// For cusps the truncation at N = 1e5 lowers the plateau by
// N^(1-q)/((q-1) zeta(q)) = 1.8 %.
//
// # Fast path
//
// A Table holds ln Omega at P = 1 on nodes every 0.2 in log10 Gmu
// (-14..-6) and log10 alpha (-5..0) and every 0.1 in ln f (1e-11..1e-5 Hz),
// with one extra node beyond each edge, so that tricubic Lagrange
// interpolation never extrapolates; P enters exactly as -kappa ln P. Points
// outside the domain get ErrOutsideTable, frequencies outside the band
// ErrFrequencyOutsideTable (the direct path has no band). BuildTable computes it in
// parallel and certifies it against the direct path at random points and
// cell centres inside the default prior box, failing if any error of
// ln Omega in 1e-10..1e-6 Hz exceeds 0.01. The table for DefaultSettings is
// compiled in (defaulttable.bin, 0.7 MB of float32); other settings are
// built once and cached under os.UserCacheDir()/tautline, keyed by
// Settings.TableHash, which leaves out Kappa (kept in memory only, with an error wrapping ErrCacheWrite,
// when there is no cache directory). The step C_eff has no table: it puts a kink in Omega(f) at
// a position that moves with (Gmu, alpha), which interpolation would smooth
// over; use the direct path for it.
//
// Model wraps either path as a models.Model with parameters log10_Gmu,
// log10_alpha and log10_P. Its table Spectrum collapses the ln f direction
// in At, so LnOmega costs 16 multiply-adds per frequency and allocates
// nothing.
//
// # Metastable strings
//
// MetastableDirect and MetastableTable (parameters log10_Gmu and
// sqrt_kappa_m, model "strings-metastable"; docs/physics.md section 21)
// follow the one-scale loops until the network breaks up at
//
//	t_s = Gamma_d^(-1/2) = sqrt(2 pi/Gmu) exp(pi kappa/2) t_Planck,
//	Gamma_d = (mu/(2 pi)) exp(-pi kappa),
//
// the monopole-pair nucleation rate per unit length of Leblond, Shlaer &
// Siemens 2009, as used by Buchmueller, Domcke & Schmitz 2021 (both from
// memory). No loop is born after t_s, and each one alive then survives
// with probability exp(-Gamma_d [l (t - t_s) + (1/2) Gamma Gmu (t - t_s)^2]).
// The spectrum vanishes below f_* = 2 a(t_s)/(alpha t_s), rises as f^2
// (in radiation, zeta(q+2) (8 pi^(3/2)/9) Gmu^2 F Gamma_1 C_r alpha^(1/2)
// sqrt(Omega_r) t_s f^2/H0, derived from these equations and tested), and is
// the stable spectrum when t_s is after today. alpha and P are fixed
// settings. The table is gridded in log10 Gmu, log10 t_s (ending on a node
// at today's age, where the spectrum has a kink in t_s) and ln(f/f_*),
// stores ln Omega - ln(1 - f_*/f) at P = 1, and is certified to 0.0074 in
// ln Omega (metatable.bin, 1.0 MB).
//
// # Simulation-calibrated loops
//
// BOSDirect and BOSTable (parameters log10_Gmu and log10_P, model
// "strings-bos"; docs/physics.md section 22) use the loop number density of
// Blanco-Pillado, Olum & Shlaer 2014 (coefficients from memory), with
// x = l + Gamma Gmu t,
//
//	n_r = 0.18 t^(-3/2) x^(-5/2)              (radiation era, l <= 0.1 t),
//	n_m = (0.27 - 0.45 (l/t)^0.31) t^-2 x^-2  (matter era, l <= 0.18 t),
//
// the radiation-era loops carried into the matter era by dilution as a^-3.
// It has no alpha and no F. Its table (bostable.bin, 25 kB) is bicubic in
// (log10 Gmu, ln f) and certified to 0.0028.
//
// Both share with the one-scale model the mode sum (modesum.go), the
// quadrature of a loop population (loops.go), the grid storage, file
// format, certification and cache loading (grid.go).
//
// units.go converts Gmu to the mass per length, the symmetry-breaking scale,
// the deficit angle and the largest lensing image separation (docs/physics.md
// section 9).
package cosmicstrings
