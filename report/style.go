package report

import (
	"bytes"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Figure sizes: one journal column and a full page width.
const (
	ColumnWidth = 3.4 * vg.Inch
	PageWidth   = 7 * vg.Inch
)

// FigureOptions controls how figures are written.
type FigureOptions struct {
	// Formats lists the file formats, among "png", "svg" and "pdf"
	// (default png and svg).
	Formats []string
	// DPI is the resolution of PNG files (default 300).
	DPI int
}

func (o FigureOptions) withDefaults() (FigureOptions, error) {
	if len(o.Formats) == 0 {
		o.Formats = []string{"png", "svg"}
	}
	for _, f := range o.Formats {
		switch f {
		case "png", "svg", "pdf":
		default:
			return o, fmt.Errorf("report: figure format %q: want png, svg or pdf", f)
		}
	}
	if o.DPI <= 0 {
		o.DPI = 300
	}
	return o, nil
}

// series is one entry of the figure palette: colours chosen to differ in
// lightness as well as hue (so they stay apart in greyscale print), each
// with its own dash pattern.
type series struct {
	line, fillDark, fillLight color.NRGBA
	dash                      []vg.Length
}

// palette returns the k-th series style; the palette repeats after four.
func palette(k int) series {
	ss := [...]series{
		// deep slate blue, greyscale lightness about 20 %
		{color.NRGBA{0x1f, 0x2f, 0x4d, 0xff}, color.NRGBA{0x4a, 0x5f, 0x85, 0xc8}, color.NRGBA{0xa9, 0xb6, 0xcf, 0xb4}, nil},
		// brick red, about 45 %
		{color.NRGBA{0xa2, 0x3b, 0x1e, 0xff}, color.NRGBA{0xc8, 0x6a, 0x4a, 0xb4}, color.NRGBA{0xee, 0xc0, 0xad, 0x96}, []vg.Length{vg.Points(4), vg.Points(2)}},
		// olive green, about 60 %
		{color.NRGBA{0x6b, 0x8e, 0x23, 0xff}, color.NRGBA{0x9c, 0xb8, 0x5a, 0xb4}, color.NRGBA{0xd6, 0xe4, 0xb0, 0x96}, []vg.Length{vg.Points(1), vg.Points(1.5)}},
		// ochre, about 75 %
		{color.NRGBA{0xc9, 0x9a, 0x2e, 0xff}, color.NRGBA{0xdd, 0xbd, 0x6c, 0xb4}, color.NRGBA{0xf3, 0xe3, 0xb8, 0x96}, []vg.Length{vg.Points(5), vg.Points(1.5), vg.Points(1), vg.Points(1.5)}},
	}
	return ss[k%len(ss)]
}

// Read-only colours shared by the figures.
var (
	inkColour   = color.NRGBA{0x22, 0x22, 0x22, 0xff}
	gridColour  = color.NRGBA{0xd8, 0xd8, 0xd8, 0xff}
	truthColour = color.NRGBA{0x00, 0x00, 0x00, 0xff}
)

// Font sizes legible when the figure is printed at its nominal width.
const (
	labelSize = 8.5
	tickSize  = 7
)

// figureFont is the typeface of every figure text.
var figureFont = font.Font{Typeface: "Liberation", Variant: "Sans"}

// newPlot returns a plot in tautline's style: sans-serif type set by
// texText (TeX math between dollar signs), thin axes, short ticks labelled
// by linearTicks on a light dotted grid, no title.
func newPlot() *plot.Plot {
	p := plot.New()
	h := texText{fonts: font.DefaultCache}
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font = font.From(figureFont, labelSize)
		ax.Label.TextStyle.Color = inkColour
		ax.Label.TextStyle.Handler = h
		ax.Tick.Label.Font = font.From(figureFont, tickSize)
		ax.Tick.Label.Color = inkColour
		ax.Tick.Label.Handler = h
		ax.Tick.Marker = linearTicks{}
		ax.LineStyle.Width = vg.Points(0.6)
		ax.LineStyle.Color = inkColour
		ax.Tick.LineStyle.Width = vg.Points(0.5)
		ax.Tick.LineStyle.Color = inkColour
		ax.Tick.Length = vg.Points(2.5)
		ax.Padding = vg.Points(1)
	}
	p.X.Label.Padding = vg.Points(2)
	p.Y.Label.Padding = vg.Points(2)
	p.Title.TextStyle = textStyle(tickSize)
	p.Legend.TextStyle = textStyle(tickSize)
	// The library spaces legend entries by the text's height above the
	// baseline; the padding keeps descenders clear of the entry below.
	p.Legend.Padding = vg.Length(0.3 * tickSize)
	return p
}

