package report

import (
	"math"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// FuzzPlainLabel feeds arbitrary labels to the LaTeX-to-text converter: it
// must not panic, must keep valid UTF-8 valid and must remove every brace
// that is not escaped.
func FuzzPlainLabel(f *testing.F) {
	f.Add(`\log_{10} G\mu`)
	f.Fuzz(func(t *testing.T, s string) {
		out := PlainLabel(s)
		if utf8.ValidString(s) && !utf8.ValidString(out) {
			t.Fatalf("PlainLabel(%q) = %q: invalid UTF-8", s, out)
		}
		if !strings.Contains(s, `\{`) && !strings.Contains(s, `\}`) && strings.ContainsAny(out, "{}") {
			t.Fatalf("PlainLabel(%q) = %q kept a brace", s, out)
		}
	})
}

// FuzzFormatAsym checks that value formatting never panics and yields
// balanced braces, for any values and significant figures.
func FuzzFormatAsym(f *testing.F) {
	f.Add(-7.5234, 0.3123, 0.4511, 2)
	f.Fuzz(func(t *testing.T, v, plus, minus float64, sig int) {
		if sig > 17 {
			sig = 17
		}
		s := FormatAsym(v, plus, minus, sig)
		if strings.Count(s, "{") != strings.Count(s, "}") {
			t.Fatalf("FormatAsym(%g, %g, %g, %d) = %q: unbalanced braces", v, plus, minus, sig, s)
		}
		if finite(v) && s == "" {
			t.Fatalf("FormatAsym(%g, ...) is empty", v)
		}
		_ = FormatLimit(v, math.Abs(plus), true, sig)
	})
}

// FuzzFormatLimit checks that a printed limit is never tighter than the
// value: the number after "< " is at least v and the one after "> " at most
// v, for any value, scale and significant figures.
func FuzzFormatLimit(f *testing.F) {
	f.Add(-1.68, 1.0, true, 2)
	f.Add(0.3684, 0.0, false, 2)
	f.Add(9.96e-5, 0.0, true, 2)
	f.Add(-123456.7, 30.0, false, 1)
	f.Fuzz(func(t *testing.T, v, scale float64, upper bool, sig int) {
		sig = min(sig, 17)
		s := FormatLimit(v, scale, upper, sig)
		op := "> "
		if upper {
			op = "< "
		}
		num, ok := strings.CutPrefix(s, op)
		if !ok {
			t.Fatalf("FormatLimit(%g, %g, %v, %d) = %q: no %q", v, scale, upper, sig, s, op)
		}
		if !finite(v) || strings.Contains(num, "NaN") {
			// NaN only for absurd decimal counts (a scale hundreds of
			// decades below the value), where 10^d overflows.
			return
		}
		mant, exp, sci := strings.Cut(num, `\times 10^{`)
		got, err := strconv.ParseFloat(mant, 64)
		if err != nil {
			t.Fatalf("FormatLimit(%g, %g, %v, %d) = %q: %v", v, scale, upper, sig, s, err)
		}
		if sci {
			e, err := strconv.Atoi(strings.TrimSuffix(exp, "}"))
			if err != nil {
				t.Fatalf("FormatLimit(%g, %g, %v, %d) = %q: %v", v, scale, upper, sig, s, err)
			}
			got *= math.Pow(10, float64(e))
		}
		// roundOutward treats values within 1e-9 (relative) of the
		// rounding grid as on it; 1e-8 also covers the float error of
		// parsing and scaling by 10^e (~1e-15).
		tol := 1e-8 * math.Abs(v)
		if upper && got < v-tol || !upper && got > v+tol {
			t.Fatalf("FormatLimit(%g, %g, %v, %d) = %q is tighter than the value", v, scale, upper, sig, s)
		}
	})
}

// FuzzTexText feeds arbitrary text to the figures' TeX handler: laying it
// out and drawing it must not panic, and the box must hold every run.
func FuzzTexText(f *testing.F) {
	f.Add(`$\log_{10} f_\mathrm{bend}^{(2)}$ [Hz]`)
	f.Add(`$x_a^b_c^^{$`)
	h := texText{fonts: font.DefaultCache}
	fnt := font.From(figureFont, 7)
	f.Fuzz(func(t *testing.T, s string) {
		runs, w := h.layout(s, fnt)
		bw, ht, dp := h.Box(s, fnt)
		if bw != w {
			t.Fatalf("%q: box width %v, layout width %v", s, bw, w)
		}
		for _, r := range runs {
			e := h.face(fnt, r).Extents()
			if r.dy+e.Ascent > ht+1e-9 || e.Descent-r.dy > dp+1e-9 {
				t.Fatalf("%q: run %q outside the box", s, r.s)
			}
		}
		rec := newTextRecorder(vg.Inch, vg.Inch)
		dc := draw.New(rec)
		dc.FillText(textStyle(7), vg.Point{X: 10, Y: 10}, s)
	})
}
