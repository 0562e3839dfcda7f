package report

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"tautline/stats"
)

func TestFormatAsym(t *testing.T) {
	// Expected strings worked by hand from the rule in FormatAsym's doc:
	// the smaller error to sig significant figures, the rest to its
	// decimal place (common practice in journal tables).
	cases := []struct {
		v, plus, minus float64
		sig            int
		want           string
	}{
		{-7.5234, 0.3123, 0.4511, 2, `-7.52^{+0.31}_{-0.45}`},
		{1.0, 0.05, 0.05, 2, `1.000 \pm 0.050`},
		{3.14159, 0.0996, 0.2, 2, `3.14^{+0.10}_{-0.20}`}, // rounding carries a digit
		{1234.4, 56, 120, 2, `1234^{+56}_{-120}`},
		{1234.4, 560, 1200, 2, `1230^{+560}_{-1200}`},
		{1.234e-9, 0.05e-9, 0.04e-9, 2, `(1.234^{+0.050}_{-0.040}) \times 10^{-9}`},
		{2.5e5, 1e4, 2e4, 2, `(2.50^{+0.10}_{-0.20}) \times 10^{5}`},
		{0, 0.3, 0.4, 2, `0.00^{+0.30}_{-0.40}`},
		{2.345, 0.123, 0.5, 1, `2.3^{+0.1}_{-0.5}`},
		{-0.001, 0.5, 0.5, 2, `0.00 \pm 0.50`}, // no "-0.00"
		{3.14159, 0, 0, 2, `3.14`},
		{3.14159, math.NaN(), 0.1, 2, `3.14`},
		{math.NaN(), 0.1, 0.1, 2, `\text{n/a}`},
		{-7.5234, 0.3123, 0.4511, 0, `-7.52^{+0.31}_{-0.45}`}, // sig < 1 means 2
	}
	for _, c := range cases {
		if got := FormatAsym(c.v, c.plus, c.minus, c.sig); got != c.want {
			t.Errorf("FormatAsym(%g, %g, %g, %d) = %q, want %q", c.v, c.plus, c.minus, c.sig, got, c.want)
		}
	}
}

func TestFormatLimitInterval(t *testing.T) {
	lim := []struct {
		v, scale float64
		upper    bool
		want     string
	}{
		// Worked by hand from FormatLimit's doc: cut at the decimal place
		// of the scale's first significant figure (2 significant figures
		// of the value when scale is 0), integer digits kept, upper limits
		// rounded up and lower limits down so the bound printed is never
		// tighter than the value.
		{-1.68, 1, true, `< -1`},     // ceil(-1.68) = -1; nearest gave "< -2"
		{-1.68, 0.9, true, `< -1.6`}, // std 0.9: first figure in the tenths
		{-1.68, 1, false, `> -2`},    // floor(-1.68) = -2
		{-1.68, 0.3, true, `< -1.6`},
		{-1.68, 0, true, `< -1.6`}, // ceil(-16.8) = -16
		{3.9199, 0, true, `< 4.0`},
		{3.9199, 0, false, `> 3.9`},
		{-7.048, 0, true, `< -7.0`},
		{-7.048, 0, false, `> -7.1`},
		{0.3684, 0, false, `> 0.36`},
		{0.3684, 0, true, `< 0.37`},
		{123.4, 0, true, `< 124`},
		{-10.234, 0.8, true, `< -10.2`},
		{-10.234, 0.8, false, `> -10.3`},
		{-10.234, 0.05, true, `< -10.23`},
		{123.4, 50, true, `< 124`},
		{123.4, 50, false, `> 123`},
		{2.0, 0.5, true, `< 2.0`},                // on the grid: not pushed outward
		{-0.3, 1, true, `< 0`},                   // ceil gives -0: no "-0"
		{2.5e-5, 0, true, `< 2.5\times 10^{-5}`}, // 2.5e-5*1e5 is not exactly 2.5 in binary
		{2.54e-5, 1e-7, true, `< 2.54\times 10^{-5}`},
		{2.541e-5, 1e-7, true, `< 2.55\times 10^{-5}`},
		{2.549e-5, 1e-7, false, `> 2.54\times 10^{-5}`},
		{9.96e-5, 0, true, `< 1.0\times 10^{-4}`},    // carry into a new digit
		{-9.96e-5, 0, false, `> -1.0\times 10^{-4}`}, // and for negative values
		{1.23e5, 0, true, `< 1.3\times 10^{5}`},
		{math.Inf(1), 0, true, `< \infty`},
	}
	for _, c := range lim {
		if got := FormatLimit(c.v, c.scale, c.upper, 2); got != c.want {
			t.Errorf("FormatLimit(%g, %g, %v) = %q, want %q", c.v, c.scale, c.upper, got, c.want)
		}
	}
	ivs := []struct {
		iv   stats.Interval
		want string
	}{
		{stats.Interval{Lo: -8.123, Hi: -6.987}, `[-8.1, -7.0]`},
		{stats.Interval{Lo: 0.0123, Hi: 0.0456}, `[0.012, 0.046]`},
		{stats.Interval{Lo: 1.1e-9, Hi: 3.4e-9}, `[1.1, 3.4] \times 10^{-9}`},
	}
	for _, c := range ivs {
		if got := FormatInterval(c.iv, 2); got != c.want {
			t.Errorf("FormatInterval(%v) = %q, want %q", c.iv, got, c.want)
		}
	}
}

