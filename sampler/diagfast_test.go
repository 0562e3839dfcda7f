package sampler

import (
	"cmp"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestRankerSortStable checks the ranker's order (bucket sort, with its
// radix-sort fallbacks) against Go's slices.SortStableFunc ordering the
// indices by sortKey: the same positions hold the same indices, on
// distributions that take every route: spread, heavy-tailed, crowded
// into few buckets, discrete, all equal, of both signed zeros, within a
// few ulps, and non-finite.
func TestRankerSortStable(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	gen := map[string]func(i int) float64{
		"normal":   func(int) float64 { return r.NormFloat64() },
		"repeats":  func(i int) float64 { return math.Round(r.NormFloat64()*1e3) / 1e3 },
		"cauchy":   func(int) float64 { return math.Tan(math.Pi * (r.Float64() - 0.5)) },
		"outlier":  func(i int) float64 { return r.NormFloat64() + map[bool]float64{true: 1e12}[i == 17] },
		"discrete": func(int) float64 { return float64(r.IntN(3)) },
		"twolevel": func(i int) float64 { return float64(i%2) + 1e-9*float64(r.IntN(2)) },
		"constant": func(int) float64 { return 2.5 },
		"zeros":    func(int) float64 { return math.Copysign(0, r.Float64()-0.5) },
		"ulps":     func(int) float64 { return math.Float64frombits(math.Float64bits(1) + uint64(r.IntN(5))) },
		"tiny":     func(int) float64 { return math.Float64frombits(uint64(r.IntN(1000))) },
		"nonfinite": func(i int) float64 {
			switch i % 97 {
			case 0:
				return math.NaN()
			case 1:
				return math.Inf(1)
			}
			return r.NormFloat64()
		},
		"huge": func(i int) float64 { return math.MaxFloat64 * (2*r.Float64() - 1) },
	}
	for name, g := range gen {
		for _, n := range []int{bucketMin - 1, bucketMin, 50001} {
			v := make([]float64, n)
			for i := range v {
				v[i] = g(i)
			}
			want := make([]int32, n)
			for i := range want {
				want[i] = int32(i)
			}
			slices.SortStableFunc(want, func(a, b int32) int { return cmp.Compare(sortKey(v[a]), sortKey(v[b])) })
			var rk ranker
			rk.load(n, func(i int) float64 { return v[i] })
			rk.sort(nil)
			for p := range n {
				if rk.idx[p] != want[p] || rk.keys[p] != sortKey(v[want[p]]) {
					t.Fatalf("%s n=%d: position %d holds index %d (key %x), want %d (key %x)", name, n, p, rk.idx[p], rk.keys[p], want[p], sortKey(v[want[p]]))
				}
			}
		}
	}
}

// TestSortKeyOrder checks sortKey and keyValue against cmp.Compare (Go's
// order of floats: NaN first) and each other on special values.
func TestSortKeyOrder(t *testing.T) {
	vals := []float64{math.NaN(), math.Inf(-1), -math.MaxFloat64, -1, -math.SmallestNonzeroFloat64, math.Copysign(0, -1), 0, math.SmallestNonzeroFloat64, 1, math.MaxFloat64, math.Inf(1)}
	for _, a := range vals {
		if b := keyValue(sortKey(a)); !sameFloat(a, b) || math.Signbit(a) != math.Signbit(b) && !math.IsNaN(a) {
			t.Errorf("keyValue(sortKey(%v)) = %v", a, b)
		}
		for _, b := range vals {
			want := cmp.Compare(a, b)
			if a == 0 && b == 0 { // signed zeros: cmp.Compare ties them, the keys put -0 first
				want = cmp.Compare(math.Float64bits(b), math.Float64bits(a))
			}
			if got := cmp.Compare(sortKey(a), sortKey(b)); got != want {
				t.Errorf("order of keys of %v, %v: %d, want %d", a, b, got, want)
			}
		}
	}
}
