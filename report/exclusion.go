package report

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tautline/stats"
)

// A NamedExclusion is one exclusion curve of a figure, e.g. one model's.
type NamedExclusion struct {
	Name   string
	Points []stats.ExclusionPoint
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
