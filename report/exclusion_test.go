package report

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestLegendLayout checks the legend strip of the exclusion figure: entries
// do not overlap one another, lie inside the strip (which the plot's data
// area is then drawn below), are as wide as the plotting library measures
// a one-entry legend (plot.Legend.Rectangle), and wrap into a new row only
// when the row is full.
func TestLegendLayout(t *testing.T) {
	r := vg.Rectangle{Max: vg.Point{X: ColumnWidth, Y: 2.4 * vg.Inch}}
	sty := newPlot().Legend
	sty.ThumbnailWidth = vg.Points(16)
	long := strings.Repeat("a very long simulated model name ", 4)
	cases := []struct {
		names []string
		rows  int
	}{
		{[]string{"one"}, 1},
		{[]string{"strings only", "strings + binaries"}, 1},
		{[]string{"a", "b", "c", "d", "e"}, 1},
		{[]string{"strings only", "strings + binaries", "a third, simulated model with a long name", "fourth"}, 2},
		{[]string{"x", long, "y"}, 3}, // too wide for a row: a row of its own
	}
	for _, c := range cases {
		boxes, h := legendLayout(r, sty, c.names)
		if len(boxes) != len(c.names) {
			t.Fatalf("%q: %d boxes", c.names, len(boxes))
		}
		rows := map[vg.Length]bool{}
		for i, b := range boxes {
			rows[b.Min.Y] = true
			if b.Max.Y > r.Max.Y || b.Min.Y < r.Max.Y-h {
				t.Errorf("%q: entry %d spans y %v..%v, strip is %v..%v", c.names, i, b.Min.Y, b.Max.Y, r.Max.Y-h, r.Max.Y)
			}
			if b.Min.X < r.Min.X || b.Max.X > r.Max.X && c.names[i] != long {
				t.Errorf("%q: entry %d spans x %v..%v outside the figure", c.names, i, b.Min.X, b.Max.X)
			}
			one := plot.NewLegend()
			one.TextStyle, one.ThumbnailWidth = sty.TextStyle, sty.ThumbnailWidth
			one.Add(c.names[i], plotter.NewFunction(math.Sin))
			// Both are sums of the same font metrics; 1e-9 pt allows
			// only for the order of the additions.
			if w, want := b.Size().X, one.Rectangle(draw.Canvas{Rectangle: r}).Size().X; math.Abs(float64(w-want)) > 1e-9 {
				t.Errorf("%q: entry %d is %v wide, the library measures %v", c.names, i, w, want)
			}
			for j := range i {
				o := boxes[j]
				if b.Min.X < o.Max.X && o.Min.X < b.Max.X && b.Min.Y < o.Max.Y && o.Min.Y < b.Max.Y {
					t.Errorf("%q: entries %d and %d overlap", c.names, j, i)
				}
			}
		}
		if len(rows) != c.rows {
			t.Errorf("%q: %d rows, want %d", c.names, len(rows), c.rows)
		}
	}
	if boxes, h := legendLayout(r, sty, nil); len(boxes) != 0 || h != 0 {
		t.Errorf("no entries: %d boxes, strip %v", len(boxes), h)
	}
}
