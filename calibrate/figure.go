package calibrate

import (
	"bytes"
	"fmt"
	"image/color"
	"io"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"tautline/internal/atomicfile"
)

// figureStem turns a parameter name into a file-name stem.
func figureStem(name string) string {
	return "rank_" + strings.Map(func(r rune) rune {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '_', r == '-':
			return r
		}
		return '_'
	}, name)
}

// writeRankFigure draws p's rank histogram as outlined bars over the
// simultaneous band (shaded) and the expected count (dashed line), bars
// leaving the band in red, and writes it in each format.
func writeRankFigure(out string, p ParamResult, res *Result, formats []string) ([]string, error) {
	inkColour := color.NRGBA{0x22, 0x22, 0x22, 0xff}
	barColour := color.NRGBA{0x1f, 0x2f, 0x4d, 0xff}  // slate blue
	bandColour := color.NRGBA{0xa9, 0xb6, 0xcf, 0x96} // light slate
	flagColour := color.NRGBA{0xa2, 0x3b, 0x1e, 0xff} // brick red
	pl := plot.New()
	u := p.Uniformity
	l := float64(res.Draws + 1)
	per := l / float64(res.RankBins)
	verdict := "uniform at the test level"
	if u.Flagged {
		verdict = "NOT uniform"
	}
	pl.Title.Text = fmt.Sprintf("%s: chi-square p = %.3g (%s)", p.Name, u.P, verdict)
	pl.X.Label.Text = fmt.Sprintf("rank of the true value among %d posterior draws", res.Draws)
	pl.Y.Label.Text = fmt.Sprintf("replicates per bin (of %d)", len(res.Replicates))
	pl.X.Min, pl.X.Max = 0, l
	band, err := plotter.NewPolygon(plotter.XYs{{X: 0, Y: float64(res.Band.Lo)}, {X: l, Y: float64(res.Band.Lo)}, {X: l, Y: float64(res.Band.Hi)}, {X: 0, Y: float64(res.Band.Hi)}})
	if err != nil {
		return nil, fmt.Errorf("calibrate: figure: %w", err)
	}
	band.Color = bandColour
	band.LineStyle.Width = 0
	pl.Add(band)
	e := float64(len(res.Replicates)) / float64(res.RankBins)
	exp, err := plotter.NewLine(plotter.XYs{{X: 0, Y: e}, {X: l, Y: e}})
	if err != nil {
		return nil, fmt.Errorf("calibrate: figure: %w", err)
	}
	exp.Color = inkColour
	exp.Width = vg.Points(0.6)
	exp.Dashes = []vg.Length{vg.Points(3), vg.Points(2)}
	pl.Add(exp)
	outside := map[int]bool{}
	for _, b := range u.OutsideBand {
		outside[b] = true
	}
	top := float64(res.Band.Hi)
	for b, c := range u.Counts {
		x0, x1 := float64(b)*per, float64(b+1)*per
		bar, err := plotter.NewLine(plotter.XYs{{X: x0, Y: 0}, {X: x0, Y: float64(c)}, {X: x1, Y: float64(c)}, {X: x1, Y: 0}})
		if err != nil {
			return nil, fmt.Errorf("calibrate: figure: %w", err)
		}
		bar.Color = barColour
		if outside[b] {
			bar.Color = flagColour
		}
		bar.Width = vg.Points(1)
		pl.Add(bar)
		top = max(top, float64(c))
	}
	pl.Y.Min, pl.Y.Max = 0, 1.1*top
	stem := filepath.Join(out, figureStem(p.Name))
	var files []string
	w, h := 5*vg.Inch, 3.4*vg.Inch
	for _, f := range formats {
		var c interface {
			vg.CanvasSizer
			io.WriterTo
		}
		switch f {
		case "png":
			c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(150), vgimg.UseBackgroundColor(color.White))}
		case "svg":
			c = vgsvg.New(w, h)
		default:
			return nil, fmt.Errorf("calibrate: figure format %q: want png or svg", f)
		}
		dc := draw.New(c)
		if f == "svg" {
			dc.SetColor(color.White)
			dc.Fill(dc.Rectangle.Path())
		}
		pl.Draw(dc)
		var buf bytes.Buffer
		if _, err := c.WriteTo(&buf); err != nil {
			return nil, fmt.Errorf("calibrate: encoding %s.%s: %w", stem, f, err)
		}
		if err := atomicfile.WriteFile(stem+"."+f, buf.Bytes()); err != nil {
			return nil, fmt.Errorf("calibrate: %w", err)
		}
		files = append(files, filepath.Base(stem)+"."+f)
	}
	return files, nil
}