// textStyle returns the figures' text style at size pt.
func textStyle(pt float64) text.Style {
	return text.Style{Font: font.From(figureFont, vg.Length(pt)), Color: inkColour, Handler: texText{fonts: font.DefaultCache}}
}

// addGrid puts a light dotted grid behind later plotters.
func addGrid(p *plot.Plot) {
	g := plotter.NewGrid()
	for _, ls := range []*draw.LineStyle{&g.Vertical, &g.Horizontal} {
		ls.Color = gridColour
		ls.Width = vg.Points(0.4)
		ls.Dashes = []vg.Length{vg.Points(0.8), vg.Points(1.6)}
	}
	p.Add(g)
}

// blankTicks keeps another ticker's marks but drops their labels, for inner
// panels of a grid of plots.
type blankTicks struct{ plot.Ticker }

func (b blankTicks) Ticks(min, max float64) []plot.Tick {
	t := b.Ticker.Ticks(min, max)
	for i := range t {
		t[i].Label = ""
	}
	return t
}

// AxisLabel turns a LaTeX label and a unit into text for a figure axis:
// the label as TeX math, then the unit in brackets, e.g. `\log_{10} \rho`
// and "s" into "$\log_{10} \rho$ [s]", which the figures typeset with
// subscripts and Greek letters. Dollar signs in the label are dropped
// first, so a label may or may not carry them.
func AxisLabel(label, unit string) string {
	s := ""
	if l := strings.TrimSpace(strings.ReplaceAll(label, "$", "")); l != "" {
		s = "$" + l + "$"
	}
	if unit != "" {
		s = strings.TrimSpace(s + " [" + strings.ReplaceAll(unit, "$", "") + "]")
	}
	return s
}

// PlainLabel renders a LaTeX math label as plain Unicode text for figures:
// Greek letters and common symbols become their characters, sub- and
// superscripts of digits and signs become Unicode sub- and superscripts
// (others are written after "_" or "^"), font macros and braces vanish.
// Unknown macros lose their backslash. It never fails.
func PlainLabel(s string) string {
	s = strings.ReplaceAll(s, "$", "")
	var b strings.Builder
	for i := 0; i < len(s); {
		c := s[i]
		switch c {
		case '\\':
			j := i + 1
			for j < len(s) && (s[j] >= 'a' && s[j] <= 'z' || s[j] >= 'A' && s[j] <= 'Z') {
				j++
			}
			if j == i+1 && j < len(s) { // \, \; \! \{ ...
				switch s[j] {
				case ',', ';', ':', ' ':
					b.WriteByte(' ')
				case '{', '}', '_', '%', '&', '#':
					b.WriteByte(s[j])
				}
				i = j + 1
				continue
			}
			name := s[i+1 : j]
			if r, ok := texSymbols[name]; ok {
				b.WriteString(r)
			} else if !texDropped[name] {
				b.WriteString(name)
			}
			i = j
		case '_', '^':
			arg, n := scriptArg(s[i+1:])
			b.WriteString(script(PlainLabel(arg), c == '^'))
			i += 1 + n
		case '{', '}':
			i++
		default:
			_, n := utf8.DecodeRuneInString(s[i:])
			b.WriteString(s[i : i+n])
			i += n
		}
	}
	return strings.Join(strings.Fields(b.String()), " ")
}

// scriptArg returns the argument of a sub- or superscript and the bytes it
// takes: a braced group, a macro, or one character.
func scriptArg(s string) (string, int) {
	if s == "" {
		return "", 0
	}
	if s[0] == '{' {
		depth := 0
		for i := 0; i < len(s); i++ {
			switch s[i] {
			case '{':
				depth++
			case '}':
				depth--
				if depth == 0 {
					return s[1:i], i + 1
				}
			}
		}
		return s[1:], len(s)
	}
	if s[0] == '\\' {
		j := 1
		for j < len(s) && (s[j] >= 'a' && s[j] <= 'z' || s[j] >= 'A' && s[j] <= 'Z') {
			j++
		}
		return s[:j], j
	}
	_, n := utf8.DecodeRuneInString(s)
	return s[:n], n
}

