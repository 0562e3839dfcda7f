package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// BetaAxis selects how LnLBetaFigure spaces inverse temperatures.
type BetaAxis int

// BetaAxis values.
const (
	BetaLog       BetaAxis = iota // log10 beta; beta = 0 cannot be shown
	BetaFifthRoot                 // beta^(1/5), which keeps beta = 0
)

// betaPoints is an XYer and YErrorer for plotter.YErrorBars.
type betaPoints struct{ x, y, e []float64 }

func (b betaPoints) Len() int                        { return len(b.x) }
func (b betaPoints) XY(i int) (float64, float64)     { return b.x[i], b.y[i] }
func (b betaPoints) YError(i int) (float64, float64) { return b.e[i], b.e[i] }

// LnLBetaFigure draws the mean log-likelihood <ln L>_beta against the
// inverse temperature beta with its standard errors (the integrand of
// thermodynamic integration) and writes stem.png, stem.svg (and stem.pdf
// when asked), one column wide. On a log axis, rungs with beta <= 0 are
// left out.
func LnLBetaFigure(stem string, beta, mean, stderr []float64, axis BetaAxis, o FigureOptions) ([]string, error) {
	fig, err := lnlBetaFigure(beta, mean, stderr, axis)
	if err != nil {
		return nil, err
	}
	return saveFigures(stem, fig, o)
}

func lnlBetaFigure(beta, mean, stderr []float64, axis BetaAxis) (figure, error) {
	if len(beta) != len(mean) || len(beta) != len(stderr) {
		return figure{}, fmt.Errorf("report: ln L curve: %d beta, %d means, %d errors", len(beta), len(mean), len(stderr))
	}
	var pts betaPoints
	for i, b := range beta {
		if !finite(mean[i]) || !(b >= 0 && b <= 1) || (axis == BetaLog && b == 0) {
			continue
		}
		x := b
		if axis == BetaFifthRoot {
			x = math.Pow(b, 0.2)
		}
		e := stderr[i]
		if !finite(e) || e < 0 {
			e = 0
		}
		pts.x, pts.y, pts.e = append(pts.x, x), append(pts.y, mean[i]), append(pts.e, e)
	}
	if len(pts.x) < 2 {
		return figure{}, fmt.Errorf("report: ln L curve: fewer than 2 usable rungs of %d", len(beta))
	}
	p := newPlot()
	addGrid(p)
	p.Y.Label.Text = `Mean $\ln L$`
	p.Y.Tick.Marker = linearTicks{}
	switch axis {
	case BetaFifthRoot:
		p.X.Label.Text = `$\beta^{1/5}$`
		p.X.Tick.Marker = linearTicks{}
	default:
		p.X.Scale = plot.LogScale{}
		p.X.Tick.Marker = logTicks{}
		p.X.Label.Text = `$\beta$`
	}
	s := palette(0)
	ln, err := plotter.NewLine(pts)
	if err != nil {
		return figure{}, fmt.Errorf("report: %w", err)
	}
	ln.LineStyle = draw.LineStyle{Color: s.fillDark, Width: vg.Points(0.7)}
	eb, err := plotter.NewYErrorBars(pts)
	if err != nil {
		return figure{}, fmt.Errorf("report: %w", err)
	}
	eb.LineStyle = draw.LineStyle{Color: s.line, Width: vg.Points(0.7)}
	eb.CapWidth = vg.Points(3)
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return figure{}, fmt.Errorf("report: %w", err)
	}
	sc.GlyphStyle = draw.GlyphStyle{Color: s.line, Radius: vg.Points(1.6), Shape: draw.CircleGlyph{}}
	p.Add(ln, eb, sc)
	factorPowers(p)
	return figure{ColumnWidth, 2.4 * vg.Inch, func(dc draw.Canvas) { p.Draw(dc) }}, nil
}

// A Trace is one parameter's chains for TraceFigure: Walkers[w][t] is the
// value of walker w at step t.
type Trace struct {
	Label, Unit string
	Walkers     [][]float64
	// Every is the number of steps between consecutive stored values of a
	// chain already thinned by the caller (1 when 0); the step axis counts
	// sampler steps either way.
	Every int
}

// Limits on what a trace figure draws, to keep files small.
const (
	maxTraceWalkers = 24
	maxTracePoints  = 1500
)

// TraceFigure stacks one panel per parameter showing every walker's value
// against step (at most 24 walkers, evenly chosen, each thinned to at most
// 1500 points) and writes stem.png, stem.svg (and stem.pdf when asked), a
// page wide. progress, when not nil, is called after each panel.
func TraceFigure(stem string, traces []Trace, o FigureOptions, progress func(done, total int)) ([]string, error) {
	fig, err := traceFigure(traces, progress)
	if err != nil {
		return nil, err
	}
	return saveFigures(stem, fig, o)
}

func traceFigure(traces []Trace, progress func(done, total int)) (figure, error) {
	n := len(traces)
	if n == 0 {
		return figure{}, fmt.Errorf("report: trace: no parameters")
	}
	plots := make([][]*plot.Plot, n)
	for i, tr := range traces {
		if len(tr.Walkers) == 0 {
			return figure{}, fmt.Errorf("report: trace: parameter %d (%s) has no walkers", i, tr.Label)
		}
		p := newPlot()
		addGrid(p)
		nw := len(tr.Walkers)
		stride := max(1, (nw+maxTraceWalkers-1)/maxTraceWalkers)
		every := max(tr.Every, 1)
		for w := 0; w < nw; w += stride {
			ch := tr.Walkers[w]
			if len(ch) < 2 {
				continue
			}
			th := max(1, (len(ch)+maxTracePoints-1)/maxTracePoints)
			xy := make(plotter.XYs, 0, len(ch)/th+1)
			for t := 0; t < len(ch); t += th {
				if finite(ch[t]) {
					xy = append(xy, plotter.XY{X: float64(t * every), Y: ch[t]})
				}
			}
			if len(xy) < 2 {
				continue
			}
			ln, err := plotter.NewLine(xy)
			if err != nil {
				return figure{}, fmt.Errorf("report: trace: %w", err)
			}
			// Alternate dark and mid tones so neighbouring walkers stay
			// distinguishable in greyscale.
			c := palette(0).line
			if (w/stride)%2 == 1 {
				c = palette(1).line
			}
			ln.LineStyle = draw.LineStyle{Color: color.NRGBA{c.R, c.G, c.B, 0x70}, Width: vg.Points(0.4)}
			p.Add(ln)
		}
		p.Y.Label.Text = AxisLabel(tr.Label, tr.Unit)
		p.Y.Tick.Marker = linearTicks{}
		if i == n-1 {
			p.X.Label.Text = "Step"
			p.X.Tick.Marker = linearTicks{}
		} else {
			p.X.Tick.Marker = blankTicks{linearTicks{}}
		}
		factorPowers(p)
		plots[i] = []*plot.Plot{p}
		if progress != nil {
			progress(i+1, n)
		}
	}
	tiles := draw.Tiles{Rows: n, Cols: 1, PadY: vg.Points(4), PadTop: vg.Points(4), PadBottom: vg.Points(2),
		PadLeft: vg.Points(2), PadRight: vg.Points(6)}
	h := vg.Length(n)*1.0*vg.Inch + 0.3*vg.Inch
	return figure{PageWidth, h, func(dc draw.Canvas) {
		cv := plot.Align(plots, tiles, dc)
		for i := range plots {
			plots[i][0].Draw(cv[i][0])
		}
	}}, nil
}
