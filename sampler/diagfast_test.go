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

// TestFoldScoreCases checks the scores of the folded draws |x - median|,
// merged from the order of the draws, against the reference ranker of
// diagref_test.go ranking the folded draws afresh (the definition,
// Vehtari et al. 2021, eq. 14), to the bit: draws symmetric about the
// median (folded ties across the two runs), repeats, all equal, an even
// and odd number of draws, folded values that overflow to +Inf, and
// centres other than the median.
func TestFoldScoreCases(t *testing.T) {
	r := rand.New(rand.NewPCG(13, 14))
	cases := map[string]func(i int) float64{
		"symmetric": func(i int) float64 { return float64(i%7) - 3 },
		"repeats":   func(i int) float64 { return math.Round(r.NormFloat64() * 4) },
		"normal":    func(int) float64 { return r.NormFloat64() },
		"constant":  func(int) float64 { return -1.5 },
		"overflow": func(i int) float64 {
			return []float64{-math.MaxFloat64, math.MaxFloat64 / 2, math.MaxFloat64 / 2, math.MaxFloat64 / 4}[i%4]
		},
		"skewed": func(i int) float64 { return map[bool]float64{true: 5}[i%3 == 0] + r.Float64() },
		"far": func(i int) float64 {
			return map[bool]float64{true: math.MaxFloat64 / 2, false: -math.MaxFloat64}[i == 0]
		},
	}
	for name, g := range cases {
		for _, n := range []int{1, 2, 3, 10, 11, 1000, 1001} {
			v := make([]float64, n)
			for i := range v {
				v[i] = g(i)
			}
			var rk ranker
			rk.normalize(v, nil)
			// About the median, as vehtari folds, and about other centres
			// (the merge does not rely on the median's being central).
			for _, med := range []float64{rk.median(), rk.at(0), rk.at(n - 1), rk.at(n / 3)} {
				if math.IsInf(med, 0) { // a median overflowing (far): nothing to merge about
					continue
				}
				rk.normalize(v, nil) // foldScore consumes the order
				f := make([]float64, n)
				for i, x := range v {
					f[i] = math.Abs(x - med)
				}
				var ref refRanker
				want := ref.normalize(f, nil)
				got := make([]float64, n)
				if !rk.foldScore(got, med) {
					t.Fatalf("%s n=%d: the merge refused finite draws (centre %v)", name, n, med)
				}
				for i := range got {
					if !sameFloat(got[i], want[i]) {
						t.Fatalf("%s n=%d centre %v: folded score of v[%d] = %v (folded %v): %v, want %v", name, n, med, i, v[i], f[i], got[i], want[i])
					}
				}
			}
		}
	}
}
