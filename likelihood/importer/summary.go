package importer

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"tautline/internal/numeric"
	"tautline/likelihood"
)

// Interval levels of a summary table.
const (
	// Level68 is the central one-sigma interval (68.27 %, from the 15.87 %
	// to the 84.13 % quantile), usually quoted as "68 %".
	Level68 = 68
	// Level95 is the central 95 % interval (2.5 % to 97.5 %).
	Level95 = 95
)

// Grid sizes of summary densities.
const (
	summaryMinPoints = 401
	summaryMaxPoints = 20001
	// pointsPerSigma is the grid density across the narrowest half-width:
	// ln density is quadratic there and linear interpolation errs by at
	// most (1/8)^2/8 = 2e-3 in ln p at this spacing.
	pointsPerSigma = 8
)

// A SummaryRow summarises one bin's posterior of log10 rho (in the unit
// of the file): either a median with a central interval [Lower, Upper], or
// (Median NaN) a one-sided upper limit Limit.
type SummaryRow struct {
	Median, Lower, Upper float64
	Limit                float64
}

// SummaryOptions configure FromSummary.
type SummaryOptions struct {
	Meta
	// Level is the central interval of the two-sided rows, Level68 or
	// Level95; 0 means Level68.
	Level int
	// LimitLevel is the probability below the upper limits, in (0.5, 1);
	// 0 means 0.95.
	LimitLevel float64
}

// ReadSummary reads a summary table and converts it with FromSummary. The
// table has a header row naming its columns (any order, any case): median
// with lower and upper (the interval's ends) or minus and plus (positive
// distances from the median), and/or limit; an optional bin column must
// count 1, 2, ... . Fields are separated by commas or white space; an empty
// field, "-" or "nan" means absent. One row per bin, in bin order. The file
// is capped at SummaryLimit.
func ReadSummary(path string, opt SummaryOptions) (*likelihood.Dataset, string, error) {
	f, _, err := openRegular(path, SummaryLimit)
	if err != nil {
		return nil, "", err
	}
	defer f.Close()
	rows, lines, err := decodeSummary(&capped{r: f, left: SummaryLimit, limit: SummaryLimit, file: path}, path)
	if err != nil {
		return nil, "", err
	}
	return fromSummary(rows, lines, path, opt)
}

func decodeSummary(r io.Reader, src string) ([]SummaryRow, []int, error) {
	s := newLineScanner(r, src)
	fail := func(format string, a ...any) ([]SummaryRow, []int, error) {
		return nil, nil, fmt.Errorf("importer: %s: "+format, append([]any{src}, a...)...)
	}
	if !s.next() {
		if err := s.err(); err != nil {
			return nil, nil, err
		}
		return fail("empty; the first row must name the columns (median, lower, upper or minus, plus; limit; bin)")
	}
	comma := strings.Contains(s.text, ",")
	col := map[string]int{}
	for k, h := range splitFields(s.text, comma) {
		h = strings.ToLower(h)
		switch h {
		case "median", "lower", "upper", "minus", "plus", "limit", "bin":
		default:
			return fail("line %d: header: unknown column %q (known: median, lower, upper, minus, plus, limit, bin)", s.line, h)
		}
		if _, dup := col[h]; dup {
			return fail("line %d: header: column %q given twice", s.line, h)
		}
		col[h] = k
	}
	has := func(k string) bool { _, ok := col[k]; return ok }
	switch {
	case has("lower") != has("upper") || has("minus") != has("plus"):
		return fail("line %d: header: give lower with upper, or minus with plus", s.line)
	case has("lower") && has("minus"):
		return fail("line %d: header: give the interval as lower, upper or as minus, plus, not both", s.line)
	case has("median") != (has("lower") || has("minus")):
		return fail("line %d: header: a median needs an interval (lower, upper or minus, plus) and an interval a median", s.line)
	case !has("median") && !has("limit"):
		return fail("line %d: header: name median with its interval, or limit", s.line)
	}
	nf := len(col)
	var rows []SummaryRow
	var lines []int
	for s.next() {
		f := splitFields(s.text, comma)
		if len(f) != nf {
			return fail("line %d: %d fields, but the header has %d", s.line, len(f), nf)
		}
		get := func(k string) (float64, error) {
			j, ok := col[k]
			if !ok {
				return math.NaN(), nil
			}
			x := f[j]
			if x == "" || x == "-" || strings.EqualFold(x, "nan") {
				return math.NaN(), nil
			}
			v, err := strconv.ParseFloat(x, 64)
			if err != nil || !finite(v) {
				return 0, fmt.Errorf("importer: %s: line %d: %s: %q is not a finite number", src, s.line, k, x)
			}
			return v, nil
		}
		var v [7]float64
		for k, name := range []string{"median", "lower", "upper", "minus", "plus", "limit", "bin"} {
			x, err := get(name)
			if err != nil {
				return nil, nil, err
			}
			v[k] = x
		}
		if has("bin") && v[6] != float64(len(rows)+1) {
			return fail("line %d: bin: expected %d (one row per bin, in order), got %s", s.line, len(rows)+1, f[col["bin"]])
		}
		row := SummaryRow{Median: v[0], Lower: v[1], Upper: v[2], Limit: v[5]}
		if has("minus") {
			if v[3] <= 0 || v[4] <= 0 {
				return fail("line %d: minus and plus must be > 0 (distances from the median), got %g and %g", s.line, v[3], v[4])
			}
			row.Lower, row.Upper = v[0]-v[3], v[0]+v[4]
		}
		two := !math.IsNaN(row.Median) || !math.IsNaN(row.Lower) || !math.IsNaN(row.Upper)
		switch {
		case two && !math.IsNaN(row.Limit):
			return fail("line %d: give either a median with its interval or an upper limit, not both", s.line)
		case two && (math.IsNaN(row.Median) || math.IsNaN(row.Lower) || math.IsNaN(row.Upper)):
			return fail("line %d: the median and both ends of the interval are needed", s.line)
		case !two && math.IsNaN(row.Limit):
			return fail("line %d: no median and no upper limit", s.line)
		}
		rows = append(rows, row)
		lines = append(lines, s.line)
		if len(rows) > 1<<16 {
			return fail("more than %d rows", 1<<16)
		}
	}
	if err := s.err(); err != nil {
		return nil, nil, err
	}
	if len(rows) == 0 {
		return fail("no rows after the header")
	}
	return rows, lines, nil
}

