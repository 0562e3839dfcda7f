package report

import (
	"math"
	"strings"
	"unicode"
	"unicode/utf8"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
)

// texText is the text handler of every figure. Text between dollar signs
// is typeset as a small subset of TeX math: sub- and superscripts (_ and ^,
// nested, with a braced group, a macro or one character as argument) in a
// smaller size on a shifted baseline; Greek letters and common symbols by
// name; Latin letters and lower-case Greek in italics as TeX sets them,
// digits, upper-case Greek and operator names (\log, \ln, \exp) upright;
// \mathrm, \rm and \text upright; \sqrt{x} as a radical sign before x; \, \; \: as spaces; "-" as a true minus.
// Unknown macros are written as their name. Text outside dollar signs is
// drawn as it is. It never fails, whatever the input.
//
// gonum/plot's own LaTeX handler (text.Latex, through go-latex v0.2.0) has
// no sub- or superscripts and panics on unknown macros, and the figure font
// has no superscript minus, hence this handler.
type texText struct {
	fonts *font.Cache
}

var _ text.Handler = texText{}

// Script sizes relative to the enclosing text and baseline shifts relative
// to its size, close to TeX's for 8-10 pt type (The TeXbook, appendix G,
// rules 18a-f: subscripts drop about 0.15-0.25 em, superscripts rise about
// 0.35-0.4 em, scripts are set at 70 %); common practice.
const (
	scriptScale = 0.7
	minScale    = 0.5
	subDrop     = 0.2
	supRise     = 0.38
	thinSpace   = 1.0 / 6 // \, in em
	medSpace    = 2.0 / 9 // \: and \; in em
)

// A glyphRun is text drawn in one font at one offset from the start of the
// line's baseline.
type glyphRun struct {
	s      string
	italic bool
	scale  float64 // size relative to the base font
	dx, dy vg.Length
}

// Cache implements text.Handler.
func (h texText) Cache() *font.Cache { return h.fonts }

// Extents implements text.Handler.
func (h texText) Extents(f font.Font) font.Extents {
	fc := h.fonts.Lookup(f, f.Size)
	return fc.Extents()
}

// Lines implements text.Handler.
func (h texText) Lines(txt string) []string {
	return strings.Split(strings.TrimRight(txt, "\n"), "\n")
}

func (h texText) face(base font.Font, r glyphRun) *font.Face {
	f := base
	if r.italic {
		f.Style = 1 // golang.org/x/image/font.StyleItalic
	}
	fc := h.fonts.Lookup(f, vg.Length(r.scale)*base.Size)
	return &fc
}

// Box implements text.Handler for one line.
func (h texText) Box(line string, f font.Font) (w, ht, dp vg.Length) {
	runs, w := h.layout(line, f)
	e := h.Extents(f)
	ht, dp = e.Ascent, e.Descent
	for _, r := range runs {
		re := h.face(f, r).Extents()
		ht = max(ht, r.dy+re.Ascent)
		dp = max(dp, re.Descent-r.dy)
	}
	return w, ht, dp
}

// Draw implements text.Handler: lines stacked from the top, each aligned
// by XAlign, the block by YAlign, so that the ink lies inside the
// rectangle text.Style.Rectangle reports.
func (h texText) Draw(c vg.Canvas, txt string, sty text.Style, pt vg.Point) {
	txt = strings.TrimRight(txt, "\n")
	if txt == "" {
		return
	}
	c.SetColor(sty.Color)
	if sty.Rotation != 0 {
		c.Push()
		c.Rotate(sty.Rotation)
		sin, cos := math.Sincos(sty.Rotation)
		pt.X, pt.Y = pt.Y*vg.Length(sin)+pt.X*vg.Length(cos), pt.Y*vg.Length(cos)-pt.X*vg.Length(sin)
	}
	e := h.Extents(sty.Font)
	lines := h.Lines(txt)
	total := sty.Height(txt)
	top := pt.Y + vg.Length(sty.YAlign)*total - (e.Height - e.Ascent) + total
	gap := e.Height - e.Ascent - e.Descent
	for i, line := range lines {
		runs, w := h.layout(line, sty.Font)
		_, ht, dp := h.Box(line, sty.Font)
		base := top - ht
		x := pt.X + vg.Length(sty.XAlign)*w
		for _, r := range runs {
			c.FillString(*h.face(sty.Font, r), vg.Point{X: x + r.dx, Y: base + r.dy}, r.s)
		}
		top = base - dp
		if i < len(lines)-1 {
			top -= gap
		}
	}
	if sty.Rotation != 0 {
		c.Pop()
	}
}

// layout splits one line into glyph runs and returns them with the line's
// advance width.
func (h texText) layout(line string, f font.Font) ([]glyphRun, vg.Length) {
	l := texLayout{h: h, base: f}
	for len(line) > 0 {
		i := strings.IndexByte(line, '$')
		if i < 0 {
			l.emit(line, false, 1, 0)
			break
		}
		l.emit(line[:i], false, 1, 0)
		line = line[i+1:]
		j := strings.IndexByte(line, '$')
		if j < 0 {
			j = len(line)
		}
		l.math(line[:j], 1, 0, false)
		line = line[min(j+1, len(line)):]
	}
	return l.runs, l.x
}

// texLayout accumulates the runs of one line.
type texLayout struct {
	h    texText
	base font.Font
	runs []glyphRun
	x    vg.Length
}

