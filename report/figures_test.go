package report

import (
	"bytes"
	"encoding/xml"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"

	"tautline/stats"
)

const testDPI = 72

// checkPNG decodes a PNG (image/png), compares its size with the nominal
// size in inches times the DPI, and requires ink: the variance of grey
// level (0-1) above 1e-3, which a figure whose axes and curves cover at
// least ~0.2 % of the pixels in dark ink exceeds, while a blank one is 0.
func checkPNG(t *testing.T, path string, w, h vg.Length) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	b := img.Bounds()
	wantW, wantH := int(w/vg.Inch*testDPI+0.5), int(h/vg.Inch*testDPI+0.5)
	if b.Dx() != wantW || b.Dy() != wantH {
		t.Errorf("%s: %dx%d pixels, want %dx%d", path, b.Dx(), b.Dy(), wantW, wantH)
	}
	var s, s2 float64
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			v := (0.299*float64(r) + 0.587*float64(g) + 0.114*float64(bl)) / 0xffff
			s += v
			s2 += v * v
		}
	}
	n := float64(b.Dx() * b.Dy())
	if v := s2/n - (s/n)*(s/n); !(v > 1e-3) {
		t.Errorf("%s: grey-level variance %.2g: blank figure", path, v)
	}
}

// checkSVG parses an SVG with encoding/xml and checks the root element and
// its width and height in points (72 per inch).
func checkSVG(t *testing.T, path string, w, h vg.Length) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	dec := xml.NewDecoder(bytes.NewReader(data))
	var root *xml.StartElement
	elems := 0
	for {
		tok, err := dec.Token()
		if err != nil {
			if err.Error() != "EOF" {
				t.Fatalf("%s: %v", path, err)
			}
			break
		}
		if se, ok := tok.(xml.StartElement); ok {
			elems++
			if root == nil {
				c := se.Copy()
				root = &c
			}
		}
	}
	if root == nil || root.Name.Local != "svg" {
		t.Fatalf("%s: root element is not svg", path)
	}
	for _, a := range root.Attr {
		want := w
		switch a.Name.Local {
		case "height":
			want = h
		case "width":
		default:
			continue
		}
		got, err := strconv.ParseFloat(strings.TrimSuffix(a.Value, "pt"), 64)
		if err != nil || math.Abs(got-want.Points()) > 0.01 {
			t.Errorf("%s: %s = %q, want %gpt", path, a.Name.Local, a.Value, want.Points())
		}
	}
	if elems < 20 {
		t.Errorf("%s: only %d elements: blank figure", path, elems)
	}
}

