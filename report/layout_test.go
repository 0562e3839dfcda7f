package report

import (
	"image"
	"image/color"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tautline/stats"
)

// affine is the transform x' = a x + c y + e, y' = b x + d y + f.
type affine struct{ a, b, c, d, e, f float64 }

func (m affine) apply(p vg.Point) (float64, float64) {
	x, y := float64(p.X), float64(p.Y)
	return m.a*x + m.c*y + m.e, m.b*x + m.d*y + m.f
}

// then returns m followed, in local coordinates, by n: the product m n.
func (m affine) then(n affine) affine {
	return affine{
		a: m.a*n.a + m.c*n.b, b: m.b*n.a + m.d*n.b,
		c: m.a*n.c + m.c*n.d, d: m.b*n.c + m.d*n.d,
		e: m.a*n.e + m.c*n.f + m.e, f: m.b*n.e + m.d*n.f + m.f,
	}
}

// A textBox is the extent, in figure coordinates, of one text label: the
// union of the font boxes (advance width by ascent plus descent) of the
// strings drawn for it.
type textBox struct {
	text                   string
	minX, minY, maxX, maxY float64
}

// textRecorder is a vg.Canvas that draws nothing and records where text
// goes. It follows Push, Pop, Translate, Rotate and Scale, so rotated
// labels get their true extent. The strings of one label (a text handler
// draws sub- and superscripts as separate strings) are told apart from
// the next label by the SetColor that every handler call starts with;
// any other drawing also ends a label.
type textRecorder struct {
	w, h  vg.Length
	m     affine
	stack []affine
	boxes []textBox
	open  bool
}

func newTextRecorder(w, h vg.Length) *textRecorder {
	return &textRecorder{w: w, h: h, m: affine{a: 1, d: 1}}
}

func (r *textRecorder) Size() (vg.Length, vg.Length) { return r.w, r.h }
func (r *textRecorder) SetLineWidth(vg.Length)       {}
func (r *textRecorder) SetLineDash([]vg.Length, vg.Length) {
}
func (r *textRecorder) SetColor(color.Color) { r.open = false }
func (r *textRecorder) Rotate(t float64) {
	s, c := math.Sincos(t)
	r.m = r.m.then(affine{a: c, b: s, c: -s, d: c})
}
func (r *textRecorder) Translate(p vg.Point) {
	r.m = r.m.then(affine{a: 1, d: 1, e: float64(p.X), f: float64(p.Y)})
}
func (r *textRecorder) Scale(x, y float64) { r.m = r.m.then(affine{a: x, d: y}) }
func (r *textRecorder) Push()              { r.stack = append(r.stack, r.m) }
func (r *textRecorder) Pop() {
	if n := len(r.stack); n > 0 {
		r.m, r.stack = r.stack[n-1], r.stack[:n-1]
	}
}
func (r *textRecorder) Stroke(vg.Path)                      { r.open = false }
func (r *textRecorder) Fill(vg.Path)                        { r.open = false }
func (r *textRecorder) DrawImage(vg.Rectangle, image.Image) { r.open = false }

func (r *textRecorder) FillString(f font.Face, pt vg.Point, s string) {
	if s == "" {
		return
	}
	e := f.Extents()
	b := textBox{text: s, minX: math.Inf(1), minY: math.Inf(1), maxX: math.Inf(-1), maxY: math.Inf(-1)}
	for _, q := range []vg.Point{
		{X: pt.X, Y: pt.Y - e.Descent}, {X: pt.X + f.Width(s), Y: pt.Y - e.Descent},
		{X: pt.X, Y: pt.Y + e.Ascent}, {X: pt.X + f.Width(s), Y: pt.Y + e.Ascent},
	} {
		x, y := r.m.apply(q)
		b.minX, b.maxX = math.Min(b.minX, x), math.Max(b.maxX, x)
		b.minY, b.maxY = math.Min(b.minY, y), math.Max(b.maxY, y)
	}
	if r.open && len(r.boxes) > 0 {
		p := &r.boxes[len(r.boxes)-1]
		p.text += s
		p.minX, p.maxX = math.Min(p.minX, b.minX), math.Max(p.maxX, b.maxX)
		p.minY, p.maxY = math.Min(p.minY, b.minY), math.Max(p.maxY, b.maxY)
	} else {
		r.boxes = append(r.boxes, b)
	}
	r.open = true
}

// layoutTolerance is how far, in points, two text boxes may overlap or a
// box may reach beyond the canvas: font boxes include the ascent reserved
// for accents and the line gap, so boxes that merely touch are fine; a
// tenth of a point (1/70 of the 7 pt tick type) is far below what an eye
// sees as a collision.
const layoutTolerance = 0.1