func (l *texLayout) emit(s string, italic bool, scale float64, dy vg.Length) {
	if s == "" {
		return
	}
	r := glyphRun{s: s, italic: italic, scale: scale, dx: l.x, dy: dy}
	// Merge with the previous run when the font and baseline agree.
	if n := len(l.runs); n > 0 {
		p := &l.runs[n-1]
		if p.italic == italic && p.scale == scale && p.dy == dy && p.dx+l.h.face(l.base, *p).Width(p.s) == l.x {
			p.s += s
			l.x = p.dx + l.h.face(l.base, *p).Width(p.s)
			return
		}
	}
	l.runs = append(l.runs, r)
	l.x += l.h.face(l.base, r).Width(s)
}

func (l *texLayout) space(em, scale float64) {
	l.x += vg.Length(em*scale) * l.base.Size
}

// math lays out TeX math s at relative size scale on baseline dy; upright
// sets Latin letters upright (inside \mathrm and friends).
func (l *texLayout) math(s string, scale float64, dy vg.Length, upright bool) {
	// scriptStart is where the last script began, so that a sub- and a
	// superscript on the same base stack instead of following each other.
	scriptStart, scriptEnd, lastScript := vg.Length(0), vg.Length(0), byte(0)
	for i := 0; i < len(s); {
		c := s[i]
		if c != '_' && c != '^' {
			lastScript = 0
		}
		switch {
		case c == '_' || c == '^':
			arg, n := scriptArg(s[i+1:])
			if strings.HasPrefix(arg, `\`) && fontMacros[arg[1:]] && i+1+n < len(s) && s[i+1+n] == '{' {
				// f_\mathrm{bend}: the macro takes its group along.
				_, m := scriptArg(s[i+1+n:])
				arg, n = s[i+1:i+1+n+m], n+m
			}
			sc := math.Max(scale*scriptScale, minScale)
			shift := vg.Length(-subDrop*scale) * l.base.Size
			if c == '^' {
				shift = vg.Length(supRise*scale) * l.base.Size
			}
			if lastScript != 0 && lastScript != c {
				l.x = scriptStart
			} else {
				scriptStart = l.x
			}
			l.math(arg, sc, dy+shift, upright)
			if lastScript != 0 && lastScript != c {
				l.x = max(l.x, scriptEnd)
				lastScript = 0
			} else {
				lastScript = c
			}
			scriptEnd = l.x
			i += 1 + n
		case c == '\\':
			j := i + 1
			for j < len(s) && isASCIILetter(s[j]) {
				j++
			}
			if j == i+1 {
				if j < len(s) {
					switch s[j] {
					case ',':
						l.space(thinSpace, scale)
					case ';', ':':
						l.space(medSpace, scale)
					case ' ':
						l.emit(" ", false, scale, dy)
					case '!':
					default:
						l.emit(s[j:j+1], false, scale, dy)
					}
				}
				i = j + 1
				continue
			}
			name := s[i+1 : j]
			i = j
			switch {
			case fontMacros[name]:
				up := name != "mathit" && name != "it"
				for i < len(s) && s[i] == ' ' {
					i++ // TeX ends a macro name at the spaces after it
				}
				if i < len(s) && s[i] == '{' {
					arg, n := scriptArg(s[i:])
					l.math(arg, scale, dy, up)
					i += n
				} else {
					upright = up // a switch: the rest of this group
				}
				continue
			case name == "left" || name == "right":
				continue
			case name == "sqrt":
				// \sqrt{x}: a radical sign before its argument (no vinculum).
				for i < len(s) && s[i] == ' ' {
					i++
				}
				l.emit("√", false, scale, dy)
				if i < len(s) && s[i] == '{' {
					arg, n := scriptArg(s[i:])
					l.math(arg, scale, dy, upright)
					i += n
				}
				continue
			}
			sym, ok := texSymbols[name]
			if !ok {
				sym = name
			}
			l.emit(sym, ok && italicSymbol(name), scale, dy)
			if name == "times" || name == "cdot" || name == "pm" {
				for i < len(s) && s[i] == ' ' {
					i++ // an operator sets its own spacing: 3\times 10 is "3×10"
				}
			}
		case c == '{':
			arg, n := scriptArg(s[i:])
			l.math(arg, scale, dy, upright)
			i += n
		case c == '}':
			i++
		case c == ' ':
			// Spaces are kept (labels rely on them) but collapsed.
			if !strings.HasSuffix(l.lastText(), " ") && l.x > 0 {
				l.emit(" ", false, scale, dy)
			}
			for i < len(s) && s[i] == ' ' {
				i++
			}
		case c == '-':
			l.emit("−", false, scale, dy)
			i++
		default:
			r, n := utf8.DecodeRuneInString(s[i:])
			l.emit(s[i:i+n], !upright && r < utf8.RuneSelf && unicode.IsLetter(r), scale, dy)
			i += n
		}
	}
}

func (l *texLayout) lastText() string {
	if len(l.runs) == 0 {
		return ""
	}
	return l.runs[len(l.runs)-1].s
}

// fontMacros are the font-changing macros; all but \mathit and \it set
// their argument (or, as a switch, the rest of the group) upright.
var fontMacros = map[string]bool{"rm": true, "mathrm": true, "text": true, "textrm": true, "operatorname": true,
	"mathit": true, "it": true, "mathbf": true, "bf": true, "mathcal": true, "mathsf": true}

func isASCIILetter(c byte) bool { return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' }

// italicSymbol reports whether TeX sets the symbol macro name in italics:
// the lower-case Greek letters.
func italicSymbol(name string) bool {
	r, _ := utf8.DecodeRuneInString(texSymbols[name])
	return unicode.Is(unicode.Greek, r) && unicode.IsLower(r)
}