func TestSummaryTable(t *testing.T) {
	ss := []stats.Summary{
		{Name: "log10_A", Label: `\log_{10} A`, Median: -14.62, ET68: stats.Interval{Lo: -14.81, Hi: -14.50},
			ET95: stats.Interval{Lo: -15.02, Hi: -14.37}, Rails: stats.EdgeNone, Limit: math.NaN(), LimitMass: 0.95},
		{Name: "log10_Gmu", Label: `\log_{10} G\mu`, Rails: stats.EdgeLower, Std: 0.8, Limit: -10.234, LimitMass: 0.95},
		{Name: "f_bend", Unit: "Hz", Rails: stats.EdgeBoth, LimitMass: 0.95},
	}
	tab := SummaryTable(ss, 2)
	for _, want := range []string{
		`$\log_{10} A$ & $-14.62^{+0.12}_{-0.19}$ & $[-15.02, -14.37]$ \\`,
		`$\log_{10} G\mu$ & --- & $< -10.2$ (95\,\%) \\`,
		`f\_bend [Hz] & --- & unconstrained \\`,
		`\begin{tabular}{lcc}`, `\end{tabular}`,
	} {
		if !strings.Contains(tab, want) {
			t.Errorf("summary table lacks %q:\n%s", want, tab)
		}
	}
}

