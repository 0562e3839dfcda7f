// Package report turns the statistics of package stats into the tables,
// data files and figures of a paper.
//
// It takes a stats.Posterior (or plain samples and curves) and knows nothing
// about samplers or chain files. What it writes:
//
//   - CSV and JSON files of every summary, 1-D and 2-D marginal and
//     exclusion curve (WritePosterior, WriteExclusion), each JSON file with
//     a Metadata block naming the run; non-finite numbers are JSON null
//     (Num).
//
//   - LaTeX tables of the summaries (WriteSummaryTable: the median with its
//     68 % equal-tailed errors, the smaller error to a given number of
//     significant figures and the rest to its decimal place, or a one-sided
//     limit rounded outward) and of a model comparison quoting each model's
//     ln B and its reading as the evidence computation (package
//     sampler/evidence) gave them (WriteComparison).
//
//   - Figures: CornerFigure, SpectrumFigure, LnLBetaFigure, TraceFigure and
//     ExclusionFigure (PNG, SVG, optionally PDF).
//
// Every file is written atomically (temporary file, then rename) so that a
// failed report leaves no half-written file. Figures are sized for a journal
// column (3.4 in) or page (7 in) with 7-8.5 pt sans-serif type; labels are
// TeX math (AxisLabel) typeset with sub- and superscripts, Greek letters and
// math italics by the figures' own text handler; every linear axis labels
// its ticks by one rule (tickLabels), with a common power of ten moved into
// the axis label; series differ in lightness and dash as well as hue so
// that they survive greyscale printing. The corner figure quotes each
// parameter's median and 68 % interval, or its one-sided limit, in a table
// in its empty upper triangle.
package report