// FromSummary turns per-bin summaries into a data set of grid bins and
// returns with it a warning that a summary throws information away. src
// names the input in messages.
//
// A two-sided row becomes a split normal (two-piece normal, John 1982)
// with mode m and half-widths s1 below and s2 above,
//
//	p(x) ∝ exp(-(x-m)^2 / (2 s1^2)) for x < m,  exp(-(x-m)^2 / (2 s2^2)) for x >= m,
//
// whose median and central interval (untruncated) equal the row's exactly;
// its quantile function is m + s1 z(p (s1+s2)/(2 s1)) below
// p = s1/(s1+s2) and m + s2 z(1 - (1-p)(s1+s2)/(2 s2)) above, z the
// standard normal quantile. An upper-limit row U becomes a density flat on
// [lo, U], where the posterior follows the flat prior (the noise floor),
// with a half-normal fall-off exp(-(x-U)^2/(2 s^2)) above U, s chosen so
// that LimitLevel of the mass within [lo, hi] lies below U:
//
//	s sqrt(pi/2) erf((hi-U)/(s sqrt 2)) = (U - lo) (1 - LimitLevel) / LimitLevel.
//
// Both are written as densities on a grid spanning the prior range.
// Truncation to the prior range moves the quantiles of a split normal that
// comes within a few widths of an edge; bins where a written quantile
// differs from the stated one by more than 0.01 dex are named in the
// warning.
func FromSummary(rows []SummaryRow, src string, opt SummaryOptions) (*likelihood.Dataset, string, error) {
	return fromSummary(rows, nil, src, opt)
}

