package report

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

func TestExclusionCurve(t *testing.T) {
	// y | x is half-normal with scale s(x) = 1 + x, x uniform on [0, 2];
	// the closed-form conditional 95 % limit at x is s(x) Phi^-1(0.975),
	// and within a slice the mixture quantile is solved by bisection on
	// the averaged half-normal CDF erf(y / (sqrt2 s)).
	const n = 200000
	src := rand.New(rand.NewPCG(21, 22))
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = 2 * src.Float64()
		y[i] = (1 + x[i]) * math.Abs(src.NormFloat64())
	}
	edges := LinearEdges(0, 2, 8)
	pts, err := ExclusionCurve(x, y, edges, 0.95, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, pt := range pts {
		cdf := func(v float64) float64 {
			// Average over the slice by the midpoint rule (64 points).
			var c float64
			for j := range 64 {
				s := 1 + pt.Lo + (pt.Hi-pt.Lo)*(float64(j)+0.5)/64
				c += math.Erf(v / (math.Sqrt2 * s))
			}
			return c / 64
		}
		lo, hi := 0.0, 20.0
		for range 100 {
			if m := (lo + hi) / 2; cdf(m) < 0.95 {
				lo = m
			} else {
				hi = m
			}
		}
		want := lo
		// 4 binomial standard errors of the 95 % quantile in the slice;
		// the density there is approximated by the half-normal at the
		// slice centre (distuv).
		s := 1 + pt.X
		f := 2 * distuv.Normal{Mu: 0, Sigma: s}.Prob(want)
		tol := 4 * math.Sqrt(0.95*0.05/float64(pt.N)) / f
		if math.Abs(pt.Limit-want) > tol {
			t.Errorf("slice %.2f: limit %.4f, want %.4f ± %.4f (n=%d)", pt.X, pt.Limit, want, tol, pt.N)
		}
	}
	// Too few samples: the limit is withheld.
	few, err := ExclusionCurve(x[:100], y[:100], edges, 0.95, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, pt := range few {
		if !math.IsNaN(pt.Limit) {
			t.Errorf("slice with %d < %d samples got limit %g", pt.N, MinSlice(0.95), pt.Limit)
		}
	}
	if _, err := ExclusionCurve(x, y, []float64{1, 0}, 0.95, 0); err == nil {
		t.Error("decreasing edges did not fail")
	}
}

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
