package importer

import (
	"fmt"
	"math"
	"slices"

	"tautline/likelihood"
)

// GridOptions configure FromGrid.
type GridOptions struct {
	Meta
	// Abscissa is the column (0-based) of log10 rho, in Meta.Unit.
	Abscissa int
	// Columns picks the density columns (0-based) of bins 1..n in bin
	// order; nil takes every other column in file order.
	Columns []int
	// LogDensity says the density columns hold the natural log of the
	// density (any additive constant).
	LogDensity bool
}

// ReadGrid reads a wide-form density grid (ReadMatrix: text, .npy or .npz
// with array) and converts it with FromGrid. limit caps the bytes read; 0
// means DefaultLimit.
func ReadGrid(path, array string, limit int64, opt GridOptions) (*likelihood.Dataset, error) {
	m, err := ReadMatrix(path, array, limit)
	if err != nil {
		return nil, err
	}
	return FromGrid(m, opt)
}

// FromGrid turns a wide-form grid, one abscissa column of log10 rho and one
// density column per bin, into a data set of grid bins. The abscissa must
// increase strictly and lie inside the prior range; densities must be
// finite and >= 0 with positive mass. Because every unit is affine in
// log10 rho, a conversion of the abscissa changes a density only by a
// constant factor, which the likelihood's renormalisation removes.
func FromGrid(m *Matrix, opt GridOptions) (*likelihood.Dataset, error) {
	freqs, err := opt.Meta.bins()
	if err != nil {
		return nil, err
	}
	src := m.Source
	fail := func(format string, a ...any) (*likelihood.Dataset, error) {
		return nil, fmt.Errorf("importer: %s: "+format, append([]any{src}, a...)...)
	}
	nc := len(m.Cols)
	if m.colLines != nil || m.Rows == 0 {
		return fail("a density grid needs a table of rows, not long form")
	}
	if opt.Abscissa < 0 || opt.Abscissa >= nc {
		return fail("abscissa column %d does not exist; the file has columns 0..%d", opt.Abscissa, nc-1)
	}
	idx := opt.Columns
	if idx == nil {
		for j := range nc {
			if j != opt.Abscissa {
				idx = append(idx, j)
			}
		}
	}
	for _, j := range idx {
		if j == opt.Abscissa {
			return fail("column %d is the abscissa and cannot also be a density", j)
		}
	}
	sel, label, err := pickColumns(m, idx, nil)
	if err != nil {
		return nil, err
	}
	if opt.Columns == nil {
		label = ""
	}
	if len(sel) != len(freqs) {
		return fail("%d density columns but %d bins; pick one density column per bin", len(sel), len(freqs))
	}
	if m.Rows < 2 {
		return fail("%d grid row; a density grid needs at least 2", m.Rows)
	}
	cv := opt.Meta.converter()
	xcol := m.Cols[opt.Abscissa]
	ax := m.column(opt.Abscissa) + " (log10 rho)"
	x := make([]float64, m.Rows)
	for i, v := range xcol {
		if !finite(v) {
			return fail("%s: %s: %g; the grid must be finite", ax, m.where(opt.Abscissa, i), v)
		}
		x[i] = cv.to(v)
		if i > 0 && x[i] <= x[i-1] {
			return fail("%s: %s: %g after %g; the grid must increase strictly", ax, m.where(opt.Abscissa, i), v, xcol[i-1])
		}
	}
	if err := suspect(src, ax, cv, xcol, x[0], x[len(x)-1]); err != nil {
		return nil, err
	}
	for i, v := range x {
		if v < opt.PriorMin || v > opt.PriorMax {
			return fail("%s: %s: log10(rho/s) = %.6g%s lies outside the prior range [%g, %g] stated for the original analysis; the grid must lie inside it", ax, m.where(opt.Abscissa, i), v, fromUnit(cv), opt.PriorMin, opt.PriorMax)
		}
	}
	bins := make([]likelihood.Bin, len(sel))
	for b, j := range sel {
		name := fmt.Sprintf("%s (bin %d)", m.column(j), b+1)
		d := make([]float64, m.Rows)
		top := math.Inf(-1)
		for i, v := range m.Cols[j] {
			if !finite(v) {
				if opt.LogDensity && math.IsInf(v, -1) {
					continue
				}
				return fail("%s: %s: %g; densities must be finite", name, m.where(j, i), v)
			}
			if !opt.LogDensity && v < 0 {
				return fail("%s: %s: density %g is negative; if the column holds ln density, say so", name, m.where(j, i), v)
			}
			top = math.Max(top, v)
		}
		for i, v := range m.Cols[j] {
			if opt.LogDensity {
				d[i] = math.Exp(v - top) // exp(-Inf) = 0
			} else {
				d[i] = v
			}
		}
		mass := 0.0
		for i := 1; i < len(x); i++ {
			mass += 0.5 * (d[i] + d[i-1]) * (x[i] - x[i-1])
		}
		if !(mass > 0) || math.IsInf(mass, 0) {
			return fail("%s: the density has no positive finite mass", name)
		}
		bins[b] = likelihood.Bin{Kind: likelihood.Grid, Grid: slices.Clone(x), Density: d}
	}
	steps := []string{fmt.Sprintf("densities on a grid of %d points per bin", m.Rows)}
	if label != "" {
		steps = append(steps, "density "+label)
	}
	if opt.LogDensity {
		steps = append(steps, "ln densities exponentiated")
	}
	if d := cv.describe(); d != "" {
		steps = append(steps, "grid "+d)
	}
	return opt.Meta.dataset(freqs, bins, steps)
}
