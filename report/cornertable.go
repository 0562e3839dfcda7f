package report

import (
	"math"
	"strconv"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"tautline/stats"
)

// The corner figure's summary table sits in the empty upper triangle: one
// row per parameter with its label, its median and its 68 % equal-tailed
// interval, or, for a posterior railing against a prior edge, the one-sided
// limit and what it is. Numbers are rounded as in SummaryTable.

// summaryRows returns the table cells of every parameter of post.
func summaryRows(post *stats.Posterior) [][3]string {
	rows := make([][3]string, 0, len(post.Marginals)+1)
	rows = append(rows, [3]string{"", "median", "68 % interval"})
	for i, m := range post.Marginals {
		s := m.Summary
		if s.Label == "" && s.Name == "" {
			s.Name = post.Params[i].Name
		}
		rows = append(rows, summaryCells(s))
	}
	return rows
}

// summaryCells returns the label, value and interval cells of s.
func summaryCells(s stats.Summary) [3]string {
	name := AxisLabel(s.Label, s.Unit)
	if s.Label == "" {
		name = s.Name
		if s.Unit != "" {
			name += " [" + s.Unit + "]"
		}
	}
	pct := strconv.FormatFloat(100*s.LimitMass, 'f', -1, 64) + " %"
	switch s.Rails {
	case stats.EdgeLower:
		return [3]string{name, "$" + FormatLimit(s.Limit, s.Std, true, 2) + "$", pct + " upper limit"}
	case stats.EdgeUpper:
		return [3]string{name, "$" + FormatLimit(s.Limit, s.Std, false, 2) + "$", pct + " lower limit"}
	case stats.EdgeBoth:
		return [3]string{name, "—", "unconstrained"}
	}
	med, iv := medianInterval(s.Median, s.ET68, 2)
	return [3]string{name, med, iv}
}

// medianInterval formats a median and its interval as TeX math with the
// decimal places of the smaller error to sig significant figures, as
// FormatAsym rounds them, and a common power of ten for values of size
// 1e4 or more or below 1e-3.
func medianInterval(m float64, iv stats.Interval, sig int) (string, string) {
	plus, minus := iv.Hi-m, m-iv.Lo
	if !finite(m) || !(plus > 0 && minus > 0) || !finite(plus) || !finite(minus) {
		return "$" + formatSig(m, sig+1) + "$", "$" + FormatInterval(iv, sig) + "$"
	}
	e := sciExponent(math.Max(math.Abs(iv.Lo), math.Abs(iv.Hi)))
	sc := math.Pow(10, float64(-e))
	d := decimalsFor(math.Min(plus, minus)*sc, sig)
	tail := ""
	if e != 0 {
		tail = `\times 10^{` + strconv.Itoa(e) + "}"
	}
	return "$" + fixed(m*sc, d) + tail + "$", "$[" + fixed(iv.Lo*sc, d) + ", " + fixed(iv.Hi*sc, d) + "]" + tail + "$"
}

// Table spacing in ems of the table's type: between columns and between
// rows' baselines.
const (
	tableColGap  = 1.0
	tableRowStep = 1.35
)

// summaryTableSize returns the width and height of the table set in
// type of size pt.
func summaryTableSize(rows [][3]string, pt float64) (w, h vg.Length) {
	cw := summaryColumns(rows, pt)
	em := vg.Length(pt)
	return cw[0] + cw[1] + cw[2] + 2*tableColGap*em, vg.Length(len(rows))*tableRowStep*em + em/2
}

func summaryColumns(rows [][3]string, pt float64) [3]vg.Length {
	sty := textStyle(pt)
	var cw [3]vg.Length
	for _, r := range rows {
		for k, c := range r {
			cw[k] = max(cw[k], sty.Width(c))
		}
	}
	return cw
}

// drawSummaryTable draws the table in the top right of box: labels left
// aligned, values right aligned, intervals left aligned, a rule under the
// header. The type is the tick labels' size, shrunk (down to 4.5 pt) when
// the table would not fit.
func drawSummaryTable(dc draw.Canvas, box vg.Rectangle, rows [][3]string) {
	pad := vg.Points(3)
	bw, bh := box.Size().X-2*pad, box.Size().Y-2*pad
	pt := float64(tickSize)
	if w, h := summaryTableSize(rows, pt); w > bw || h > bh {
		pt = math.Max(4.5, pt*math.Min(float64(bw/w), float64(bh/h)))
	}
	w, _ := summaryTableSize(rows, pt)
	cw := summaryColumns(rows, pt)
	em := vg.Length(pt)
	sty := textStyle(pt)
	x0 := box.Max.X - pad - w
	x1 := x0 + cw[0] + tableColGap*em
	x2 := x1 + cw[1] + tableColGap*em
	y := box.Max.Y - pad
	for i, r := range rows {
		y -= tableRowStep * em
		left, right := sty, sty
		right.XAlign = draw.XRight
		dc.FillText(left, vg.Point{X: x0, Y: y}, r[0])
		dc.FillText(right, vg.Point{X: x1 + cw[1], Y: y}, r[1])
		dc.FillText(left, vg.Point{X: x2, Y: y}, r[2])
		if i == 0 {
			rule := y - 0.35*em
			dc.StrokeLine2(draw.LineStyle{Color: inkColour, Width: vg.Points(0.4)}, x0, rule, x0+w, rule)
		}
	}
}
