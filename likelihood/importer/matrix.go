package importer

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"tautline/likelihood"
)

// A Matrix holds the columns of a table of numbers as read from a file.
type Matrix struct {
	// Source names the file (and array) in messages.
	Source string
	// Rows is the number of rows in the file; 0 for long-form input, whose
	// columns (bins) may differ in length.
	Rows int
	// Cols[j][i] is the value in row i of column j (both 0-based, as in
	// NumPy's x[i, j]).
	Cols [][]float64
	// Names are the column names of a text header row; nil without one.
	Names []string

	lines    []int   // text tables: line number of each row
	colLines [][]int // long form: line number of each value
}

// where names the place of row i of column j in the file.
func (m *Matrix) where(j, i int) string {
	switch {
	case m.colLines != nil:
		return fmt.Sprintf("line %d", m.colLines[j][i])
	case m.lines != nil:
		return fmt.Sprintf("line %d", m.lines[i])
	}
	return fmt.Sprintf("row %d", i)
}

// column names column j in messages.
func (m *Matrix) column(j int) string {
	if m.colLines != nil {
		return fmt.Sprintf("bin %d", j+1)
	}
	if j < len(m.Names) {
		return fmt.Sprintf("column %d (%q)", j, m.Names[j])
	}
	return fmt.Sprintf("column %d", j)
}

// MatrixOptions configure FromMatrix.
type MatrixOptions struct {
	Meta
	// Columns picks the columns (0-based) holding bins 1..n, in bin
	// order; nil takes every column in file order. For long-form input,
	// column j is bin j+1.
	Columns []int
	// ColumnNames picks columns by their header names instead.
	ColumnNames []string
	// BurnIn is the fraction, in [0, 1), of leading rows dropped from each
	// column (floor(BurnIn * rows)).
	BurnIn float64
	// Thin keeps every Thin-th row after the burn-in; 0 and 1 keep all.
	Thin int
}

// Reasons a value is suspect: the thresholds of log10(rho/s). A bin's
// amplitude above 1 s or below 1e-20 s is far outside anything a timing
// array measures (timing residuals are of order 1e-9 to 1e-5 s).
const (
	suspectHigh = 0
	suspectLow  = -20
)

// FromMatrix turns posterior samples (one row per sample, one column per
// bin) into a data set of samples bins.
func FromMatrix(m *Matrix, opt MatrixOptions) (*likelihood.Dataset, error) {
	freqs, err := opt.Meta.bins()
	if err != nil {
		return nil, err
	}
	src := m.Source
	fail := func(format string, a ...any) (*likelihood.Dataset, error) {
		return nil, fmt.Errorf("importer: %s: "+format, append([]any{src}, a...)...)
	}
	nb := len(freqs)
	nc := len(m.Cols)
	if nc == 0 {
		return fail("no columns")
	}
	if m.Rows > 0 && nc > m.Rows {
		return fail("%d rows x %d columns: more columns than rows, but a samples matrix has one row per sample and one column per bin; was it saved transposed?", m.Rows, nc)
	}
	sel, label, err := pickColumns(m, opt.Columns, opt.ColumnNames)
	if err != nil {
		return nil, err
	}
	if len(sel) != nb {
		if opt.Columns == nil && opt.ColumnNames == nil {
			return fail("%d columns but %d bins; pick the %d columns of the bins, or give as many bins as columns", nc, nb, nb)
		}
		return fail("%d columns picked but %d bins; pick one column per bin", len(sel), nb)
	}
	if !(opt.BurnIn >= 0 && opt.BurnIn < 1) {
		return fail("burn-in fraction: must be in [0, 1), got %g", opt.BurnIn)
	}
	if opt.Thin < 0 {
		return fail("thinning: must be >= 1 (or 0 for none), got %d", opt.Thin)
	}
	thin := max(opt.Thin, 1)
	cv := opt.Meta.converter()
	lo, hi := opt.PriorMin, opt.PriorMax
	bins := make([]likelihood.Bin, nb)
	minN, maxN := math.MaxInt, 0
	for b, j := range sel {
		col := m.Cols[j]
		drop := int(opt.BurnIn * float64(len(col)))
		n := (len(col) - drop + thin - 1) / thin
		name := m.column(j)
		if m.colLines == nil {
			name += fmt.Sprintf(" (bin %d)", b+1)
		}
		if n < likelihood.MinSamples {
			return fail("%s: %d samples after dropping %d of %d as burn-in and thinning by %d; need at least %d", name, n, drop, len(col), thin, likelihood.MinSamples)
		}
		minN, maxN = min(minN, n), max(maxN, n)
		s := make([]float64, 0, n)
		smin, smax := math.Inf(1), math.Inf(-1)
		for i := drop; i < len(col); i += thin {
			x := col[i]
			if !finite(x) {
				return fail("%s: %s: %g; samples must be finite", name, m.where(j, i), x)
			}
			y := cv.to(x)
			s = append(s, y)
			smin, smax = math.Min(smin, y), math.Max(smax, y)
		}
		if err := suspect(src, name, cv, col[drop:], smin, smax); err != nil {
			return nil, err
		}
		for k, y := range s {
			if y < lo || y > hi {
				i := drop + k*thin
				return fail("%s: %s: log10(rho/s) = %.6g%s lies outside the prior range [%g, %g] stated for the original analysis; %s", name, m.where(j, i), y, fromUnit(cv), lo, hi, guessUnit(cv, col[drop:], lo, hi))
			}
		}
		if smin == smax {
			return fail("%s: all %d samples equal %g; no density can be estimated", name, n, smin)
		}
		bins[b] = likelihood.Bin{Kind: likelihood.Samples, Samples: s}
	}
	var steps []string
	if minN == maxN {
		steps = append(steps, fmt.Sprintf("%d posterior samples per bin", minN))
	} else {
		steps = append(steps, fmt.Sprintf("%d to %d posterior samples per bin", minN, maxN))
	}
	if label != "" {
		steps = append(steps, label)
	}
	if opt.BurnIn > 0 {
		steps = append(steps, fmt.Sprintf("first fraction %s of each column dropped as burn-in", num(opt.BurnIn)))
	}
	if thin > 1 {
		steps = append(steps, fmt.Sprintf("thinned by a factor of %d", thin))
	}
	if d := cv.describe(); d != "" {
		steps = append(steps, d)
	}
	return opt.Meta.dataset(freqs, bins, steps)
}

