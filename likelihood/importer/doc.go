// Package importer turns free spectra as they are commonly distributed into
// tautline data sets (package likelihood, written as YAML plus CSV tables):
//
//   - a matrix of posterior samples of log10 rho, one row per sample and one
//     column per frequency bin, stored as a NumPy .npy file (format versions
//     1.0, 2.0 and 3.0 of the NumPy format specification, NEP 1; float32 or
//     float64, either byte order, C or Fortran order), as one array of an
//     .npz archive, or as whitespace- or comma-separated text with or without
//     a header row; or the same samples in long form (bin, value);
//   - per-bin densities on a grid in wide form: one column of log10 rho and
//     one density column per bin;
//   - summary tables: per bin a median with a central interval, or a
//     one-sided upper limit.
//
// A file cannot say everything a data set needs, so the caller states it in
// a Meta: the time span, the bin frequencies, the uniform prior range of
// log10 rho under which the posteriors were made, the name, where the data
// come from, and the unit of the values (log10 rho in s, log10 rho in ns,
// ln rho in s, or log10 of the timing-residual PSD S(f) in s^3, converted
// with rho^2 = S/T, docs/physics.md section 5). Every conversion, burn-in,
// thinning and column choice is appended to the data set's provenance.
//
// Summaries keep three numbers of each posterior and lose the rest; they are
// written as densities on a grid whose shape is stated (a split normal
// matched to the median and interval, after John 1982, "The three-parameter
// two-piece normal family of distributions"; or flat below an upper limit
// with a half-normal fall-off), and the reader returns a warning saying so.
//
// Readers refuse what is not a regular file (a pipe, a device) and cap what
// they read (DefaultLimit, 2 GiB, for matrices and grids; SummaryLimit for
// summaries). Inputs that look like the usual mistakes (a transposed matrix,
// ln rho given as log10 rho, NaN, too few samples, samples outside the stated
// prior) are refused with a message naming the file and column.
package importer