func fromSummary(rows []SummaryRow, lines []int, src string, opt SummaryOptions) (*likelihood.Dataset, string, error) {
	freqs, err := opt.Meta.bins()
	if err != nil {
		return nil, "", err
	}
	fail := func(format string, a ...any) (*likelihood.Dataset, string, error) {
		return nil, "", fmt.Errorf("importer: %s: "+format, append([]any{src}, a...)...)
	}
	if len(rows) != len(freqs) {
		return fail("%d rows but %d bins; give one row per bin", len(rows), len(freqs))
	}
	level := opt.Level
	if level == 0 {
		level = Level68
	}
	var pl, pu float64
	switch level {
	case Level68:
		pl, pu = 0.5*math.Erfc(1/math.Sqrt2), 1-0.5*math.Erfc(1/math.Sqrt2)
	case Level95:
		pl, pu = 0.025, 0.975
	default:
		return fail("interval level: must be %d or %d (per cent), got %d", Level68, Level95, level)
	}
	ll := opt.LimitLevel
	if ll == 0 {
		ll = 0.95
	}
	if !(ll > 0.5 && ll < 1) {
		return fail("upper-limit level: must be in (0.5, 1), got %g", ll)
	}
	cv := opt.Meta.converter()
	lo, hi := opt.PriorMin, opt.PriorMax
	bins := make([]likelihood.Bin, len(rows))
	var two, one, off []int
	var params []string
	q := make([]float64, 3)
	for b, r := range rows {
		at := fmt.Sprintf("bin %d", b+1)
		if lines != nil {
			at = fmt.Sprintf("line %d (bin %d)", lines[b], b+1)
		}
		in := func(what string, v float64) error {
			if !finite(v) {
				return fmt.Errorf("importer: %s: %s: %s: must be finite, got %g", src, at, what, v)
			}
			if v < lo || v > hi {
				return fmt.Errorf("importer: %s: %s: %s: log10(rho/s) = %g%s lies outside the prior range [%g, %g] stated for the original analysis", src, at, what, v, fromUnit(cv), lo, hi)
			}
			return nil
		}
		if math.IsNaN(r.Median) {
			u := cv.to(r.Limit)
			if err := in("limit", u); err != nil {
				return nil, "", err
			}
			s, err := limitWidth(u, lo, hi, ll)
			if err != nil {
				return fail("%s: %v", at, err)
			}
			x, d, err := limitGrid(u, s, lo, hi)
			if err != nil {
				return fail("%s: %v", at, err)
			}
			bins[b] = likelihood.Bin{Kind: likelihood.Grid, Grid: x, Density: d}
			one = append(one, b+1)
			params = append(params, fmt.Sprintf("bin %d: limit %.4g, fall-off %.3g dex", b+1, u, s))
			bins[b].Quantiles(lo, hi, []float64{ll}, q)
			if math.Abs(q[0]-u) > 0.01 {
				off = append(off, b+1)
			}
			continue
		}
		med, l, u := cv.to(r.Median), cv.to(r.Lower), cv.to(r.Upper)
		for _, c := range []struct {
			w string
			v float64
		}{{"median", med}, {"lower", l}, {"upper", u}} {
			if err := in(c.w, c.v); err != nil {
				return nil, "", err
			}
		}
		if !(l < med && med < u) {
			return fail("%s: need lower < median < upper, got %g, %g, %g", at, r.Lower, r.Median, r.Upper)
		}
		m, s1, s2, err := splitNormal(med, l, u, pl, pu)
		if err != nil {
			return fail("%s: %v", at, err)
		}
		x, d, err := splitGrid(m, s1, s2, lo, hi)
		if err != nil {
			return fail("%s: %v", at, err)
		}
		bins[b] = likelihood.Bin{Kind: likelihood.Grid, Grid: x, Density: d}
		two = append(two, b+1)
		params = append(params, fmt.Sprintf("bin %d: mode %.4g, widths %.3g/%.3g dex", b+1, m, s1, s2))
		bins[b].Quantiles(lo, hi, []float64{0.5, pl, pu}, q)
		if math.Abs(q[0]-med) > 0.01 || math.Abs(q[1]-l) > 0.01 || math.Abs(q[2]-u) > 0.01 {
			off = append(off, b+1)
		}
	}
	lev := fmt.Sprintf("%d %%", level)
	lim := fmt.Sprintf("%s %%", num(100*ll))
	var steps, warn []string
	if len(two) > 0 {
		steps = append(steps, fmt.Sprintf("bins %s given as median and central %s interval, written as split normals on a grid", list(two), lev))
		warn = append(warn, fmt.Sprintf("bins %s are split normals matched to median and %s interval", list(two), lev))
	}
	if len(one) > 0 {
		steps = append(steps, fmt.Sprintf("bins %s given as %s upper limits, written as flat below the limit with a half-normal fall-off above it, on a grid", list(one), lim))
		warn = append(warn, fmt.Sprintf("bins %s are flat below the %s upper limit with an assumed half-normal fall-off", list(one), lim))
	}
	steps = append(steps, params...)
	if d := cv.describe(); d != "" {
		steps = append(steps, d)
	}
	ds, err := opt.Meta.dataset(freqs, bins, steps)
	if err != nil {
		return nil, "", err
	}
	w := fmt.Sprintf("importer: %s: a summary keeps a median and an interval, or a limit, per bin and throws the rest of each posterior away; %s; the likelihood sees these assumed shapes, not the original posteriors; use samples or density grids when they exist", src, strings.Join(warn, "; "))
	if len(off) > 0 {
		w += fmt.Sprintf("; in bins %s the prior range cuts the assumed shape so that its quantiles differ from the stated ones by more than 0.01 dex", list(off))
	}
	return ds, w, nil
}

// list writes bin numbers compactly, "1-4,7".
func list(b []int) string {
	var out []string
	for k := 0; k < len(b); {
		e := k
		for e+1 < len(b) && b[e+1] == b[e]+1 {
			e++
		}
		if e > k {
			out = append(out, fmt.Sprintf("%d-%d", b[k], b[e]))
		} else {
			out = append(out, strconv.Itoa(b[k]))
		}
		k = e + 1
	}
	return strings.Join(out, ",")
}

