package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"tautline/stats"
)

// decimalsFor returns the number of decimal places (negative for tens,
// hundreds, ...) that keeps sig significant figures of e > 0.
func decimalsFor(e float64, sig int) int {
	d := sig - 1 - int(math.Floor(math.Log10(e)))
	// Rounding may carry into a new digit (0.0996 -> 0.10): recount.
	r := roundTo(e, d)
	if int(math.Floor(math.Log10(r))) > int(math.Floor(math.Log10(e))) {
		d--
	}
	return d
}

func roundTo(v float64, d int) float64 {
	p := math.Pow(10, float64(d))
	return math.Round(v*p) / p
}

// fixed formats v with d decimal places (d <= 0 rounds to 10^-d), writing
// a minus sign as LaTeX math expects and never "-0".
func fixed(v float64, d int) string {
	v = roundTo(v, d)
	if v == 0 {
		v = 0
	}
	s := strconv.FormatFloat(v, 'f', max(d, 0), 64)
	if s == "-0" || strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// sciExponent returns the power of ten to factor out of a value of size m,
// or 0 when fixed notation reads well (1e-3 <= m < 1e4).
func sciExponent(m float64) int {
	if m == 0 || (m >= 1e-3 && m < 1e4) {
		return 0
	}
	return int(math.Floor(math.Log10(m)))
}

// FormatAsym formats value v with asymmetric errors as LaTeX math (without
// dollar signs), e.g. "-7.52^{+0.31}_{-0.45}". The smaller error is rounded
// to sig significant figures (2 when sig < 1) and the value and the other
// error to the same decimal place. Equal rounded errors give "v \pm e".
// Values of size 1e4 or more, or below 1e-3, factor out a power of ten:
// "(1.23^{+0.05}_{-0.04}) \times 10^{-9}". Non-positive or non-finite
// errors give the value alone to sig+1 significant figures.
func FormatAsym(v, plus, minus float64, sig int) string {
	if sig < 1 {
		sig = 2
	}
	if !finite(v) {
		return fmtNonFinite(v)
	}
	if !(plus > 0 && minus > 0) || !finite(plus) || !finite(minus) {
		return formatSig(v, sig+1)
	}
	e := sciExponent(math.Abs(v))
	if v == 0 {
		e = sciExponent(math.Max(plus, minus))
	}
	sc := math.Pow(10, float64(-e))
	v, plus, minus = v*sc, plus*sc, minus*sc
	d := decimalsFor(math.Min(plus, minus), sig)
	vs, ps, ms := fixed(v, d), fixed(plus, d), fixed(minus, d)
	var body string
	if ps == ms {
		body = vs + ` \pm ` + ps
	} else {
		body = vs + "^{+" + ps + "}_{-" + ms + "}"
	}
	if e == 0 {
		return body
	}
	return "(" + body + `) \times 10^{` + strconv.Itoa(e) + "}"
}

// FormatPM formats v ± e like FormatAsym with equal errors.
func FormatPM(v, e float64, sig int) string { return FormatAsym(v, e, e, sig) }

// formatSig formats v to sig significant figures in LaTeX math.
func formatSig(v float64, sig int) string {
	if !finite(v) {
		return fmtNonFinite(v)
	}
	if v == 0 {
		return "0"
	}
	e := sciExponent(math.Abs(v))
	m := v * math.Pow(10, float64(-e))
	s := fixed(m, decimalsFor(math.Abs(m), sig))
	if e == 0 {
		return s
	}
	return s + `\times 10^{` + strconv.Itoa(e) + "}"
}

func fmtNonFinite(v float64) string {
	switch {
	case math.IsInf(v, 1):
		return `\infty`
	case math.IsInf(v, -1):
		return `-\infty`
	}
	return `\text{n/a}`
}

// FormatLimit formats a one-sided limit as LaTeX math: "< 3.9" for an
// upper limit, "> 0.36" for a lower one. The limit is cut to the decimal
// place of the first significant figure of scale, a measure of the
// posterior's spread such as its standard deviation; when scale is not
// positive, to sig significant figures (2 when sig < 1) of the limit
// itself. Digits before the decimal point are kept.
//
// The cut is outward, never to nearest: an upper limit is rounded up and a
// lower limit down, so that the printed bound is never tighter than the
// one the samples give (a 95 % upper limit of -1.68 with a spread of 1
// reads "< -1", not "< -2"). The quoted credible mass is then a lower
// bound on the mass beyond the printed number.
func FormatLimit(v, scale float64, upper bool, sig int) string {
	if sig < 1 {
		sig = 2
	}
	op := "> "
	if upper {
		op = "< "
	}
	if !finite(v) {
		return op + fmtNonFinite(v)
	}
	if e := sciExponent(math.Abs(v)); e != 0 {
		if scale > 0 && finite(scale) {
			sig = max(1, decimalsFor(scale, 1)+e+1)
		}
		return op + formatSigOutward(v, sig, upper)
	}
	d := 0
	switch {
	case scale > 0 && finite(scale):
		d = max(decimalsFor(scale, 1), 0)
	case v != 0:
		d = max(decimalsFor(math.Abs(v), sig), 0)
	}
	return op + fixed(roundOutward(v, d, upper), d)
}

// roundOutward rounds v to d decimal places up (up true) or down. A value
// within a few ulps of the grid, such as 2.5e-5 scaled to 2.5000000000000004,
// counts as on it, so that exact limits are not pushed a digit outward by
// the binary representation.
func roundOutward(v float64, d int, up bool) float64 {
	p := math.Pow(10, float64(d))
	x := v * p
	if !finite(x) {
		return v
	}
	if r := math.Round(x); math.Abs(x-r) <= 1e-9*math.Max(1, math.Abs(x)) {
		return r / p
	}
	if up {
		return math.Ceil(x) / p
	}
	return math.Floor(x) / p
}

// formatSigOutward formats v, of size 1e4 or more or below 1e-3, to sig
// significant figures in LaTeX math with a power of ten, rounding up (up
// true) or down like roundOutward.
func formatSigOutward(v float64, sig int, up bool) string {
	e := sciExponent(math.Abs(v))
	m := roundOutward(v*math.Pow(10, float64(-e)), sig-1, up)
	if math.Abs(m) >= 10 {
		// Rounding up carried into a new digit (9.96 -> 10.0).
		e++
		m /= 10
	}
	return fixed(m, sig-1) + `\times 10^{` + strconv.Itoa(e) + "}"
}

// FormatInterval formats [lo, hi] with the decimal places of the
// intervals' width to sig significant figures.
func FormatInterval(iv stats.Interval, sig int) string {
	if sig < 1 {
		sig = 2
	}
	if !finite(iv.Lo) || !finite(iv.Hi) || !(iv.Hi > iv.Lo) {
		return "[" + formatSig(iv.Lo, sig+1) + ", " + formatSig(iv.Hi, sig+1) + "]"
	}
	m := math.Max(math.Abs(iv.Lo), math.Abs(iv.Hi))
	if e := sciExponent(m); e != 0 {
		sc := math.Pow(10, float64(-e))
		d := decimalsFor(iv.Width()*sc, sig)
		return "[" + fixed(iv.Lo*sc, d) + ", " + fixed(iv.Hi*sc, d) + `] \times 10^{` + strconv.Itoa(e) + "}"
	}
	d := decimalsFor(iv.Width(), sig)
	return "[" + fixed(iv.Lo, d) + ", " + fixed(iv.Hi, d) + "]"
}

// escapeText escapes LaTeX special characters in plain text.
func escapeText(s string) string {
	r := strings.NewReplacer(`\`, `\textbackslash{}`, `&`, `\&`, `%`, `\%`, `$`, `\$`, `#`, `\#`,
		`_`, `\_`, `{`, `\{`, `}`, `\}`, `~`, `\textasciitilde{}`, `^`, `\textasciicircum{}`)
	return r.Replace(s)
}

// paramCell is the LaTeX label of a summary with its unit.
func paramCell(s stats.Summary) string {
	lab := "$" + s.Label + "$"
	if s.Label == "" {
		lab = escapeText(s.Name)
	}
	if s.Unit != "" {
		lab += " [" + escapeText(s.Unit) + "]"
	}
	return lab
}

// SummaryTable returns a LaTeX tabular of the summaries: parameter label,
// median with its 68 % equal-tailed errors, and the 95 % equal-tailed
// interval or, for a posterior railing against a prior edge, the one-sided
// limit (the median column is then a dash). sig is the number of
// significant figures of the smaller error (2 when sig < 1).
func SummaryTable(ss []stats.Summary, sig int) string {
	var b strings.Builder
	b.WriteString("\\begin{tabular}{lcc}\n\\hline\n")
	b.WriteString("Parameter & Median, 68\\,\\% interval & 95\\,\\% interval or limit \\\\\n\\hline\n")
	for _, s := range ss {
		mid, wide := "---", ""
		pct := strconv.FormatFloat(100*s.LimitMass, 'f', -1, 64)
		switch s.Rails {
		case stats.EdgeLower:
			wide = "$" + FormatLimit(s.Limit, s.Std, true, sig) + "$ (" + pct + "\\,\\%)"
		case stats.EdgeUpper:
			wide = "$" + FormatLimit(s.Limit, s.Std, false, sig) + "$ (" + pct + "\\,\\%)"
		case stats.EdgeBoth:
			wide = "unconstrained"
		default:
			mid = "$" + FormatAsym(s.Median, s.ET68.Hi-s.Median, s.Median-s.ET68.Lo, sig) + "$"
			wide = "$" + FormatInterval(s.ET95, sig) + "$"
		}
		fmt.Fprintf(&b, "%s & %s & %s \\\\\n", paramCell(s), mid, wide)
	}
	b.WriteString("\\hline\n\\end{tabular}\n")
	return b.String()
}

// An Evidence row of a model-comparison table: the log evidence of one
// model from thermodynamic integration (TI) and stepping stones (SS), each
// with its standard error (NaN marks an estimate that was not computed),
// and its log Bayes factor against the table's reference with error and
// reading, as the evidence computation gave them (package sampler/evidence
// defines the rule; the table only quotes it, so that a run never shows two
// different ln B).
type Evidence struct {
	// Model names the model; Label, when set, is LaTeX used instead.
	Model, Label    string
	LnZTI, LnZTIErr float64
	LnZSS, LnZSSErr float64
	// LnB and LnBErr are ln Z(model) - ln Z(reference) and its error;
	// Reading is their interpretation in plain words. The reference row's
	// are ignored.
	LnB, LnBErr float64
	Reading     string
}

func modelCell(e Evidence) string {
	if e.Label != "" {
		return e.Label
	}
	return escapeText(e.Model)
}

// ComparisonTable returns a LaTeX tabular with one row per model: ln Z from
// TI and SS with errors, and each row's ln B against the model named
// reference with its error and reading. sig is the significant figures of
// errors (2 when sig < 1).
func ComparisonTable(rows []Evidence, reference string, sig int) (string, error) {
	ri := -1
	for i, r := range rows {
		if r.Model == reference {
			ri = i
		}
	}
	if ri < 0 {
		return "", fmt.Errorf("report: comparison: reference model %q not among the %d rows", reference, len(rows))
	}
	ref := rows[ri]
	pm := func(v, e float64) string {
		if !finite(v) {
			return "---"
		}
		return "$" + FormatPM(v, e, sig) + "$"
	}
	var b strings.Builder
	b.WriteString("\\begin{tabular}{lcccl}\n\\hline\n")
	fmt.Fprintf(&b, "Model & $\\ln Z$ (TI) & $\\ln Z$ (SS) & $\\ln B$ vs %s & Evidence \\\\\n\\hline\n", modelCell(ref))
	for i, r := range rows {
		cell, words := "reference", "---"
		if i != ri {
			cell, words = pm(r.LnB, r.LnBErr), "---"
			if r.Reading != "" {
				words = escapeText(r.Reading)
			}
		}
		fmt.Fprintf(&b, "%s & %s & %s & %s & %s \\\\\n", modelCell(r), pm(r.LnZTI, r.LnZTIErr), pm(r.LnZSS, r.LnZSSErr), cell, words)
	}
	b.WriteString("\\hline\n\\end{tabular}\n")
	return b.String(), nil
}
