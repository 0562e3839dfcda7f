package report

import (
	"fmt"
	"image"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tautline/stats"
)

// gridWindow presents the part of a Density2D inside an axis window as a
// plotter.GridXYZ, so that contours stay inside their panel.
type gridWindow struct {
	d              *stats.Density2D
	c0, c1, r0, r1 int // inclusive node index ranges
}

func newGridWindow(d *stats.Density2D, xr, yr [2]float64) gridWindow {
	w := gridWindow{d: d, c1: len(d.X) - 1, r1: len(d.Y) - 1}
	for w.c0 < w.c1-1 && d.X[w.c0+1] <= xr[0] {
		w.c0++
	}
	for w.c1 > w.c0+1 && d.X[w.c1-1] >= xr[1] {
		w.c1--
	}
	for w.r0 < w.r1-1 && d.Y[w.r0+1] <= yr[0] {
		w.r0++
	}
	for w.r1 > w.r0+1 && d.Y[w.r1-1] >= yr[1] {
		w.r1--
	}
	return w
}

func (g gridWindow) Dims() (c, r int)   { return g.c1 - g.c0 + 1, g.r1 - g.r0 + 1 }
func (g gridWindow) Z(c, r int) float64 { return g.d.P[(r+g.r0)*len(g.d.X)+c+g.c0] }
func (g gridWindow) X(c int) float64    { return g.d.X[c+g.c0] }
func (g gridWindow) Y(r int) float64    { return g.d.Y[r+g.r0] }

// regionFill paints the credible regions of a 2-D density as a raster:
// darker inside the innermost level, lighter out to the outermost.
type regionFill struct {
	d      *stats.Density2D
	levels []float64 // decreasing density thresholds, innermost first
	fills  []color.NRGBA
	xr, yr [2]float64
	px     int // raster size in pixels per side
}

func (f regionFill) Plot(c draw.Canvas, p *plot.Plot) {
	img := image.NewNRGBA(image.Rect(0, 0, f.px, f.px))
	for j := range f.px {
		y := f.yr[1] - (float64(j)+0.5)*(f.yr[1]-f.yr[0])/float64(f.px)
		for i := range f.px {
			x := f.xr[0] + (float64(i)+0.5)*(f.xr[1]-f.xr[0])/float64(f.px)
			v := f.d.At(x, y)
			for k, l := range f.levels {
				if v >= l {
					img.SetNRGBA(i, j, f.fills[k%len(f.fills)])
					break
				}
			}
		}
	}
	plotter.NewImage(img, f.xr[0], f.yr[0], f.xr[1], f.yr[1]).Plot(c, p)
}

// axisRange returns the plotting range of a 1-D marginal: where the density
// exceeds 1e-3 of its peak, widened by 4 % on each side and kept on the
// grid.
func axisRange(d *stats.Density1D) [2]float64 {
	_, pk := d.Peak()
	lo, hi := 0, len(d.X)-1
	for lo < hi && d.P[lo] < 1e-3*pk {
		lo++
	}
	for hi > lo && d.P[hi] < 1e-3*pk {
		hi--
	}
	a, b := d.X[lo], d.X[hi]
	w := 0.04 * (b - a)
	if !(w > 0) {
		w = math.Max(1e-3*math.Abs(a), 1e-9)
	}
	return [2]float64{math.Max(a-w, d.X[0]), math.Min(b+w, d.X[len(d.X)-1])}
}

// vline is a vertical (or, with horiz, horizontal) line across the panel.
type vline struct {
	at    float64
	horiz bool
	style draw.LineStyle
}

func (l vline) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	c.SetLineStyle(l.style)
	var path vg.Path
	if l.horiz {
		y := ty(l.at)
		path.Move(vg.Point{X: c.Min.X, Y: y})
		path.Line(vg.Point{X: c.Max.X, Y: y})
	} else {
		x := tx(l.at)
		path.Move(vg.Point{X: x, Y: c.Min.Y})
		path.Line(vg.Point{X: x, Y: c.Max.Y})
	}
	c.Stroke(path)
}

func truthStyle() draw.LineStyle {
	return draw.LineStyle{Color: truthColour, Width: vg.Points(0.7), Dashes: []vg.Length{vg.Points(1.2), vg.Points(1.2)}}
}

