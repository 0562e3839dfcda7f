package sampler

import (
	"math"
	"math/rand/v2"
	"testing"
)

// unitBits returns a draw v with unitFloat(v) = m 2^-53 (m < 2^53) and
// some bits above the 53 that unitFloat ignores.
func unitBits(m uint64) uint64 { return m | 0x5ab<<53 }

// TestStretchTable checks that a stretchTable brackets math.Log of
// stretchZ (the standard library as the reference) at the ends of every
// interval of u and at random u, for scales from barely above 1 to the
// widest it accepts, and that it refuses wider ones: the first interval's
// bracket, 2 ln(1 + (a-1)/1024) in closed form, must be at most 1e-2.
func TestStretchTable(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for _, a := range []float64{1.0001, 1.5, 2, 3, 5, 6} {
		zt := newStretchTable(a)
		if zt == nil {
			t.Fatalf("a = %v: no table", a)
		}
		ms := []uint64{0, 1, 1<<53 - 1}
		for k := range uint64(1 << zTabBits) {
			lo := k << (53 - zTabBits)
			ms = append(ms, lo, lo+1, lo+(1<<(53-zTabBits))-1)
		}
		for range 100000 {
			ms = append(ms, r.Uint64()>>11)
		}
		widest := 0.0
		for _, m := range ms {
			v := unitBits(m)
			z := stretchZ(a, unitFloat(v))
			k := zBin(v)
			lo, hi := zt.ln[k]-zt.slack, zt.ln[k+1]+zt.slack
			if l := math.Log(z); !(lo <= l && l <= hi) {
				t.Fatalf("a = %v, u = %v: ln z = %v outside [%v, %v]", a, unitFloat(v), l, lo, hi)
			}
			widest = math.Max(widest, hi-lo)
		}
		if want := 2*math.Log(1+(a-1)/1024) + 2*zt.slack; widest > want*(1+1e-9) {
			t.Errorf("a = %v: widest bracket %v, want at most %v", a, widest, want)
		}
	}
	for _, a := range []float64{6.2, 10, 1e3, 1e200} {
		if 2*math.Log(1+(a-1)/1024) <= 1e-2 {
			t.Fatalf("a = %v is not a scale the table must refuse", a)
		}
		if newStretchTable(a) != nil {
			t.Errorf("a = %v: a table whose brackets are wider than 1e-2", a)
		}
	}
}

// TestUTable checks that a uTable brackets math.Log(unitFloat(v)) (the
// standard library as the reference) at every power of two, next to them
// and at random draws, within ln(1 + 2^-uTabBits) plus the slack, and
// gives NaN for u = 0.
func TestUTable(t *testing.T) {
	ut := newUTable()
	var ms []uint64
	for e := range 53 {
		b := uint64(1) << e
		ms = append(ms, b, b+1, 2*b-1, b|b>>1)
	}
	r := rand.New(rand.NewPCG(5, 6))
	for range 200000 {
		ms = append(ms, r.Uint64()>>11, r.Uint64()>>(11+r.IntN(53)))
	}
	width := math.Log1p(1.0/(1<<uTabBits)) + 2*ut.slack
	for _, m := range ms {
		if m == 0 {
			continue
		}
		v := unitBits(m)
		lo, hi := ut.bracket(v)
		if l := math.Log(unitFloat(v)); !(lo <= l && l <= hi) {
			t.Fatalf("u = %v: ln u = %v outside [%v, %v]", unitFloat(v), l, lo, hi)
		}
		if hi-lo > width*(1+1e-9) {
			t.Fatalf("u = %v: bracket %v wide, want at most %v", unitFloat(v), hi-lo, width)
		}
	}
	if lo, hi := ut.bracket(unitBits(0)); !math.IsNaN(lo) || !math.IsNaN(hi) {
		t.Errorf("u = 0: bracket [%v, %v], want NaN", lo, hi)
	}
}