// fromUnit qualifies a converted value in messages.
func fromUnit(cv converter) string {
	if cv.u == Log10RhoS {
		return ""
	}
	return " (converted from " + string(cv.u) + ")"
}

// suspect refuses a column whose converted values (range smin..smax) all lie
// where no timing-array amplitude can, and says which unit was probably
// meant; raw are the values as given.
func suspect(src, name string, cv converter, raw []float64, smin, smax float64) error {
	rmax := math.Inf(-1)
	for _, x := range raw {
		rmax = math.Max(rmax, x)
	}
	var what, hint string
	switch {
	case smin > suspectHigh:
		what = fmt.Sprintf("every value is above %d (log10(rho/s) from %.4g to %.4g%s), which would mean rho > 1 s", suspectHigh, smin, smax, fromUnit(cv))
		switch {
		case cv.u != Log10RhoS:
			hint = fmt.Sprintf("check the unit (%s)", cv.u)
		case rmax < 1e-2:
			hint = "these look like rho itself in s; take log10 of the values first"
		default:
			hint = fmt.Sprintf("these look like log10(rho/ns); give the unit %s", Log10RhoNS)
		}
	case smax < suspectLow:
		what = fmt.Sprintf("every value is below %d (log10(rho/s) from %.4g to %.4g%s), which would mean rho < 1e-20 s", suspectLow, smin, smax, fromUnit(cv))
		if cv.u == Log10RhoS {
			hint = fmt.Sprintf("these look like ln(rho/s); give the unit %s", LnRhoS)
		} else {
			hint = fmt.Sprintf("check the unit (%s)", cv.u)
		}
	default:
		return nil
	}
	return fmt.Errorf("importer: %s: %s: %s; %s", src, name, what, hint)
}

// guessUnit names the unit under which all of raw would lie inside the
// prior range, when another than the stated one does.
func guessUnit(cv converter, raw []float64, lo, hi float64) string {
	// The PSD conversion maps almost any column of log10 rho into a
	// prior range, so only the two common slips are suggested.
	for _, u := range []Unit{Log10RhoS, LnRhoS, Log10RhoNS} {
		if u == cv.u {
			continue
		}
		alt := newConverter(u, cv.span)
		ok := true
		for _, x := range raw {
			if y := alt.to(x); !(y >= lo && y <= hi) {
				ok = false
				break
			}
		}
		if ok {
			return fmt.Sprintf("read as %s every value of this column would lie inside it: was that unit meant?", u)
		}
	}
	return "check the prior range and the unit"
}

// pickColumns resolves the column choice; label describes a choice other
// than all columns in order.
func pickColumns(m *Matrix, idx []int, names []string) ([]int, string, error) {
	nc := len(m.Cols)
	fail := func(format string, a ...any) ([]int, string, error) {
		return nil, "", fmt.Errorf("importer: %s: "+format, append([]any{m.Source}, a...)...)
	}
	switch {
	case idx != nil && names != nil:
		return fail("pick columns by number or by name, not both")
	case names != nil:
		if m.Names == nil {
			return fail("columns picked by name, but the file has no header row of names")
		}
		sel := make([]int, len(names))
		for k, nm := range names {
			j := slices.Index(m.Names, nm)
			if j < 0 {
				return fail("no column named %q (columns: %s)", nm, strings.Join(m.Names, ", "))
			}
			sel[k] = j
		}
		if err := noDuplicates(m, sel); err != nil {
			return nil, "", err
		}
		return sel, "columns " + strings.Join(names, ", ") + " taken as bins 1.." + strconv.Itoa(len(sel)), nil
	case idx != nil:
		if len(idx) == 0 {
			return fail("column choice is empty")
		}
		for _, j := range idx {
			if j < 0 || j >= nc {
				if m.colLines != nil {
					return fail("bin %d does not exist; the file has bins 1..%d", j+1, nc)
				}
				return fail("column %d does not exist; the file has columns 0..%d", j, nc-1)
			}
		}
		if err := noDuplicates(m, idx); err != nil {
			return nil, "", err
		}
		sel := slices.Clone(idx)
		identity := len(sel) == nc
		for k, j := range sel {
			identity = identity && j == k
		}
		if identity {
			return sel, "", nil
		}
		p := make([]string, len(sel))
		for k, j := range sel {
			p[k] = strconv.Itoa(j)
		}
		what := "columns"
		if m.colLines != nil {
			for k, j := range sel {
				p[k] = strconv.Itoa(j + 1)
			}
			what = "input bins"
		}
		return sel, fmt.Sprintf("%s %s of %d taken as bins 1..%d", what, strings.Join(p, ","), nc, len(sel)), nil
	}
	sel := make([]int, nc)
	for j := range sel {
		sel[j] = j
	}
	return sel, "", nil
}

func noDuplicates(m *Matrix, sel []int) error {
	seen := make([]bool, len(m.Cols))
	for _, j := range sel {
		if seen[j] {
			return fmt.Errorf("importer: %s: %s is picked twice", m.Source, m.column(j))
		}
		seen[j] = true
	}
	return nil
}

func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
