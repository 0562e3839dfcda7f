package report

import (
	"math"
	"strings"
	"testing"
	"unicode/utf8"
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
