package report

import (
	"fmt"
	"image/color"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tautline/stats"
)

// A ModelBand is a model's posterior-predictive spectrum: Curves[d][k] is
// log10 rho (s) at Freq[k] (Hz) for posterior draw d.
type ModelBand struct {
	Name   string
	Freq   []float64
	Curves [][]float64
}

// SpectrumData is the input of SpectrumFigure: one data set's bins and
// the models' bands at its frequencies, and any further data sets of a
// joint analysis in Others (each with its own bins and bands, since the
// frequencies and log10 rho offsets of arrays differ).
type SpectrumData struct {
	// Name labels the data set's bins in the legend when there are
	// several data sets.
	Name string
	// Freq holds the data's frequency bins (Hz, increasing, > 0) and
	// BinSamples[k] posterior samples of log10 rho (s) in bin k.
	Freq       []float64
	BinSamples [][]float64
	// BinBounds is the prior support of every bin's log10 rho; ±Inf for
	// open ends.
	BinBounds [2]float64
	// Models lists the posterior-predictive bands to draw over the data.
	Models []ModelBand
	// Others are further data sets, drawn in their own colours; their
	// models, in the same order as Models, share the models' styles and
	// legend entries. Their own Others are ignored.
	Others []SpectrumData
}

// setInk returns the violin fill and outline of the k-th data set of a
// figure: the first in light grey as in a single-data-set figure, the
// others in light hues that keep apart from the grey in print.
func setInk(k int) (fill, line color.NRGBA) {
	ss := [...][2]color.NRGBA{
		{gridColour, palette(0).line},
		{{0xf1, 0xd2, 0xa8, 0xff}, {0x8a, 0x55, 0x12, 0xff}},
		{{0xbf, 0xdc, 0xd6, 0xff}, {0x1e, 0x5e, 0x55, 0xff}},
	}
	c := ss[k%len(ss)]
	return c[0], c[1]
}

// bandProbs are the probabilities of a band's quantiles: the ends of the
// "95 %" and "68 %" intervals and the median.
var bandProbs = [5]float64{stats.P95Lo, stats.P68Lo, 0.5, stats.P68Hi, stats.P95Hi}

// bandQuantiles returns, for every frequency, the bandProbs quantiles of
// the curves.
func bandQuantiles(m ModelBand) ([5][]float64, error) {
	var q [5][]float64
	nf := len(m.Freq)
	for i := range q {
		q[i] = make([]float64, nf)
	}
	col := make([]float64, 0, len(m.Curves))
	for k := range nf {
		col = col[:0]
		for d, c := range m.Curves {
			if len(c) != nf {
				return q, fmt.Errorf("report: spectrum: model %q: curve %d has %d values for %d frequencies", m.Name, d, len(c), nf)
			}
			if finite(c[k]) {
				col = append(col, c[k])
			}
		}
		slices.Sort(col)
		for i, p := range bandProbs {
			q[i][k] = stats.Quantile(col, p)
		}
	}
	return q, nil
}

// band returns the polygon between two curves.
func band(f, lo, hi []float64) plotter.XYs {
	xy := make(plotter.XYs, 0, 2*len(f))
	for k := range f {
		if finite(lo[k]) {
			xy = append(xy, plotter.XY{X: f[k], Y: lo[k]})
		}
	}
	for k := len(f) - 1; k >= 0; k-- {
		if finite(hi[k]) {
			xy = append(xy, plotter.XY{X: f[k], Y: hi[k]})
		}
	}
	return xy
}

// SpectrumFigure draws the free-spectrum posterior of every frequency bin
// as a violin (its smoothed density mirrored about the bin frequency, in
// log frequency) and, over it, each model's 68 % and 95 % posterior-
// predictive bands and median line. It writes stem.png and stem.svg (and
// stem.pdf when asked), one column wide.
func SpectrumFigure(stem string, sd SpectrumData, o FigureOptions) ([]string, error) {
	fig, err := spectrumFigure(sd)
	if err != nil {
		return nil, err
	}
	return saveFigures(stem, fig, o)
}