// diagonalPlot draws a 1-D marginal: the density, the 68 % equal-tailed
// region shaded beneath it, the median dashed and the true value dotted.
func diagonalPlot(m *stats.Marginal1D, xr [2]float64, truth float64) (*plot.Plot, error) {
	p := newPlot()
	s := palette(0)
	d := &m.Density
	var fill, line plotter.XYs
	for i, x := range d.X {
		if x < xr[0] || x > xr[1] {
			continue
		}
		line = append(line, plotter.XY{X: x, Y: d.P[i]})
	}
	lo, hi := math.Max(m.Summary.ET68.Lo, xr[0]), math.Min(m.Summary.ET68.Hi, xr[1])
	if m.Summary.Rails != stats.EdgeNone && finite(m.Summary.Limit) {
		// For a one-sided limit shade the region inside the limit.
		if m.Summary.Rails == stats.EdgeLower {
			lo, hi = xr[0], math.Min(m.Summary.Limit, xr[1])
		} else {
			lo, hi = math.Max(m.Summary.Limit, xr[0]), xr[1]
		}
	}
	fill = append(fill, plotter.XY{X: lo, Y: 0}, plotter.XY{X: lo, Y: d.At(lo)})
	for i, x := range d.X {
		if x > lo && x < hi {
			fill = append(fill, plotter.XY{X: x, Y: d.P[i]})
		}
	}
	fill = append(fill, plotter.XY{X: hi, Y: d.At(hi)}, plotter.XY{X: hi, Y: 0})
	if len(line) < 2 {
		return nil, fmt.Errorf("report: %s: marginal has fewer than 2 grid points in range", m.Summary.Name)
	}
	pg, err := plotter.NewPolygon(fill)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	pg.Color = s.fillLight
	pg.LineStyle.Width = 0
	ln, err := plotter.NewLine(line)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	ln.LineStyle = draw.LineStyle{Color: s.line, Width: vg.Points(1)}
	p.Add(pg, ln)
	if m.Summary.Rails == stats.EdgeNone {
		p.Add(vline{at: m.Summary.Median, style: draw.LineStyle{Color: s.line, Width: vg.Points(0.6), Dashes: []vg.Length{vg.Points(3), vg.Points(1.5)}}})
	}
	if inRange(truth, xr) {
		p.Add(vline{at: truth, style: truthStyle()})
	}
	_, pk := d.Peak()
	p.X.Min, p.X.Max = xr[0], xr[1]
	p.Y.Min, p.Y.Max = 0, 1.08*pk
	p.Y.Tick.Marker = blankTicks{linearTicks{}}
	return p, nil
}

// pairPlot draws a 2-D marginal: shaded credible regions, their contour
// lines (solid innermost, dashed outer) and the true point.
func pairPlot(q *stats.Pair, xr, yr [2]float64, tx, ty float64) *plot.Plot {
	p := newPlot()
	s := palette(0)
	d := &q.Density
	// Levels are decreasing in density for increasing mass.
	fill := regionFill{d: d, levels: q.Levels, fills: []color.NRGBA{s.fillDark, s.fillLight}, xr: xr, yr: yr, px: 160}
	p.Add(fill)
	g := newGridWindow(d, xr, yr)
	asc := make([]float64, 0, len(q.Levels))
	styles := make([]draw.LineStyle, 0, len(q.Levels))
	for k := len(q.Levels) - 1; k >= 0; k-- {
		asc = append(asc, q.Levels[k])
		ls := draw.LineStyle{Color: s.line, Width: vg.Points(0.5)}
		if k == 0 {
			ls.Width = vg.Points(0.8)
		} else {
			ls.Dashes = []vg.Length{vg.Points(2), vg.Points(1)}
		}
		styles = append(styles, ls)
	}
	if cmin, cmax := minMaxGrid(g); cmax > cmin {
		ct := plotter.NewContour(g, asc, nil)
		ct.LineStyles = styles
		p.Add(ct)
	}
	if inRange(tx, xr) {
		p.Add(vline{at: tx, style: truthStyle()})
	}
	if inRange(ty, yr) {
		p.Add(vline{at: ty, horiz: true, style: truthStyle()})
	}
	if inRange(tx, xr) && inRange(ty, yr) {
		sc, err := plotter.NewScatter(plotter.XYs{{X: tx, Y: ty}})
		if err == nil {
			sc.GlyphStyle = draw.GlyphStyle{Color: truthColour, Radius: vg.Points(1.8), Shape: draw.BoxGlyph{}}
			p.Add(sc)
		}
	}
	p.X.Min, p.X.Max = xr[0], xr[1]
	p.Y.Min, p.Y.Max = yr[0], yr[1]
	return p
}

// inRange reports whether v lies inside the axis range r; marks outside it
// would be drawn beyond the panel.
func inRange(v float64, r [2]float64) bool { return v >= r[0] && v <= r[1] }