// The sub- and superscript characters the figure font (Liberation Sans)
// has glyphs for.
const (
	supChars = "¹²³⁴⁵⁶⁷⁸"
	supOf    = "12345678"
	subChars = "₀₁₂₃₄₅₆₇₈₉"
	subOf    = "0123456789"
)

// script writes t as Unicode super- or subscripts when every character has
// one in the figure font ("/" becomes a fraction slash in superscripts),
// else as ^t or _t (parenthesised when longer than one character).
func script(t string, sup bool) string {
	set, of := []rune(subChars), subOf
	if sup {
		set, of = []rune(supChars), supOf
	}
	var b strings.Builder
	for _, r := range t {
		if k := strings.IndexRune(of, r); k >= 0 {
			b.WriteRune(set[k])
			continue
		}
		if sup && r == '/' {
			b.WriteRune('⁄')
			continue
		}
		if utf8.RuneCountInString(t) > 1 {
			t = "(" + t + ")"
		}
		if sup {
			return "^" + t
		}
		return "_" + t
	}
	return b.String()
}

// Read-only tables for PlainLabel.
var (
	texSymbols = map[string]string{
		"alpha": "α", "beta": "β", "gamma": "γ", "delta": "δ", "epsilon": "ε", "varepsilon": "ε",
		"zeta": "ζ", "eta": "η", "theta": "θ", "kappa": "κ", "lambda": "λ", "mu": "μ", "nu": "ν",
		"xi": "ξ", "pi": "π", "rho": "ρ", "sigma": "σ", "tau": "τ", "phi": "φ", "varphi": "φ",
		"chi": "χ", "psi": "ψ", "omega": "ω", "Gamma": "Γ", "Delta": "Δ", "Theta": "Θ",
		"Lambda": "Λ", "Xi": "Ξ", "Pi": "Π", "Sigma": "Σ", "Phi": "Φ", "Psi": "Ψ", "Omega": "Ω",
		"log": "log", "ln": "ln", "exp": "exp", "times": "×", "cdot": "·", "pm": "±",
		"infty": "∞", "le": "≤", "leq": "≤", "ge": "≥", "geq": "≥", "sim": "~", "propto": "~",
		"odot": "sun", "quad": " ", "qquad": " ",
	}
	texDropped = map[string]bool{"rm": true, "mathrm": true, "mathit": true, "mathcal": true,
		"mathbf": true, "text": true, "textrm": true, "it": true, "bf": true, "left": true, "right": true}
)

// A figure is a drawing of a given size, ready to be written in any format.
type figure struct {
	w, h vg.Length
	draw func(dc draw.Canvas)
}

// figureMargin is kept free along every edge: the plotting library lets
// the descent of a bottom axis label reach a fraction of a point below its
// canvas.
const figureMargin = vg.Length(1.5)

// render draws the figure inside its margin.
func (f figure) render(dc draw.Canvas) {
	f.draw(draw.Crop(dc, figureMargin, -figureMargin, figureMargin, -figureMargin))
}

// pdfItalic works around vgpdf (gonum/plot v0.17), which registers every
// font under the plain style but asks for italic ones under style "I":
// an italic face is passed on as a regular font of its own name.
type pdfItalic struct{ *vgpdf.Canvas }

func (c pdfItalic) FillString(f font.Face, pt vg.Point, s string) {
	if f.Font.Style != 0 {
		f.Font.Variant += "Italic"
		f.Font.Style = 0
	}
	c.Canvas.FillString(f, pt, s)
}