// layoutProblems lists every pair of overlapping text boxes and every box
// reaching outside a w × h canvas.
func layoutProblems(boxes []textBox, w, h vg.Length) []string {
	var out []string
	t := layoutTolerance
	for i, b := range boxes {
		if b.minX < -t || b.minY < -t || b.maxX > float64(w)+t || b.maxY > float64(h)+t {
			out = append(out, "outside the canvas: "+describe(b))
		}
		for _, o := range boxes[:i] {
			if b.minX < o.maxX-t && o.minX < b.maxX-t && b.minY < o.maxY-t && o.minY < b.maxY-t {
				out = append(out, "overlap: "+describe(o)+" and "+describe(b))
			}
		}
	}
	return out
}

func describe(b textBox) string {
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
	return strconv.Quote(b.text) + " [" + f(b.minX) + ", " + f(b.maxX) + "] x [" + f(b.minY) + ", " + f(b.maxY) + "]"
}

// recordFigure draws fig into a textRecorder and returns the text boxes.
func recordFigure(fig figure) []textBox {
	r := newTextRecorder(fig.w, fig.h)
	fig.render(draw.New(r))
	return r.boxes
}

// layoutPosterior returns the posterior of n parameters: a railing one
// (log10_Gmu, an upper limit), a Gaussian one, one of size 1e-9 (a power
// of ten in the labels), then Gaussians with long labels.
func layoutPosterior(t *testing.T, n int) *stats.Posterior {
	t.Helper()
	src := rand.New(rand.NewPCG(81, 82))
	x, y := correlated(src, 4000, 1, 0.5, 0.5, true)
	inf := [2]float64{math.Inf(-1), math.Inf(1)}
	ps := []stats.Param{
		{Name: "log10_Gmu", Label: `\log_{10} G\mu`, Bounds: [2]float64{0, 6}, Samples: x},
		{Name: "gamma", Label: `\gamma`, Bounds: inf, Samples: y},
	}
	for k := 2; k < n; k++ {
		s := make([]float64, len(x))
		for i := range s {
			s[i] = -14.6 + 0.1*src.NormFloat64()
			if k == 2 {
				s[i] = 2.5e-9 * (1 + 0.05*src.NormFloat64())
			}
		}
		ps = append(ps, stats.Param{Name: "p" + strconv.Itoa(k), Label: `\log_{10} f_\mathrm{bend}^{(` + strconv.Itoa(k) + `)}`, Unit: "Hz", Bounds: inf, Samples: s})
	}
	post, err := stats.Analyze(ps[:n], stats.Options{Two: stats.Options2D{GridPoints: 32}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	return post
}

// TestFigureTextLayout renders every figure into a textRecorder and
// requires that no two text labels overlap and that all lie inside the
// figure.
func TestFigureTextLayout(t *testing.T) {
	type build struct {
		name string
		fig  func() (figure, error)
	}
	var builds []build
	for _, n := range []int{1, 2, 3, 5} {
		post := layoutPosterior(t, n)
		truths := make([]float64, n)
		for i := range truths {
			truths[i] = post.Marginals[i].Summary.Median
		}
		builds = append(builds, build{"corner " + strconv.Itoa(n), func() (figure, error) { return cornerFigure(post, truths, nil) }})
	}
	src := rand.New(rand.NewPCG(83, 84))
	sd := SpectrumData{BinBounds: [2]float64{-10, -4}}
	for k := 1; k <= 14; k++ {
		sd.Freq = append(sd.Freq, float64(k)*2e-9)
		s := make([]float64, 300)
		for i := range s {
			s[i] = math.Max(-10, -6.5-float64(k)*0.2+0.3*src.NormFloat64())
		}
		sd.BinSamples = append(sd.BinSamples, s)
	}
	for _, name := range []string{"strings", "smbhb", "strings-smbhb"} {
		mb := ModelBand{Name: name, Freq: sd.Freq}
		for range 50 {
			a := -6.5 + 0.2*src.NormFloat64()
			c := make([]float64, len(sd.Freq))
			for k := range c {
				c[k] = a - 0.2*float64(k)
			}
			mb.Curves = append(mb.Curves, c)
		}
		sd.Models = append(sd.Models, mb)
	}
	builds = append(builds, build{"spectrum", func() (figure, error) { return spectrumFigure(sd) }})
	beta := []float64{0, 1e-5, 1e-4, 1e-3, 1e-2, 0.1, 0.3, 1}
	mean := []float64{-900, -80, -60, -40, -25, -12, -8, -5}
	se := []float64{30, 3, 2, 1.5, 1, 0.5, 0.3, 0.2}
	for _, ax := range []BetaAxis{BetaLog, BetaFifthRoot} {
		builds = append(builds, build{"lnl " + strconv.Itoa(int(ax)), func() (figure, error) { return lnlBetaFigure(beta, mean, se, ax) }})
	}
	for _, nc := range []int{1, 3} {
		var ex []NamedExclusion
		for m := range nc {
			var pts []stats.ExclusionPoint
			for k := range 16 {
				pts = append(pts, stats.ExclusionPoint{X: -5 + 0.3125*(float64(k)+0.5), Lo: -5 + 0.3125*float64(k), Hi: -5 + 0.3125*float64(k+1), N: 500,
					Limit: -10 + 0.2*float64(k) - 0.5*float64(m)})
			}
			prior := "uniform(-14, -6)"
			if m == 2 {
				prior = "normal(-10, 2)"
			}
			ex = append(ex, NamedExclusion{Name: []string{"strings", "strings-smbhb", "a simulated model with a long name"}[m], Points: pts, Mass: 0.95, Prior: prior})
		}
		builds = append(builds, build{"exclusion " + strconv.Itoa(nc), func() (figure, error) {
			return exclusionFigure(AxisLabel(`\log_{10} \alpha`, ""), AxisLabel(`\log_{10} G\mu`, ""), ex, -6)
		}})
	}
	var tr []Trace
	for p := range 5 {
		w := make([][]float64, 6)
		for k := range w {
			w[k] = make([]float64, 200)
			for i := 1; i < 200; i++ {
				w[k][i] = 0.9*w[k][i-1] + src.NormFloat64()*math.Pow(10, float64(p-2))
			}
		}
		tr = append(tr, Trace{Label: []string{`\log_{10} A`, `\gamma`, `\log_{10} G\mu`, `\log_{10} \alpha`, `\log_{10} P`}[p], Walkers: w, Every: 10})
	}
	builds = append(builds, build{"trace", func() (figure, error) { return traceFigure(tr, nil) }})

	for _, b := range builds {
		fig, err := b.fig()
		if err != nil {
			t.Fatalf("%s: %v", b.name, err)
		}
		boxes := recordFigure(fig)
		// Every figure has at least its axis labels and a few ticks.
		if len(boxes) < 4 {
			t.Errorf("%s: only %d text labels recorded", b.name, len(boxes))
		}
		for _, p := range layoutProblems(boxes, fig.w, fig.h) {
			t.Errorf("%s: %s", b.name, p)
		}
	}
}

// TestLayoutCheckFails shows that the layout check catches what it is
// for: two labels drawn on top of each other, a label beyond the canvas,
// and the crowded tick labels of a plot whose labels are too big for it.
func TestLayoutCheckFails(t *testing.T) {
	sty := textStyle(8)
	r := newTextRecorder(vg.Inch, vg.Inch)
	dc := draw.New(r)
	dc.FillText(sty, vg.Point{X: 10, Y: 30}, `$\log_{10} G\mu$`)
	dc.FillText(sty, vg.Point{X: 16, Y: 32}, "overlapping")
	dc.FillText(sty, vg.Point{X: 60, Y: 60}, "beyond the edge")
	probs := layoutProblems(r.boxes, vg.Inch, vg.Inch)
	if len(r.boxes) != 3 || len(probs) != 2 || !strings.HasPrefix(probs[0], "overlap") || !strings.HasPrefix(probs[1], "outside") {
		t.Errorf("boxes %v: problems %q, want one outside and one overlap", r.boxes, probs)
	}

	p := newPlot()
	p.X.Tick.Label.Font.Size = 30
	p.X.Min, p.X.Max = -12.5, 12.5
	p.Add(plotter.NewFunction(math.Sin))
	fig := figure{w: 1.5 * vg.Inch, h: vg.Inch, draw: func(dc draw.Canvas) { p.Draw(dc) }}
	if probs := layoutProblems(recordFigure(fig), fig.w, fig.h); len(probs) == 0 {
		t.Error("crowded 30 pt tick labels passed the layout check")
	}

	// The recorder follows rotation: a label turned a quarter turn is
	// tall and narrow.
	r = newTextRecorder(vg.Inch, vg.Inch)
	rot := sty
	rot.Rotation = math.Pi / 2
	dc = draw.New(r)
	dc.FillText(rot, vg.Point{X: 30, Y: 30}, "a long rotated label")
	if b := r.boxes[0]; !(b.maxY-b.minY > 3*(b.maxX-b.minX)) {
		t.Errorf("rotated label box %s is not tall and narrow", describe(b))
	}
}

// TestTextHandler checks texText's layout: scripts are smaller and on a
// shifted baseline, a sub- and superscript on one base stack, Greek
// letters come out as their characters, the box covers every run, and
// nonsense input neither panics nor loses the text.
func TestTextHandler(t *testing.T) {
	h := texText{fonts: font.DefaultCache}
	f := font.From(figureFont, 10)
	cases := []struct {
		in    string
		text  string // the runs' text, concatenated
		check func(runs []glyphRun) bool
	}{
		// Expected from the handler's rules (see texText).
		{`$\log_{10} G\mu$`, "log10 Gμ", func(r []glyphRun) bool {
			return len(r) == 4 && r[1].s == "10" && r[1].scale == scriptScale && r[1].dy < 0 && r[3].italic && r[0].scale == 1
		}},
		{`$x_a^b$`, "xab", func(r []glyphRun) bool { return len(r) == 3 && r[1].dx == r[2].dx && r[1].dy < 0 && r[2].dy > 0 }},
		{`$f_\mathrm{bend}$ [Hz]`, "fbend [Hz]", func(r []glyphRun) bool { return r[1].s == "bend" && !r[1].italic && r[1].dy < 0 }},
		{`$\Omega_{\rm GW}$`, "ΩGW", func(r []glyphRun) bool { return !r[0].italic && r[1].s == "GW" }},
		{`$-3\times 10^{-9}$`, "−3×10−9", func(r []glyphRun) bool { return r[len(r)-1].dy > 0 && r[len(r)-1].s == "−9" }},
		{`$\sqrt{\kappa}$`, "√κ", func(r []glyphRun) bool { return len(r) == 2 && !r[0].italic && r[1].italic && r[1].dx > r[0].dx }},
		{`plain_text $`, "plain_text ", nil},
		{`$\frac{1}{2$ \unknown {`, "frac12 \\unknown {", nil},
		{`$^^__{{}}\$`, "", nil}, // every $ delimits math, escaped or not
	}
	for _, c := range cases {
		runs, w := h.layout(c.in, f)
		var b strings.Builder
		for _, r := range runs {
			b.WriteString(r.s)
		}
		if b.String() != c.text {
			t.Errorf("%q: runs read %q, want %q", c.in, b.String(), c.text)
		}
		if c.check != nil && !c.check(runs) {
			t.Errorf("%q: runs %+v", c.in, runs)
		}
		bw, ht, dp := h.Box(c.in, f)
		if bw != w || !(ht > 0) || !(dp > 0) {
			t.Errorf("%q: box %v x (%v + %v), layout width %v", c.in, bw, ht, dp, w)
		}
		for _, r := range runs {
			e := h.face(f, r).Extents()
			if r.dx+h.face(f, r).Width(r.s) > w+1e-9 || r.dy+e.Ascent > ht+1e-9 || e.Descent-r.dy > dp+1e-9 {
				t.Errorf("%q: run %q outside the box", c.in, r.s)
			}
		}
	}
}

// TestTickLabels checks the one number format of the figures' axes.
func TestTickLabels(t *testing.T) {
	// Expected strings by hand from tickLabels' rule.
	cases := []struct {
		in   []float64
		want string
		e    int
	}{
		{[]float64{3.8, 4.2, 4.6}, "3.8,4.2,4.6", 0},
		{[]float64{-14.7, -14.5, -14.3}, "−14.7,−14.5,−14.3", 0},
		{[]float64{0, 0.5, 1}, "0.0,0.5,1.0", 0},
		{[]float64{0, 1000, 2000, 3000}, "0,1000,2000,3000", 0},
		{[]float64{4.199999999999999, 4.4}, "4.2,4.4", 0},
		{[]float64{2e-9, 2.5e-9, 3e-9}, "2.0,2.5,3.0", -9},
		{[]float64{0, 2e5, 4e5}, "0,2,4", 5},
		{nil, "", 0},
	}
	for _, c := range cases {
		labels, e := tickLabels(c.in)
		if got := strings.Join(labels, ","); got != c.want || e != c.e {
			t.Errorf("tickLabels(%v) = %s, 10^%d; want %s, 10^%d", c.in, got, e, c.want, c.e)
		}
	}
}

func TestWithPower(t *testing.T) {
	// Expected by hand from withPower's rule.
	for _, c := range []struct {
		label string
		e     int
		want  string
	}{
		{"$f$ [Hz]", -9, "$f$ [$10^{-9}$ Hz]"},
		{`$\gamma$`, 5, `$\gamma$ [$10^{5}$]`},
		{"", -3, "[$10^{-3}$]"},
	} {
		if got := withPower(c.label, c.e); got != c.want {
			t.Errorf("withPower(%q, %d) = %q, want %q", c.label, c.e, got, c.want)
		}
	}
}