func spectrumFigure(sd SpectrumData) (figure, error) {
	sets := append([]SpectrumData{sd}, sd.Others...)
	p := newPlot()
	addGrid(p)
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = logTicks{}
	p.X.Label.Text = "Frequency [Hz]"
	p.Y.Label.Text = AxisLabel(`\log_{10} \rho`, "s")
	for si, set := range sets {
		legend, err := addViolins(p, set, si)
		if err != nil {
			return figure{}, err
		}
		if len(sets) > 1 {
			name := set.Name
			if name == "" {
				name = fmt.Sprintf("data set %d", si+1)
			}
			p.Legend.Add(name, legend)
		}
	}
	// Violins, then bands, then every median line above all of them.
	var lines []plot.Plotter
	for si, set := range sets {
		for i, m := range set.Models {
			ln, err := addBand(p, m, palette(i+1))
			if err != nil {
				return figure{}, err
			}
			lines = append(lines, ln)
			if si == 0 {
				p.Legend.Add(m.Name, ln)
			}
		}
	}
	p.Add(lines...)
	// Keep the outermost violins clear of the axes: pad the data range by
	// 3 % (in log f for the frequency axis).
	if p.X.Min > 0 && p.X.Max > p.X.Min {
		lo, hi := math.Log10(p.X.Min), math.Log10(p.X.Max)
		pad := 0.03 * (hi - lo)
		p.X.Min, p.X.Max = math.Pow(10, lo-pad), math.Pow(10, hi+pad)
	}
	if pad := 0.03 * (p.Y.Max - p.Y.Min); pad > 0 {
		p.Y.Min, p.Y.Max = p.Y.Min-pad, p.Y.Max+pad
	}
	// Spectra fall with frequency, leaving the lower left empty.
	p.Legend.Top = false
	p.Legend.Left = true
	p.Legend.XOffs = vg.Points(4)
	p.Legend.YOffs = vg.Points(4)
	p.Legend.ThumbnailWidth = vg.Points(16)
	factorPowers(p)
	return figure{ColumnWidth, 2.6 * vg.Inch, func(dc draw.Canvas) { p.Draw(dc) }}, nil
}

// addViolins draws one data set's bins as violins in the colours of the
// si-th data set and returns one of them for the legend.
func addViolins(p *plot.Plot, sd SpectrumData, si int) (*plotter.Polygon, error) {
	nb := len(sd.Freq)
	if nb == 0 || len(sd.BinSamples) != nb {
		return nil, fmt.Errorf("report: spectrum: %d frequencies but %d bins of samples", nb, len(sd.BinSamples))
	}
	for k, f := range sd.Freq {
		if !(f > 0) || (k > 0 && !(f > sd.Freq[k-1])) {
			return nil, fmt.Errorf("report: spectrum: frequency[%d] = %g: must be > 0 and increasing", k, f)
		}
	}
	// Violin half-width: 40 % of the smallest bin spacing in log f.
	hw := 0.2
	for k := 1; k < nb; k++ {
		hw = math.Min(hw, 0.4*math.Log10(sd.Freq[k]/sd.Freq[k-1]))
	}
	fill, line := setInk(si)
	var first *plotter.Polygon
	for k, s := range sd.BinSamples {
		d, err := stats.KDE1D(s, sd.BinBounds, stats.Options1D{GridPoints: 96})
		if err != nil {
			return nil, fmt.Errorf("report: spectrum: bin %d: %w", k, err)
		}
		_, pk := d.Peak()
		lf := math.Log10(sd.Freq[k])
		xy := make(plotter.XYs, 0, 2*len(d.X))
		for i, y := range d.X {
			if d.P[i] >= 5e-3*pk {
				xy = append(xy, plotter.XY{X: math.Pow(10, lf+hw*d.P[i]/pk), Y: y})
			}
		}
		for i := len(d.X) - 1; i >= 0; i-- {
			if d.P[i] >= 5e-3*pk {
				xy = append(xy, plotter.XY{X: math.Pow(10, lf-hw*d.P[i]/pk), Y: d.X[i]})
			}
		}
		pg, err := plotter.NewPolygon(xy)
		if err != nil {
			return nil, fmt.Errorf("report: spectrum: bin %d: %w", k, err)
		}
		pg.Color = fill
		pg.LineStyle = draw.LineStyle{Color: line, Width: vg.Points(0.4)}
		p.Add(pg)
		if first == nil {
			first = pg
		}
	}
	return first, nil
}

// addBand draws a model's 95 % and 68 % bands in style s and returns its
// median line, to be added above every band.
func addBand(p *plot.Plot, m ModelBand, s series) (*plotter.Line, error) {
	if len(m.Curves) == 0 || len(m.Freq) == 0 {
		return nil, fmt.Errorf("report: spectrum: model %q has no curves", m.Name)
	}
	q, err := bandQuantiles(m)
	if err != nil {
		return nil, err
	}
	for j, pair := range [][2]int{{0, 4}, {1, 3}} {
		pg, err := plotter.NewPolygon(band(m.Freq, q[pair[0]], q[pair[1]]))
		if err != nil {
			return nil, fmt.Errorf("report: spectrum: model %q: %w", m.Name, err)
		}
		pg.LineStyle.Width = 0
		pg.Color = s.fillLight
		if j == 1 {
			pg.Color = s.fillDark
		}
		p.Add(pg)
	}
	med := make(plotter.XYs, 0, len(m.Freq))
	for k, f := range m.Freq {
		if finite(q[2][k]) {
			med = append(med, plotter.XY{X: f, Y: q[2][k]})
		}
	}
	ln, err := plotter.NewLine(med)
	if err != nil {
		return nil, fmt.Errorf("report: spectrum: model %q: %w", m.Name, err)
	}
	ln.LineStyle = draw.LineStyle{Color: s.line, Width: vg.Points(1.1), Dashes: s.dash}
	return ln, nil
}