// saveFigures draws fig into every requested format, naming the files
// stem + "." + format, each written atomically.
func saveFigures(stem string, fig figure, o FigureOptions) ([]string, error) {
	o, err := o.withDefaults()
	if err != nil {
		return nil, err
	}
	if dir := filepath.Dir(stem); dir != "" {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
	}
	w, h := fig.w, fig.h
	var files []string
	for _, f := range o.Formats {
		var c interface {
			vg.CanvasSizer
			io.WriterTo
		}
		switch f {
		case "png":
			ic := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(o.DPI), vgimg.UseBackgroundColor(color.White))
			c = vgimg.PngCanvas{Canvas: ic}
		case "svg":
			c = vgsvg.New(w, h)
		case "pdf":
			c = pdfItalic{vgpdf.New(w, h)}
		}
		dc := draw.New(c)
		if f != "png" {
			dc.SetColor(color.White)
			dc.Fill(dc.Rectangle.Path())
		}
		fig.render(dc)
		var buf bytes.Buffer
		if _, err := c.WriteTo(&buf); err != nil {
			return files, fmt.Errorf("report: encoding %s.%s: %w", stem, f, err)
		}
		path := stem + "." + f
		if err := writeFileAtomic(path, buf.Bytes()); err != nil {
			return files, err
		}
		files = append(files, path)
	}
	return files, nil
}

// linearTicks places ticks as plot.DefaultTicks does and labels the major
// ones by tickLabels, the one number format of every linear axis.
type linearTicks struct{}

func (linearTicks) Ticks(min, max float64) []plot.Tick {
	t := plot.DefaultTicks{}.Ticks(min, max)
	var vals []float64
	for _, tk := range t {
		if tk.Label != "" {
			vals = append(vals, tk.Value)
		}
	}
	labels, _ := tickLabels(vals)
	k := 0
	for i := range t {
		if t[i].Label != "" {
			t[i].Label = labels[k]
			k++
		}
	}
	return t
}

// tickLabels formats the labelled values of one axis alike: every value
// with the same number of decimals, the fewest that show each of them to
// six significant figures (so 3.8, 4.2, 4.6 and 0.0, 0.5, 1.0, never
// "2500.00"), with a true minus sign. When the values reach 1e5, or all
// lie below 0.01 in size, the power of ten e of the largest is factored
// out: the labels are the mantissas and e is returned (0 otherwise) for
// the axis label to state (see factorPowers).
func tickLabels(vals []float64) ([]string, int) {
	out := make([]string, len(vals))
	var big float64
	for _, v := range vals {
		big = math.Max(big, math.Abs(v))
	}
	if len(vals) == 0 || !finite(big) {
		return out, 0
	}
	e := 0
	if big >= 1e5 || (big > 0 && big < 1e-2) {
		e = int(math.Floor(math.Log10(big)))
	}
	sc := math.Pow(10, float64(-e))
	d := 0
	for _, v := range vals {
		s := strconv.FormatFloat(v*sc, 'f', -1, 64)
		if g := strconv.FormatFloat(v*sc, 'g', 6, 64); !strings.ContainsAny(g, "eE") {
			s = g
		}
		if i := strings.IndexByte(s, '.'); i >= 0 {
			d = max(d, len(s)-i-1)
		}
	}
	d = min(d, 6)
	for i, v := range vals {
		out[i] = minusSign(fixed(v*sc, d))
	}
	return out, e
}

// factorPowers completes the labels of p's linear axes whose tick labels
// have a power of ten factored out (see tickLabels): the power goes into
// the unit's brackets, "[$10^{-9}$ Hz]", or into brackets of its own. Call
// it once the axis ranges are final.
func factorPowers(p *plot.Plot) {
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		if _, ok := ax.Tick.Marker.(linearTicks); !ok {
			continue
		}
		var vals []float64
		for _, t := range (plot.DefaultTicks{}).Ticks(ax.Min, ax.Max) {
			if t.Label != "" {
				vals = append(vals, t.Value)
			}
		}
		if _, e := tickLabels(vals); e != 0 {
			ax.Label.Text = withPower(ax.Label.Text, e)
		}
	}
}

// withPower puts the factor 10^e into an axis label's unit brackets.
func withPower(label string, e int) string {
	pow := "$10^{" + strconv.Itoa(e) + "}$"
	if strings.HasSuffix(label, "]") {
		if i := strings.LastIndex(label, "["); i >= 0 {
			return label[:i+1] + pow + " " + label[i+1:]
		}
	}
	return strings.TrimSpace(label + " [" + pow + "]")
}

// minusSign replaces a leading hyphen by a true minus sign.
func minusSign(s string) string {
	if len(s) > 0 && s[0] == '-' {
		return "−" + s[1:]
	}
	return s
}