// splitQ is the quantile of a split normal with mode 0, total width
// s1+s2 = 1 and left share r = s1/(s1+s2), at probability p.
func splitQ(p, r float64) float64 {
	if p < r {
		return r * numeric.NormQuantile(p/(2*r))
	}
	return (1 - r) * numeric.NormQuantile(1-(1-p)/(2*(1-r)))
}

// splitNormal returns the split normal whose median and pl, pu quantiles
// are med, l, u. The ratio (med-l)/(u-med) depends on the left share r
// alone and increases with it; r is found by bisection, then the scale and
// mode follow linearly.
func splitNormal(med, l, u, pl, pu float64) (m, s1, s2 float64, err error) {
	ratio := func(r float64) float64 {
		c := splitQ(0.5, r)
		return (c - splitQ(pl, r)) / (splitQ(pu, r) - c)
	}
	t := (med - l) / (u - med)
	a, b := 1e-6, 1-1e-6
	if t < ratio(a) || t > ratio(b) {
		return 0, 0, 0, fmt.Errorf("interval [%g, %g] around median %g: (median-lower)/(upper-median) = %.3g, but a split normal reaches only %.3g to %.3g at this level; the summary cannot be represented honestly", l, u, med, t, ratio(a), ratio(b))
	}
	for range 200 {
		c := 0.5 * (a + b)
		if ratio(c) < t {
			a = c
		} else {
			b = c
		}
	}
	r := 0.5 * (a + b)
	S := (u - l) / (splitQ(pu, r) - splitQ(pl, r))
	m = med - S*splitQ(0.5, r)
	return m, r * S, (1 - r) * S, nil
}

// points returns n uniform abscissae spanning [lo, hi] with spacing at most
// w/pointsPerSigma, or an error when that needs more than summaryMaxPoints.
func points(w, lo, hi float64) ([]float64, error) {
	need := math.Ceil((hi-lo)/(w/pointsPerSigma)) + 1
	if need > summaryMaxPoints {
		return nil, fmt.Errorf("a width of %.3g dex over the prior range [%g, %g] needs more than %d grid points", w, lo, hi, summaryMaxPoints)
	}
	n := max(int(need), summaryMinPoints)
	x := make([]float64, n)
	for k := range x {
		x[k] = lo + (hi-lo)*float64(k)/float64(n-1)
	}
	x[n-1] = hi
	return x, nil
}

func splitGrid(m, s1, s2, lo, hi float64) ([]float64, []float64, error) {
	x, err := points(math.Min(s1, s2), lo, hi)
	if err != nil {
		return nil, nil, err
	}
	d := make([]float64, len(x))
	for k, v := range x {
		s := s2
		if v < m {
			s = s1
		}
		z := (v - m) / s
		d[k] = math.Exp(-0.5 * z * z)
	}
	if slices.Max(d) <= 0 {
		return nil, nil, errors.New("the split normal has no mass inside the prior range")
	}
	return x, d, nil
}

// limitWidth solves for the half-normal fall-off width s above an upper
// limit u; the tail mass s sqrt(pi/2) erf((hi-u)/(s sqrt2)) increases with
// s towards hi-u.
func limitWidth(u, lo, hi, level float64) (float64, error) {
	want := (u - lo) * (1 - level) / level
	tail := func(s float64) float64 { return s * math.Sqrt(math.Pi/2) * math.Erf((hi-u)/(s*math.Sqrt2)) }
	if !(u > lo) {
		return 0, fmt.Errorf("upper limit %g must lie above the bottom of the prior range %g", u, lo)
	}
	if want >= 0.999*(hi-u) {
		return 0, fmt.Errorf("upper limit %g lies too close to the top of the prior range %g: %s %% of the mass below it leaves %.3g dex of mass above it, but only %.3g dex of range remain", u, hi, num(100*level), want, hi-u)
	}
	a, b := math.Log(1e-9*(hi-lo)), math.Log(1e9*(hi-lo))
	for range 200 {
		c := 0.5 * (a + b)
		if tail(math.Exp(c)) < want {
			a = c
		} else {
			b = c
		}
	}
	return math.Exp(0.5 * (a + b)), nil
}

func limitGrid(u, s, lo, hi float64) ([]float64, []float64, error) {
	x, err := points(s, lo, hi)
	if err != nil {
		return nil, nil, err
	}
	// Put the kink at u on the grid.
	k, found := slices.BinarySearch(x, u)
	if !found {
		x = slices.Insert(x, k, u)
	}
	d := make([]float64, len(x))
	for k, v := range x {
		d[k] = 1
		if v > u {
			z := (v - u) / s
			d[k] = math.Exp(-0.5 * z * z)
		}
	}
	return x, d, nil
}