// TestComparisonTable checks that the LaTeX table and comparison.csv/json
// quote each row's ln B, error and reading exactly as given (the evidence
// package computes them), format the ln Z values with their errors, mark
// the reference row, and write "---" for a missing estimate.
func TestComparisonTable(t *testing.T) {
	// The callers' numbers: TI difference -7.0 - (-10.0) = 3.0 with errors
	// 0.2, 0.1 in quadrature (hypot = 0.2236), and a row without SS.
	rows := []Evidence{
		{Model: "smbhb", LnZTI: -10, LnZTIErr: 0.1, LnZSS: -10.05, LnZSSErr: 0.05},
		{Model: "strings", LnZTI: -7, LnZTIErr: 0.2, LnZSS: -7.1, LnZSSErr: 0.12,
			LnB: 3, LnBErr: math.Hypot(0.2, 0.1), Reading: "strong support for strings"},
		{Model: "sum", LnZTI: -9, LnZTIErr: 0.2, LnZSS: math.NaN(), LnZSSErr: math.NaN(),
			LnB: 1, LnBErr: 0.3, Reading: "caller's_words"},
	}
	tab, err := ComparisonTable(rows, "smbhb", 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{
		`smbhb & $-10.00 \pm 0.10$ & $-10.050 \pm 0.050$ & reference & --- \\`,
		`strings & $-7.00 \pm 0.20$ & $-7.10 \pm 0.12$ & $3.00 \pm 0.22$ & strong support for strings \\`,
		`sum & $-9.00 \pm 0.20$ & --- & $1.00 \pm 0.30$ & caller's\_words \\`,
	} {
		if !strings.Contains(tab, want) {
			t.Errorf("comparison table lacks %q:\n%s", want, tab)
		}
	}
	if _, err := ComparisonTable(rows, "none", 2); err == nil {
		t.Error("missing reference did not fail")
	}
	dir := t.TempDir()
	if err := WriteComparison(dir, Metadata{Run: "r"}, rows, "smbhb", 2); err != nil {
		t.Fatal(err)
	}
	var cj comparisonRead
	readJSON(t, filepath.Join(dir, "comparison.json"), &cj)
	if len(cj.Models) != 3 || !eqPtr(cj.Models[1].LnB, 3) || !eqPtr(cj.Models[1].LnBErr, math.Hypot(0.2, 0.1)) ||
		!eqPtr(cj.Models[0].LnB, 0) || cj.Models[0].Evidence != "reference" || cj.Models[2].Evidence != "caller's_words" {
		t.Errorf("comparison.json models: %+v", cj.Models)
	}
}

// TestLimitTableAndCorner checks that the summary table and the corner
// figure's summary table print the same outward-rounded limit: a 95 %
// upper limit of -1.68 on a posterior of standard deviation 1 (the
// review's case, worked by hand: ceil(-1.68) = -1) and a lower limit of
// 0.3684 with standard deviation 0.02 (floor(36.84) / 100 = 0.36); and
// that a two-sided summary shows the median and 68 % interval rounded as
// FormatAsym rounds them.
func TestLimitTableAndCorner(t *testing.T) {
	cases := []struct {
		s     stats.Summary
		table string
		cells [3]string
	}{
		{stats.Summary{Name: "log10_alpha", Label: `\log_{10} \alpha`, Rails: stats.EdgeLower, Std: 1, Limit: -1.68, LimitMass: 0.95},
			`$< -1$ (95\,\%)`, [3]string{`$\log_{10} \alpha$`, `$< -1$`, "95 % upper limit"}},
		{stats.Summary{Name: "x", Rails: stats.EdgeUpper, Std: 0.02, Limit: 0.3684, LimitMass: 0.95},
			`$> 0.36$ (95\,\%)`, [3]string{"x", `$> 0.36$`, "95 % lower limit"}},
		{stats.Summary{Name: "log10_A", Label: `\log_{10} A`, Median: -14.62, ET68: stats.Interval{Lo: -14.81, Hi: -14.50},
			ET95: stats.Interval{Lo: -15.02, Hi: -14.37}, Limit: math.NaN(), LimitMass: 0.95},
			`$-14.62^{+0.12}_{-0.19}$`, [3]string{`$\log_{10} A$`, `$-14.62$`, `$[-14.81, -14.50]$`}},
		{stats.Summary{Name: "f", Unit: "Hz", Median: 2.5e-9, ET68: stats.Interval{Lo: 2.31e-9, Hi: 2.74e-9}, LimitMass: 0.95},
			``, [3]string{"f [Hz]", `$2.50\times 10^{-9}$`, `$[2.31, 2.74]\times 10^{-9}$`}},
	}
	for _, c := range cases {
		if tab := SummaryTable([]stats.Summary{c.s}, 2); !strings.Contains(tab, c.table) {
			t.Errorf("%s: table lacks %q:\n%s", c.s.Name, c.table, tab)
		}
		if got := summaryCells(c.s); got != c.cells {
			t.Errorf("%s: corner cells %q, want %q", c.s.Name, got, c.cells)
		}
	}
}