// TestStretchDecisionsTable checks the decision passes of stretchRange
// with a stretchTable and a uTable against refMetropolis with
// lnA = (c ln z + post) - lpost, on stretch factors z = stretchZ(a, u)
// whose ln A is put within a few ulp of 0 and of ln u' for the u' about
// to be drawn, where the brackets cannot decide: same outcome, same
// draws.
func TestStretchDecisionsTable(t *testing.T) {
	tab, ut := newLnTable(), newUTable()
	r := rand.New(rand.NewPCG(7, 8))
	n := 0
	for _, a := range []float64{1.0001, 2, 5} {
		zt := newStretchTable(a)
		for _, c := range []float64{0, 1, 2, 6} {
			for seed := range uint64(300) {
				v := r.Uint64()
				z := stretchZ(a, unitFloat(v))
				p, q := pcgPair(seed)
				peek := *q
				u := rand.New(&peek).Float64()
				for _, shift := range []float64{0, math.Log(u), -0.3, 0.3} {
					for ulps := -2; ulps <= 2; ulps++ {
						post := -c*math.Log(z) + shift
						for range max(ulps, -ulps) {
							post = math.Nextafter(post, math.Inf(ulps))
						}
						const lpost = 0.5
						post += lpost
						lnA := float64(float64(c*math.Log(z))+post) - lpost
						b := *q
						want := refMetropolis(rand.New(&b), lnA)
						pcgs, lps := []pcg{*p}, []float64{lpost}
						// beta = 1, ln prior = 0: post = 0 + ln L = ln L.
						ps := []proposal{{z: z, k: zBin(v), lp: 0, ll: post, ok: true}}
						qu, kept := stretchFirst(tab, zt, pcgs, c, 1, lps, ps, make([]int, 1), make([]int, 1))
						kept = stretchSecond(ut, pcgs, c, lps, ps, qu, kept)
						if got := len(kept) == 1; got != want || !samePCG(&pcgs[0], &b) {
							t.Fatalf("a = %v, c = %v, z = %v, post = %v: accepted %v, reference %v (ln A = %v, ln u = %v); same draws: %v",
								a, c, z, post, got, want, lnA, math.Log(u), samePCG(&pcgs[0], &b))
						}
						n++
					}
				}
			}
		}
	}
	t.Logf("%d decisions", n)
}

// TestSwapBelowMatchesLog: the swap decision by uTable's bracket takes the
// same draw and gives the same answer as math.Log(u) < lnA with u from
// math/rand/v2's Rand.Float64 over the same PCG, for lnA random, exactly
// at ln u, one ulp either side of it, and NaN and infinite.
func TestSwapBelowMatchesLog(t *testing.T) {
	e := &Ensemble{uTab: newUTable(), swapPCG: rand.NewPCG(9, 10)}
	ref := rand.New(rand.NewPCG(9, 10))
	peek := rand.NewPCG(9, 10)
	r := rand.New(rand.NewPCG(11, 12))
	for i := range 300000 {
		lu := math.Log(rand.New(peek).Float64()) // the next draw's ln u
		var lnA float64
		switch i % 7 {
		case 0:
			lnA = lu
		case 1:
			lnA = math.Nextafter(lu, math.Inf(1))
		case 2:
			lnA = math.Nextafter(lu, math.Inf(-1))
		case 3:
			lnA = []float64{math.NaN(), math.Inf(-1), math.Inf(1), 0, -1e-300}[r.IntN(5)]
		default:
			lnA = -30 * r.Float64()
		}
		want := math.Log(ref.Float64()) < lnA
		if got := e.swapBelow(lnA); got != want {
			t.Fatalf("draw %d: lnA = %v, ln u = %v: %v, want %v", i, lnA, lu, got, want)
		}
	}
	if e.swapPCG.Uint64() != ref.Uint64() {
		t.Fatal("swapBelow took a different number of draws")
	}
}
