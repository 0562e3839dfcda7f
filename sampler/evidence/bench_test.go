package evidence

import "testing"

// benchRungs is a 21-rung (k/20)^5 ladder of 2000 steps x 32 walkers on the
// 6-D Gaussian box: the size of a realistic joint model.
func benchRungs() []Rung {
	return newGaussBox(6, 5).draw(1, powerLadder(20, 5), 2000, 32, 0.5)
}

func BenchmarkIntegrate(b *testing.B) {
	rungs := benchRungs()
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := Integrate(rungs, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkIntegrateSynchronous(b *testing.B) {
	rungs := benchRungs()
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := Integrate(rungs, Options{Synchronous: true}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkRungPass is the per-rung pass over the samples: it must not
// allocate.
func BenchmarkRungPass(b *testing.B) {
	r := benchRungs()[10]
	ws := newWorkspace(r.Steps)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		ws.fill(r, 0.01)
		varOfMean(ws.combine(r.Steps, [3]float64{1, 0.1, 0}), 10)
	}
}