func minMaxGrid(g gridWindow) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	c, r := g.Dims()
	for j := range r {
		for i := range c {
			v := g.Z(i, j)
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	return lo, hi
}

// CornerFigure draws every 1-D marginal of post on the diagonal and every
// 2-D marginal below it, with the credible regions of post.Masses, and
// writes it as stem.png, stem.svg (and stem.pdf when asked), 7 in square.
// truths, when not nil, holds a true (injected) value per parameter, NaN
// for none. progress, when not nil, is called after each panel.
func CornerFigure(stem string, post *stats.Posterior, truths []float64, o FigureOptions, progress func(done, total int)) ([]string, error) {
	fig, err := cornerFigure(post, truths, progress)
	if err != nil {
		return nil, err
	}
	return saveFigures(stem, fig, o)
}

func cornerFigure(post *stats.Posterior, truths []float64, progress func(done, total int)) (figure, error) {
	n := len(post.Params)
	if n == 0 || len(post.Marginals) != n || len(post.Pairs) != n*(n-1)/2 {
		return figure{}, fmt.Errorf("report: corner: posterior has %d parameters, %d marginals and %d pairs", n, len(post.Marginals), len(post.Pairs))
	}
	if truths != nil && len(truths) != n {
		return figure{}, fmt.Errorf("report: corner: %d true values for %d parameters", len(truths), n)
	}
	truth := func(i int) float64 {
		if truths == nil {
			return math.NaN()
		}
		return truths[i]
	}
	ranges := make([][2]float64, n)
	for i := range ranges {
		ranges[i] = axisRange(&post.Marginals[i].Density)
	}
	plots := make([][]*plot.Plot, n)
	total, done := n*(n+1)/2, 0
	for r := range n {
		plots[r] = make([]*plot.Plot, n)
		for c := 0; c <= r; c++ {
			var p *plot.Plot
			if r == c {
				var err error
				if p, err = diagonalPlot(&post.Marginals[r], ranges[r], truth(r)); err != nil {
					return figure{}, err
				}
			} else {
				q := post.Pair(c, r)
				if q == nil {
					return figure{}, fmt.Errorf("report: corner: missing pair (%d, %d)", c, r)
				}
				p = pairPlot(q, ranges[c], ranges[r], truth(c), truth(r))
				if r > 0 && c == 0 {
					p.Y.Label.Text = AxisLabel(labelOr(post.Params[r]), post.Params[r].Unit)
				} else {
					p.Y.Tick.Marker = blankTicks{linearTicks{}}
				}
			}
			if r == n-1 {
				p.X.Label.Text = AxisLabel(labelOr(post.Params[c]), post.Params[c].Unit)
			} else {
				p.X.Tick.Marker = blankTicks{linearTicks{}}
			}
			factorPowers(p)
			plots[r][c] = p
			done++
			if progress != nil {
				progress(done, total)
			}
		}
	}
	size := vg.Length(PageWidth)
	if n <= 2 {
		size = ColumnWidth
	}
	tiles := draw.Tiles{Rows: n, Cols: n, PadX: vg.Points(3), PadY: vg.Points(3),
		PadLeft: vg.Points(4), PadRight: vg.Points(6), PadTop: vg.Points(4), PadBottom: vg.Points(4)}
	rows := summaryRows(post)
	return figure{size, size, func(dc draw.Canvas) {
		var strip vg.Rectangle
		if n == 1 {
			// No empty panel: the summary takes a strip along the top.
			_, h := summaryTableSize(rows, tickSize)
			strip = dc.Rectangle
			strip.Min.Y = strip.Max.Y - h - vg.Points(8)
			dc = draw.Crop(dc, 0, 0, 0, -(h + vg.Points(8)))
		}
		cv := plot.Align(plots, tiles, dc)
		for r := range n {
			for c := 0; c <= r; c++ {
				plots[r][c].Draw(cv[r][c])
			}
		}
		if n > 1 {
			// The largest block of empty panels in the upper triangle:
			// rows 0..a-1, columns a..n-1.
			a := n / 2
			strip = vg.Rectangle{
				Min: vg.Point{X: cv[0][a].Min.X, Y: cv[a-1][n-1].Min.Y},
				Max: vg.Point{X: cv[0][n-1].Max.X, Y: cv[0][n-1].Max.Y},
			}
		}
		drawSummaryTable(dc, strip, rows)
	}}, nil
}

func labelOr(p stats.Param) string {
	if p.Label != "" {
		return p.Label
	}
	return p.Name
}
