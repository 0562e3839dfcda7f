package report

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// An ExclusionPoint is a one-sided limit on y within one slice of x.
type ExclusionPoint struct {
	// X is the slice centre and Lo, Hi its edges.
	X, Lo, Hi float64
	// N is the number of samples in the slice.
	N int
	// Limit is the conditional quantile of y at the limit mass within the
	// slice; NaN when N is below the minimum.
	Limit float64
}

// MinSlice returns the default minimum number of samples for a slice limit
// of mass p: enough that ten samples are expected beyond the limit, so the
// quantile's binomial relative error is at most about 1/sqrt(10).
func MinSlice(p float64) int { return int(math.Ceil(10 / (1 - p))) }

// ExclusionCurve returns the conditional upper limit of mass p on y (for
// example log10 Gmu) as a function of x (for example log10 alpha): the
// sample pairs are split into slices of x between consecutive edges
// (increasing; a sample on an inner edge goes to the slice above it) and
// the p-quantile of y is taken within each slice from its samples. Slices
// with fewer than minSamples samples get a NaN limit; minSamples <= 0
// selects MinSlice(p).
func ExclusionCurve(x, y, edges []float64, p float64, minSamples int) ([]ExclusionPoint, error) {
	if len(x) != len(y) {
		return nil, fmt.Errorf("report: exclusion: %d x samples but %d y samples", len(x), len(y))
	}
	if !(p > 0 && p < 1) {
		return nil, fmt.Errorf("report: exclusion: %w, got %g", errMass, p)
	}
	if len(edges) < 2 {
		return nil, fmt.Errorf("report: exclusion: need at least 2 slice edges, got %d", len(edges))
	}
	for i := 1; i < len(edges); i++ {
		if !(edges[i] > edges[i-1]) {
			return nil, fmt.Errorf("report: exclusion: edges[%d] = %g not above edges[%d] = %g", i, edges[i], i-1, edges[i-1])
		}
	}
	if minSamples <= 0 {
		minSamples = MinSlice(p)
	}
	ns := len(edges) - 1
	bins := make([][]float64, ns)
	for i, u := range x {
		v := y[i]
		if math.IsNaN(u) || math.IsNaN(v) || math.IsInf(v, 0) || u < edges[0] || u > edges[ns] {
			continue
		}
		k, found := slices.BinarySearch(edges, u)
		if !found {
			k--
		}
		k = min(k, ns-1)
		bins[k] = append(bins[k], v)
	}
	out := make([]ExclusionPoint, ns)
	for k, b := range bins {
		pt := ExclusionPoint{X: (edges[k] + edges[k+1]) / 2, Lo: edges[k], Hi: edges[k+1], N: len(b), Limit: math.NaN()}
		if len(b) >= minSamples {
			slices.Sort(b)
			pt.Limit = Quantile(b, p)
		}
		out[k] = pt
	}
	return out, nil
}

// LinearEdges returns n+1 equally spaced edges from lo to hi.
func LinearEdges(lo, hi float64, n int) []float64 {
	if n < 1 {
		n = 1
	}
	return nodes(lo, hi, n+1)
}

// A NamedExclusion is one exclusion curve of a figure, e.g. one model's.
type NamedExclusion struct {
	Name   string
	Points []ExclusionPoint
}

// ExclusionFigure draws each curve's conditional limit against the slice
// centres and shades the excluded side above it up to yTop (the prior's
// upper bound, say; NaN for the top of the plotted curves plus a margin).
// Slices without a limit break the curve. With more than one curve, a
// legend of their names runs along the top, outside the axes. xLabel and yLabel are axis texts
// (see AxisLabel). It writes stem.png and stem.svg (and stem.pdf when
// asked), one column wide.
func ExclusionFigure(stem, xLabel, yLabel string, curves []NamedExclusion, yTop float64, o FigureOptions) ([]string, error) {
	if len(curves) == 0 {
		return nil, fmt.Errorf("report: exclusion figure: no curves")
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range curves {
		for _, p := range c.Points {
			if finite(p.Limit) {
				lo, hi = math.Min(lo, p.Limit), math.Max(hi, p.Limit)
			}
		}
	}
	if !(hi >= lo) {
		return nil, fmt.Errorf("report: exclusion figure: no slice has a limit")
	}
	top := yTop
	if !finite(top) || top <= hi {
		top = hi + 0.15*math.Max(hi-lo, 1e-3*math.Max(math.Abs(hi), 1))
	}
	p := newPlot()
	addGrid(p)
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	p.X.Tick.Marker = plainTicks{plot.DefaultTicks{}}
	p.Y.Tick.Marker = plainTicks{plot.DefaultTicks{}}
	var lines []plot.Plotter
	var names []string
	var thumbs []plot.Thumbnailer
	for i, c := range curves {
		s := palette(i)
		// Split at slices without a limit.
		var runs []plotter.XYs
		var cur plotter.XYs
		for _, pt := range c.Points {
			if !finite(pt.Limit) {
				if len(cur) > 0 {
					runs = append(runs, cur)
				}
				cur = nil
				continue
			}
			cur = append(cur, plotter.XY{X: pt.X, Y: pt.Limit})
		}
		if len(cur) > 0 {
			runs = append(runs, cur)
		}
		for k, run := range runs {
			poly := append(plotter.XYs{}, run...)
			poly = append(poly, plotter.XY{X: run[len(run)-1].X, Y: top}, plotter.XY{X: run[0].X, Y: top})
			if len(run) == 1 {
				// A lone slice: shade its own width.
				pt := run[0]
				w := 0.5 * (c.Points[0].Hi - c.Points[0].Lo)
				poly = plotter.XYs{{X: pt.X - w, Y: pt.Y}, {X: pt.X + w, Y: pt.Y}, {X: pt.X + w, Y: top}, {X: pt.X - w, Y: top}}
				run = plotter.XYs{poly[0], poly[1]}
			}
			pg, err := plotter.NewPolygon(poly)
			if err != nil {
				return nil, fmt.Errorf("report: exclusion figure: %w", err)
			}
			pg.Color = s.fillLight
			pg.LineStyle.Width = 0
			p.Add(pg)
			ln, err := plotter.NewLine(run)
			if err != nil {
				return nil, fmt.Errorf("report: exclusion figure: %w", err)
			}
			ln.LineStyle = draw.LineStyle{Color: s.line, Width: vg.Points(1.1), Dashes: s.dash}
			lines = append(lines, ln)
			if k == 0 && len(curves) > 1 {
				names, thumbs = append(names, c.Name), append(thumbs, ln)
			}
		}
	}
	p.Add(lines...)
	p.Y.Max = top
	// The legend goes above the data area: limit curves can run into any
	// corner, and a legend inside would hide them.
	sty := p.Legend
	sty.ThumbnailWidth = vg.Points(16)
	return saveFigures(stem, ColumnWidth, 2.4*vg.Inch, o, func(dc draw.Canvas) {
		if len(names) > 0 {
			dc = legendAbove(dc, sty, names, thumbs)
		}
		p.Draw(dc)
	})
}
