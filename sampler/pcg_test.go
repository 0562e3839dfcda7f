package sampler

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestPCGMatchesStdlib checks pcg against math/rand/v2's PCG, the
// reference it is adapted from: the same outputs from the same seeds,
// through Uint64 and through a rand.Rand, the same encoding, and next2
// equal to two steps.
func TestPCGMatchesStdlib(t *testing.T) {
	s1, s2 := streamSeeds(7, streamWalker, 3, 5)
	for _, seed := range [][2]uint64{{0, 0}, {1, 2}, {math.MaxUint64, 0}, {0x9e3779b97f4a7c15, 0xbf58476d1ce4e5b9}, {s1, s2}} {
		p, q := &pcg{seed[0], seed[1]}, rand.NewPCG(seed[0], seed[1])
		for i := range 5000 {
			s := *p
			if got, want := p.Uint64(), q.Uint64(); got != want {
				t.Fatalf("seed %v, draw %d: pcg %#x, rand.PCG %#x", seed, i, got, want)
			}
			if got, want := s.next2(), s.next().next(); got != want {
				t.Fatalf("seed %v, draw %d: next2 %v, next.next %v", seed, i, got, want)
			}
		}
		a, _ := p.MarshalBinary()
		b, _ := q.MarshalBinary()
		if string(a) != string(b) {
			t.Fatalf("seed %v: encoding %x, rand.PCG's %x", seed, a, b)
		}
		var r pcg
		if err := r.UnmarshalBinary(b); err != nil || r != *p {
			t.Fatalf("seed %v: decoding rand.PCG's encoding gave %v, %v; want %v", seed, r, err, *p)
		}
		rp, rq := rand.New(p), rand.New(q)
		for i := range 1000 {
			if got, want := rp.NormFloat64(), rq.NormFloat64(); math.Float64bits(got) != math.Float64bits(want) {
				t.Fatalf("seed %v, normal %d: %v over pcg, %v over rand.PCG", seed, i, got, want)
			}
		}
	}
	var r pcg
	for _, bad := range []string{"", "pcg:", "pcg:0123456789abcde", "gcp:0123456789abcdef", "pcg:0123456789abcdef0"} {
		if err := r.UnmarshalBinary([]byte(bad)); err == nil {
			t.Errorf("UnmarshalBinary(%q) accepted", bad)
		}
	}
}
