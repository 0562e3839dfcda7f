//go:build !purego

package acf

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"golang.org/x/sys/cpu"
)

// A kernel32 is a 32-lag assembly kernel and the least series length it
// takes.
type kernel32 struct {
	name string
	min  int
	f    func(d, e *float64, n int, s *[32]float64)
}

// kernels32 are the 32-lag assembly kernels this CPU can run.
func kernels32() []kernel32 {
	var ks []kernel32
	if cpu.X86.HasAVX2 {
		ks = append(ks, kernel32{"avx2", 16, sums32avx2})
	}
	if cpu.X86.HasAVX512F {
		ks = append(ks, kernel32{"avx512", 24, sums32avx512})
	}
	return ks
}

// TestKernels32 checks each 32-lag assembly kernel the CPU can run, not
// only the one block32 picks, against the defining sum accumulated in t
// order, to the bit, from its shortest series on (where its prologue and
// epilogue meet).
func TestKernels32(t *testing.T) {
	ks := kernels32()
	if len(ks) == 0 {
		t.Skip("no 32-lag kernel on this CPU")
	}
	r := rand.New(rand.NewPCG(9, 10))
	for _, k := range ks {
		for _, n := range []int{16, 17, 23, 24, 25, 31, 32, 33, 40, 48, 100, 1001} {
			if n < k.min {
				continue
			}
			d := make([]float64, n+31)
			for i := range d {
				d[i] = r.NormFloat64()
			}
			var s [32]float64
			k.f(&d[0], &d[0], n, &s)
			for i := range 32 {
				want := 0.0
				for t := range n {
					want += d[t] * d[t+i]
				}
				if s[i] != want {
					t.Fatalf("%s, n=%d: lag %d = %v, want %v", k.name, n, i, s[i], want)
				}
			}
		}
	}
}

// BenchmarkKernels32 times each 32-lag kernel on a series of the length a
// final report's thinned walker series typically has.
func BenchmarkKernels32(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{300, 1800} {
		d := make([]float64, n+31)
		for i := range d {
			d[i] = r.NormFloat64()
		}
		for _, k := range kernels32() {
			b.Run(fmt.Sprintf("%s/n=%d", k.name, n), func(b *testing.B) {
				var s [32]float64
				for b.Loop() {
					k.f(&d[0], &d[0], n, &s)
				}
			})
		}
	}
}