func TestFigures(t *testing.T) {
	dir := t.TempDir()
	// Set REPORT_FIGURE_DIR to keep the figures for inspection by eye.
	if d := os.Getenv("REPORT_FIGURE_DIR"); d != "" {
		dir = d
	}
	src := rand.New(rand.NewPCG(41, 42))
	o := FigureOptions{DPI: testDPI}

	// Corner: a railing parameter and a Gaussian one, all three formats.
	x, y := correlated(src, 3000, 1, 0.5, 0.5, true)
	ps := []stats.Param{
		{Name: "log10_Gmu", Label: `\log_{10} G\mu`, Bounds: [2]float64{0, 6}, Samples: x},
		{Name: "gamma", Label: `\gamma`, Bounds: [2]float64{math.Inf(-1), math.Inf(1)}, Samples: y},
	}
	post, err := stats.Analyze(ps, stats.Options{Two: stats.Options2D{GridPoints: 40}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	var panels int
	files, err := CornerFigure(filepath.Join(dir, "corner"), post, []float64{math.NaN(), 0.1},
		FigureOptions{DPI: testDPI, Formats: []string{"png", "svg", "pdf"}}, func(d, n int) { panels = n })
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 3 || panels != 3 {
		t.Fatalf("corner wrote %v, %d panels", files, panels)
	}
	checkPNG(t, files[0], ColumnWidth, ColumnWidth)
	checkSVG(t, files[1], ColumnWidth, ColumnWidth)
	if pdf, err := os.ReadFile(files[2]); err != nil || !bytes.HasPrefix(pdf, []byte("%PDF-")) {
		t.Errorf("%s: not a PDF (%v)", files[2], err)
	}

	// Spectrum: five bins, two simulated models.
	sd := SpectrumData{BinBounds: [2]float64{-10, -4}}
	for k := 1; k <= 5; k++ {
		sd.Freq = append(sd.Freq, float64(k)*3e-9)
		s := make([]float64, 400)
		for i := range s {
			s[i] = math.Max(-10, -6.5-float64(k)*0.3+0.3*src.NormFloat64())
		}
		sd.BinSamples = append(sd.BinSamples, s)
	}
	for m := range 2 {
		mb := ModelBand{Name: "model " + strconv.Itoa(m), Freq: []float64{3e-9, 6e-9, 1.5e-8}}
		for range 100 {
			a := -6.5 + 0.2*src.NormFloat64()
			mb.Curves = append(mb.Curves, []float64{a, a - 0.3 - 0.2*float64(m), a - 0.7 - 0.4*float64(m)})
		}
		sd.Models = append(sd.Models, mb)
	}
	files, err = SpectrumFigure(filepath.Join(dir, "spectrum"), sd, o)
	if err != nil {
		t.Fatal(err)
	}
	checkPNG(t, files[0], ColumnWidth, 2.6*vg.Inch)
	checkSVG(t, files[1], ColumnWidth, 2.6*vg.Inch)

	// ln L against beta, both axes.
	beta := []float64{0, 1e-4, 1e-3, 1e-2, 0.1, 0.3, 1}
	mean := []float64{-80, -60, -40, -25, -12, -8, -5}
	se := []float64{3, 2, 1.5, 1, 0.5, 0.3, 0.2}
	for _, ax := range []BetaAxis{BetaLog, BetaFifthRoot} {
		files, err = LnLBetaFigure(filepath.Join(dir, "lnl"+strconv.Itoa(int(ax))), beta, mean, se, ax, o)
		if err != nil {
			t.Fatal(err)
		}
		checkPNG(t, files[0], ColumnWidth, 2.4*vg.Inch)
		checkSVG(t, files[1], ColumnWidth, 2.4*vg.Inch)
	}

	// Exclusion: a rising limit with one empty slice, two curves.
	var ex []NamedExclusion
	for m := range 2 {
		var pts []stats.ExclusionPoint
		for k := range 8 {
			lim := -10 + 0.4*float64(k) - 0.5*float64(m)
			if k == 5 {
				lim = math.NaN()
			}
			pts = append(pts, stats.ExclusionPoint{X: float64(k) - 3.5, Lo: float64(k) - 4, Hi: float64(k) - 3, N: 500, Limit: lim})
		}
		ex = append(ex, NamedExclusion{Name: "model " + strconv.Itoa(m), Points: pts})
	}
	files, err = ExclusionFigure(filepath.Join(dir, "exclusion"), AxisLabel(`\log_{10} \alpha`, ""), AxisLabel(`\log_{10} G\mu`, ""), ex, -6, o)
	if err != nil {
		t.Fatal(err)
	}
	checkPNG(t, files[0], ColumnWidth, 2.6*vg.Inch)
	checkSVG(t, files[1], ColumnWidth, 2.6*vg.Inch)

	// Traces: two parameters, eight walkers.
	var tr []Trace
	for p := range 2 {
		w := make([][]float64, 8)
		for k := range w {
			w[k] = make([]float64, 300)
			for i := 1; i < 300; i++ {
				w[k][i] = 0.9*w[k][i-1] + src.NormFloat64()
			}
		}
		tr = append(tr, Trace{Label: []string{`\log_{10} A`, `\gamma`}[p], Walkers: w})
	}
	files, err = TraceFigure(filepath.Join(dir, "trace"), tr, o, nil)
	if err != nil {
		t.Fatal(err)
	}
	checkPNG(t, files[0], PageWidth, 2.3*vg.Inch)
	checkSVG(t, files[1], PageWidth, 2.3*vg.Inch)
}

func TestFigureErrors(t *testing.T) {
	dir := t.TempDir()
	o := FigureOptions{DPI: testDPI}
	if _, err := SpectrumFigure(filepath.Join(dir, "s"), SpectrumData{Freq: []float64{2, 1}, BinSamples: [][]float64{{1, 2}, {1, 2}}}, o); err == nil {
		t.Error("decreasing frequencies did not fail")
	}
	if _, err := LnLBetaFigure(filepath.Join(dir, "l"), []float64{0, 1}, []float64{1}, []float64{1}, BetaLog, o); err == nil {
		t.Error("length mismatch did not fail")
	}
	if _, err := LnLBetaFigure(filepath.Join(dir, "l"), []float64{0, 1}, []float64{1, 2}, []float64{1, 1}, BetaLog, o); err == nil {
		t.Error("a single usable rung on a log axis did not fail")
	}
	if _, err := TraceFigure(filepath.Join(dir, "t"), nil, o, nil); err == nil {
		t.Error("no traces did not fail")
	}
	if _, err := CornerFigure(filepath.Join(dir, "c"), &stats.Posterior{}, nil, o, nil); err == nil {
		t.Error("empty posterior did not fail")
	}
	if _, err := saveFigures(filepath.Join(dir, "x"), figure{vg.Inch, vg.Inch, nil}, FigureOptions{Formats: []string{"gif"}}); err == nil {
		t.Error("unknown format did not fail")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 0 {
		t.Errorf("failed figures left %d files", len(ents))
	}
}

func TestPlainLabel(t *testing.T) {
	// Expected renderings by hand from PlainLabel's rules.
	cases := []struct{ in, want string }{
		{`\log_{10} G\mu`, "log₁₀ Gμ"},
		{`$\log_{10}\,\rho$`, "log₁₀ ρ"},
		{`\Omega_{\rm GW}`, "Ω_(GW)"},
		{`\beta^{1/5}`, "β¹⁄⁵"},
		{`f^{-1}`, "f^(-1)"},
		{`A_{\rm yr}`, "A_(yr)"},
		{`\mathcal{L}`, "L"},
		{`M_\odot`, "M_(sun)"},
		{`\unknown x`, "unknown x"},
		{`x_`, "x"},
		{`{`, ""},
	}
	for _, c := range cases {
		if got := PlainLabel(c.in); got != c.want {
			t.Errorf("PlainLabel(%q) = %q, want %q", c.in, got, c.want)
		}
	}
	for _, c := range []struct{ label, unit, want string }{
		{`\log_{10} \rho`, "s", `$\log_{10} \rho$ [s]`},
		{`$\gamma$`, "", `$\gamma$`},
		{"", "Hz", "[Hz]"},
	} {
		if got := AxisLabel(c.label, c.unit); got != c.want {
			t.Errorf("AxisLabel(%q, %q) = %q, want %q", c.label, c.unit, got, c.want)
		}
	}
}

func TestLogTicks(t *testing.T) {
	// Over 2e-9..3e-8 (1.2 decades) the labelled ticks are 3e-9, 1e-8 and
	// 3e-8 by logTicks' rule, written as TeX powers of ten; every tick
	// lies in range.
	var labels []string
	for _, tk := range (logTicks{}).Ticks(2e-9, 3e-8) {
		if tk.Value < 2e-9*(1-1e-9) || tk.Value > 3e-8*(1+1e-9) {
			t.Errorf("tick %g out of range", tk.Value)
		}
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if got := strings.Join(labels, ","); got != `$3\times 10^{-9}$,$10^{-8}$,$3\times 10^{-8}$` {
		t.Errorf("labels %s", got)
	}
	if (logTicks{}).Ticks(-1, 1) != nil {
		t.Error("ticks for a non-positive range")
	}
}

// correlated draws n pairs from a bivariate normal with zero mean, standard
// deviations sx, sy and correlation rho; fold replaces x by |x|.
func correlated(src *rand.Rand, n int, sx, sy, rho float64, fold bool) (x, y []float64) {
	x, y = make([]float64, n), make([]float64, n)
	for i := range x {
		a, b := src.NormFloat64(), src.NormFloat64()
		x[i] = sx * a
		y[i] = sy * (rho*a + math.Sqrt(1-rho*rho)*b)
		if fold {
			x[i] = math.Abs(x[i])
		}
	}
	return x, y
}
