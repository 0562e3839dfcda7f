package scores

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// reference is the score of rank index i of S as the ranker computed it
// before this package: gonum's quantile (AS 241) of (rk - 3/8)/(S + 1/4).
func reference(i, S int) float64 {
	rk := float64(i+i)/2 + 1
	return distuv.UnitNormal.Quantile((rk - 0.375) / (float64(S) + 0.25))
}

// TestFill checks Fill against gonum's quantile, to the bit, for table
// sizes around the kernel's block of four and the central region's ends,
// whole tables and parts of them (independent reference: gonum's
// distuv.UnitNormal.Quantile, Wichura's AS 241).
func TestFill(t *testing.T) {
	sizes := []int{1, 2, 3, 4, 5, 7, 8, 9, 13, 16, 17, 31, 64, 100, 257, 1000, 1023, 5152, 57600, 268800}
	for _, S := range sizes {
		parts := [][2]int{{0, S}}
		if S >= 8 {
			parts = append(parts, [2]int{1, S - 1}, [2]int{S / 3, S / 2}, [2]int{S / 2, S})
		}
		for _, pr := range parts {
			lo, hi := pr[0], pr[1]
			dst := make([]float64, hi-lo)
			Fill(dst, lo, S)
			bad := 0
			for j, got := range dst {
				if want := reference(lo+j, S); math.Float64bits(got) != math.Float64bits(want) {
					if bad++; bad <= 3 {
						t.Errorf("S=%d [%d,%d): z_%d = %v, gonum %v", S, lo, hi, lo+j, got, want)
					}
				}
			}
		}
	}
}

// TestCentralRange checks the central interval against the branch test
// of AS 241 at every index, and that it holds most ranks.
func TestCentralRange(t *testing.T) {
	for _, S := range []int{0, 1, 2, 3, 10, 11, 100, 12345} {
		c0, c1 := centralRange(S)
		for i := range S {
			p := (float64(i) + 1 - 0.375) / (float64(S) + 0.25)
			want := math.Abs(p-0.5) <= 0.425
			if got := i >= c0 && i < c1; got != want {
				t.Errorf("S=%d: index %d central %v, AS 241's branch %v", S, i, got, want)
			}
		}
		if S >= 100 && float64(c1-c0) < 0.8*float64(S) {
			t.Errorf("S=%d: central [%d,%d), under 80 %% of the ranks", S, c0, c1)
		}
	}
}

// TestCentralKernel checks the kernel (when the CPU has it) against
// centralGo, whose operations it follows, to the bit.
func TestCentralKernel(t *testing.T) {
	if !fast() {
		t.Skip("no vector kernel in this build or on this CPU")
	}
	for _, S := range []int{100, 4096, 99991} {
		c0, c1 := centralRange(S)
		n := (c1 - c0) &^ 3
		got, want := make([]float64, n), make([]float64, n)
		centralScores(got, c0, S)
		centralGo(want, c0, S)
		for j := range got {
			if math.Float64bits(got[j]) != math.Float64bits(want[j]) {
				t.Fatalf("S=%d: index %d: kernel %v, Go %v", S, c0+j, got[j], want[j])
			}
		}
	}
}

// BenchmarkFill times a table of the final report of a 6000- and a
// 28000-step SMBHB --until run, by Fill and by gonum's quantile alone.
func BenchmarkFill(b *testing.B) {
	for _, S := range []int{57600, 268800} {
		dst := make([]float64, S)
		b.Run(fmt.Sprintf("fill/S=%d", S), func(b *testing.B) {
			for b.Loop() {
				Fill(dst, 0, S)
			}
		})
		b.Run(fmt.Sprintf("gonum/S=%d", S), func(b *testing.B) {
			for b.Loop() {
				for i := range dst {
					dst[i] = reference(i, S)
				}
			}
		})
	}
}
