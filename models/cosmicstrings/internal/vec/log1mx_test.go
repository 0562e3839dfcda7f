package vec

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestLogTableRun: Run (AVX2 four at a time where the processor has it)
// agrees to the bit with its scalar arithmetic, element by element, on
// runs of every length 0..40 whose x = c invF descend from above 1 (the
// -Inf prefix) across the 2^-10 switch, where Run must stop; and it is
// within 4 ulp (2^-50 relative) of the standard library's math.Log1p(-x)
// (accurate to about one ulp).
func TestLogTableRun(t *testing.T) {
	var tab LogTable
	tab.Init()
	r := rand.New(rand.NewPCG(4, 40))
	for n := 0; n <= 40; n++ {
		for trial := range 50 {
			// ln x uniform in [ln 2^-12, ln 1.5]: a few above 1, a few
			// below the switch, and the rest in between; sometimes a run
			// of x just below 1.
			xs := make([]float64, n)
			for k := range xs {
				xs[k] = math.Exp(math.Log(0x1p-12) + (math.Log(1.5)-math.Log(0x1p-12))*r.Float64())
				if trial%5 == 0 {
					xs[k] = 1 - math.Ldexp(r.Float64(), -r.IntN(50))
				}
			}
			slices.Sort(xs)
			slices.Reverse(xs) // invF does not increase
			const c = 1.0
			invF := append([]float64(nil), xs...)
			dst := make([]float64, n)
			got := tab.Run(dst, invF, c)
			want := 0
			for want < n && xs[want] >= Log1mxSwitch {
				want++
			}
			if got != want {
				t.Fatalf("n=%d: Run did %d, want %d (x = %v)", n, got, want, xs)
			}
			for k := range got {
				x := c * invF[k]
				ref := math.Inf(-1)
				if x < 1 {
					ref = tab.log1mx(x)
				}
				if math.Float64bits(dst[k]) != math.Float64bits(ref) {
					t.Fatalf("n=%d k=%d x=%.17g: %.17g, scalar %.17g", n, k, x, dst[k], ref)
				}
				if x < 1 {
					lp := math.Log1p(-x)
					if e := math.Abs(dst[k] - lp); !(e <= 0x1p-50*math.Abs(lp)) {
						t.Errorf("x=%.17g: %.17g, math.Log1p(-x) = %.17g", x, dst[k], lp)
					}
				}
			}
		}
	}
}

// BenchmarkLogTableRun times Run on 30 frequencies all in the table's
// range.
func BenchmarkLogTableRun(b *testing.B) {
	var tab LogTable
	tab.Init()
	invF, dst := make([]float64, 30), make([]float64, 30)
	for k := range invF {
		invF[k] = 1 / float64(k+2)
	}
	for _, name := range []string{"dispatch", "scalar"} {
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				if name == "dispatch" {
					tab.Run(dst, invF, 0.9)
					continue
				}
				for k, y := range invF {
					dst[k] = tab.log1mx(0.9 * y)
				}
			}
		})
	}
}

func ExampleLogTable_Run() {
	var tab LogTable
	tab.Init()
	invF := []float64{1, 0.5, 0.25, 0.125, 1e-4}
	dst := make([]float64, len(invF))
	n := tab.Run(dst, invF, 1) // x = 1 invF
	fmt.Printf("%d %v %.12f %.12f\n", n, dst[0], dst[1], dst[3])
	// Output: 4 -Inf -0.693147180560 -0.133531392625
}
