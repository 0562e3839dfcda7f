package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

func benchSamples(n int) (x, y []float64) {
	return correlated(rand.New(rand.NewPCG(51, 52)), n, 1, 2, 0.7, false)
}

func BenchmarkQuantile(b *testing.B) {
	x, _ := benchSamples(100000)
	s := sortedFinite(x)
	b.ReportAllocs()
	for b.Loop() {
		_ = Quantile(s, 0.975)
	}
}

func BenchmarkHDI(b *testing.B) {
	x, _ := benchSamples(100000)
	s := sortedFinite(x)
	b.ReportAllocs()
	for b.Loop() {
		_, _ = HDI(s, 0.68)
	}
}

func BenchmarkDensity2DAt(b *testing.B) {
	x, y := benchSamples(100000)
	inf := [2]float64{math.Inf(-1), math.Inf(1)}
	d, err := KDE2D(x, y, inf, inf, Options2D{})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		_ = d.At(0.3, -0.2)
	}
}

func BenchmarkMarginalize(b *testing.B) {
	x, _ := benchSamples(100000)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Marginalize("x", x, [2]float64{math.Inf(-1), math.Inf(1)}, Options1D{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkKDE2D(b *testing.B) {
	x, y := benchSamples(100000)
	bx := [2]float64{0, math.Inf(1)}
	for i := range x {
		x[i] = math.Abs(x[i])
	}
	inf := [2]float64{math.Inf(-1), math.Inf(1)}
	b.ReportAllocs()
	for b.Loop() {
		d, err := KDE2D(x, y, bx, inf, Options2D{})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := d.Levels([]float64{0.68, 0.95}); err != nil {
			b.Fatal(err)
		}
	}
}