// logTicks marks a logarithmic axis with labelled ticks at 1 (and, over
// shorter ranges, 2, 3 or 5) times powers of ten, written as TeX math
// ("$3\times 10^{-9}$", "$10^{-8}$"; plain integers from 1 to 1000), and
// unlabelled ticks at the other integer mantissas.
type logTicks struct{}

func (logTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0) || !(max > min) {
		return nil
	}
	dec := math.Log10(max / min)
	sets := [][]int{{1}, {1, 3}, {1, 2, 5}, {1, 2, 3, 4, 5, 6, 7, 8, 9}}
	start := 0
	switch {
	case dec < 1:
		start = 2
	case dec < 3:
		start = 1
	}
	var ticks []plot.Tick
	for _, set := range sets[start:] {
		ticks = ticks[:0]
		labelled := 0
		for e := int(math.Floor(math.Log10(min))); e <= int(math.Ceil(math.Log10(max))); e++ {
			for m := 1; m <= 9; m++ {
				v := float64(m) * math.Pow(10, float64(e))
				if v < min*(1-1e-9) || v > max*(1+1e-9) {
					continue
				}
				t := plot.Tick{Value: v}
				if slices.Contains(set, m) {
					t.Label = powerLabel(m, e)
					labelled++
				}
				ticks = append(ticks, t)
			}
		}
		if labelled >= 2 {
			break
		}
	}
	return ticks
}

func powerLabel(m, e int) string {
	if e >= 0 && e < 4 {
		return strconv.Itoa(m * int(math.Pow10(e)))
	}
	if m == 1 {
		return "$10^{" + strconv.Itoa(e) + "}$"
	}
	return "$" + strconv.Itoa(m) + `\times 10^{` + strconv.Itoa(e) + "}$"
}

// legendAbove draws a legend in a strip along the top of dc, outside the
// plot's data area so that it can hide no curve, and returns the rest of
// dc for the plot. Each entry is its thumbnail, a space and its name, in
// the text style and thumbnail width of sty; the entries run left to right
// in centred rows, wrapping when a row is full.
func legendAbove(dc draw.Canvas, sty plot.Legend, names []string, thumbs []plot.Thumbnailer) draw.Canvas {
	boxes, h := legendLayout(dc.Rectangle, sty, names)
	for i, b := range boxes {
		l := plot.NewLegend()
		l.TextStyle, l.ThumbnailWidth = sty.TextStyle, sty.ThumbnailWidth
		l.Top, l.Left = true, true
		l.Add(names[i], thumbs[i])
		l.Draw(draw.Canvas{Canvas: dc.Canvas, Rectangle: b})
	}
	return draw.Crop(dc, 0, 0, 0, -h)
}

// legendLayout returns the box of each legend entry in a strip along the
// top of r and the strip's height. Entries are separated by three spaces
// and rows by a third of the text height; an entry wider than r gets a row
// of its own.
func legendLayout(r vg.Rectangle, sty plot.Legend, names []string) (boxes []vg.Rectangle, h vg.Length) {
	if len(names) == 0 {
		return nil, 0
	}
	ts := sty.TextStyle
	em := ts.Rectangle(" ").Max.X
	gap := 3 * em
	var textH vg.Length
	widths := make([]vg.Length, len(names))
	for i, n := range names {
		tr := ts.Rectangle(n)
		textH = max(textH, tr.Max.Y)
		// plot.Legend.Draw puts the text one space after the thumbnail.
		widths[i] = sty.ThumbnailWidth + em + tr.Max.X
	}
	// The legend draws its text baseline one descent above the box bottom.
	rowH := textH + ts.FontExtents().Descent
	pad := textH / 3
	top := r.Max.Y - pad
	for i := 0; i < len(names); {
		// Fill a row, then centre it.
		j, w := i+1, widths[i]
		for j < len(names) && w+gap+widths[j] <= r.Size().X {
			w += gap + widths[j]
			j++
		}
		x := r.Min.X + max(0, (r.Size().X-w)/2)
		for k := i; k < j; k++ {
			boxes = append(boxes, vg.Rectangle{Min: vg.Point{X: x, Y: top - rowH}, Max: vg.Point{X: x + widths[k], Y: top}})
			x += widths[k] + gap
		}
		top -= rowH + pad
		i = j
	}
	return boxes, r.Max.Y - top + pad/2
}
