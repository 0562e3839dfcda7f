package report

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tautline/stats"
)

// A NamedExclusion is one exclusion curve of a figure, e.g. one model's.
type NamedExclusion struct {
	Name   string
	Points []stats.ExclusionPoint
	// Mass is the credible mass of the limits (0.95, say) and Prior the
	// prior of the limited parameter under which they hold, as the run's
	// configuration states it ("uniform(-14, -6)", say); the figure's
	// caption quotes both. Zero and empty leave them out.
	Mass  float64
	Prior string
}

// ExclusionFigure draws each curve's conditional limit against the slice
// centres and shades the excluded side above it up to yTop (the prior's
// upper bound, say; NaN for the top of the plotted curves plus a margin).
// Slices without a limit break the curve. A caption along the top says
// what is excluded, at which credible mass and under which prior, and a
// legend below it names each curve (a shaded box with the limit line).
// xLabel and yLabel are axis texts (see AxisLabel). It writes stem.png
// and stem.svg (and stem.pdf when asked), one column wide.
func ExclusionFigure(stem, xLabel, yLabel string, curves []NamedExclusion, yTop float64, o FigureOptions) ([]string, error) {
	fig, err := exclusionFigure(xLabel, yLabel, curves, yTop)
	if err != nil {
		return nil, err
	}
	return saveFigures(stem, fig, o)
}

func exclusionFigure(xLabel, yLabel string, curves []NamedExclusion, yTop float64) (figure, error) {
	if len(curves) == 0 {
		return figure{}, fmt.Errorf("report: exclusion figure: no curves")
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
		return figure{}, fmt.Errorf("report: exclusion figure: no slice has a limit")
	}
	top := yTop
	if !finite(top) || top <= hi {
		top = hi + 0.15*math.Max(hi-lo, 1e-3*math.Max(math.Abs(hi), 1))
	}
	p := newPlot()
	addGrid(p)
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	p.X.Tick.Marker = linearTicks{}
	p.Y.Tick.Marker = linearTicks{}
	samePrior := true
	for _, c := range curves {
		samePrior = samePrior && c.Prior == curves[0].Prior
	}
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
				return figure{}, fmt.Errorf("report: exclusion figure: %w", err)
			}
			pg.Color = s.fillLight
			pg.LineStyle.Width = 0
			p.Add(pg)
			ln, err := plotter.NewLine(run)
			if err != nil {
				return figure{}, fmt.Errorf("report: exclusion figure: %w", err)
			}
			ln.LineStyle = draw.LineStyle{Color: s.line, Width: vg.Points(1.1), Dashes: s.dash}
			lines = append(lines, ln)
			if k == 0 {
				names = append(names, legendName(c, len(curves), samePrior))
				thumbs = append(thumbs, exclusionThumb{fill: s.fillLight, line: ln.LineStyle})
			}
		}
	}
	p.Add(lines...)
	p.Y.Max = top
	factorPowers(p)
	// The legend goes above the data area: limit curves can run into any
	// corner, and a legend inside would hide them.
	sty := p.Legend
	sty.ThumbnailWidth = vg.Points(16)
	caption := exclusionCaption(xLabel, yLabel, curves, samePrior)
	return figure{ColumnWidth, 2.6 * vg.Inch, func(dc draw.Canvas) {
		dc = captionAbove(dc, textStyle(tickSize), caption)
		dc = legendAbove(dc, sty, names, thumbs)
		p.Draw(dc)
	}}, nil
}

// exclusionCaption says what the figure shows: the mass, the parameter
// limited, that the limit is one-sided and conditional on the slices of
// the other, and the prior it holds under (or, when the curves' priors
// differ, that the legend gives each).
func exclusionCaption(xLabel, yLabel string, curves []NamedExclusion, samePrior bool) string {
	mass := curves[0].Mass
	for _, c := range curves {
		if c.Mass != mass {
			mass = 0
		}
	}
	at := ""
	if mass > 0 && mass < 1 {
		at = " at " + strconv.FormatFloat(100*mass, 'f', -1, 64) + " %"
	}
	s := "Shaded: excluded" + at + ", " + yLabel + " above its one-sided upper limit in each slice of " + xLabel
	switch {
	case samePrior && curves[0].Prior != "":
		s += ", for the run's prior " + yLabel + " ~ " + curves[0].Prior
	case !samePrior:
		s += ", for each model's prior (legend)"
	}
	return s
}

// legendName is a curve's legend text: its name, "upper limit" for a lone
// unnamed curve, and its prior when the curves' priors differ.
func legendName(c NamedExclusion, n int, samePrior bool) string {
	name := c.Name
	if name == "" {
		name = "upper limit"
		if n > 1 {
			name = "curve"
		}
	}
	if !samePrior && c.Prior != "" {
		name += ", prior " + c.Prior
	}
	return name
}

// exclusionThumb is the legend mark of an exclusion curve: a shaded box
// with the limit line along its lower edge.
type exclusionThumb struct {
	fill color.Color
	line draw.LineStyle
}

// Thumbnail implements plot.Thumbnailer.
func (t exclusionThumb) Thumbnail(c *draw.Canvas) {
	y := c.Min.Y + 0.25*(c.Max.Y-c.Min.Y)
	box := vg.Rectangle{Min: vg.Point{X: c.Min.X, Y: y}, Max: c.Max}
	c.SetColor(t.fill)
	c.Fill(box.Path())
	c.StrokeLine2(t.line, c.Min.X, y, c.Max.X, y)
}

// captionAbove draws txt in lines of at most dc's width, centred, along
// the top of dc, and returns the rest of dc. Lines break at spaces outside
// TeX math.
func captionAbove(dc draw.Canvas, sty text.Style, txt string) draw.Canvas {
	lines := wrapText(sty, txt, dc.Size().X-vg.Points(4))
	e := sty.FontExtents()
	y := dc.Max.Y - vg.Points(2)
	cs := sty
	cs.XAlign, cs.YAlign = draw.XCenter, draw.YTop
	for _, l := range lines {
		dc.FillText(cs, vg.Point{X: (dc.Min.X + dc.Max.X) / 2, Y: y}, l)
		y -= sty.Height(l) + (e.Height - e.Ascent - e.Descent)
	}
	return draw.Crop(dc, 0, 0, 0, y-dc.Max.Y)
}

// wrapText breaks txt into lines no wider than w (a word wider than w
// gets a line of its own), breaking only at spaces outside dollar signs.
func wrapText(sty text.Style, txt string, w vg.Length) []string {
	var words []string
	inMath, start := false, 0
	for i := 0; i < len(txt); i++ {
		switch txt[i] {
		case '$':
			inMath = !inMath
		case ' ':
			if !inMath {
				words = append(words, txt[start:i])
				start = i + 1
			}
		}
	}
	words = append(words, txt[start:])
	var lines []string
	cur := ""
	for _, wd := range words {
		if wd == "" {
			continue
		}
		next := wd
		if cur != "" {
			next = cur + " " + wd
		}
		if cur != "" && sty.Width(next) > w {
			lines = append(lines, cur)
			next = wd
		}
		cur = next
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}
