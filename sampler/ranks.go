package sampler

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// A ranker computes the normal scores of pooled ranks of Vehtari et al.
// (2021), eq. 14, reusing its buffers and the scores of integer ranks
// between calls on samples of one size. It orders the values with a radix
// sort of their bit patterns (the order of cmp.Compare: NaN first, then
// increasing), so its scores equal those of a comparison sort.
type ranker struct {
	size   int
	scores []float64 // score of rank i+1 without ties, for size values
	keys   []uint64
	tmpK   []uint64
	idx    []int32
	tmpI   []int32
	sorted []float64 // the values of the last normalize call, in order
}

// sortKey maps a float64 to a uint64 whose unsigned order is the order of
// cmp.Compare on the floats (NaNs first).
func sortKey(v float64) uint64 {
	if v != v {
		return 0
	}
	b := math.Float64bits(v)
	if b>>63 != 0 {
		return ^b
	}
	return b | 1<<63
}

// normalize writes into z (allocated if too short) the scores
// Phi^-1((r - 3/8)/(S + 1/4)) of the pooled ranks r of v, with average
// ranks for ties, and returns z. Afterwards r.sorted holds v in order.
func (r *ranker) normalize(v, z []float64) []float64 {
	S := len(v)
	if cap(z) < S {
		z = make([]float64, S)
	}
	z = z[:S]
	r.sort(v)
	if r.size != S || r.scores == nil {
		r.size = S
		r.scores = make([]float64, S)
		for i := range r.scores {
			rk := float64(i+i)/2 + 1
			r.scores[i] = distuv.UnitNormal.Quantile((rk - 0.375) / (float64(S) + 0.25))
		}
	}
	s, idx := r.sorted, r.idx
	for i := 0; i < S; {
		j := i
		for j+1 < S && s[j+1] == s[i] {
			j++
		}
		if i == j {
			z[idx[i]] = r.scores[i]
			i++
			continue
		}
		rk := float64(i+j)/2 + 1
		q := distuv.UnitNormal.Quantile((rk - 0.375) / (float64(S) + 0.25))
		for k := i; k <= j; k++ {
			z[idx[k]] = q
		}
		i = j + 1
	}
	return z
}

// sort fills r.idx with the permutation that orders v and r.sorted with
// the ordered values: a least-significant-digit radix sort on 11-bit
// digits of sortKey, skipping digits all keys share.
func (r *ranker) sort(v []float64) {
	S := len(v)
	grow := func(p *[]uint64) { *p = growU64(*p, S) }
	grow(&r.keys)
	grow(&r.tmpK)
	r.idx = growI32(r.idx, S)
	r.tmpI = growI32(r.tmpI, S)
	if cap(r.sorted) < S {
		r.sorted = make([]float64, S)
	}
	r.sorted = r.sorted[:S]
	keys, idx, tk, ti := r.keys, r.idx, r.tmpK, r.tmpI
	for i, x := range v {
		keys[i] = sortKey(x)
		idx[i] = int32(i)
	}
	const bitsPer, passes = 11, 6 // 6 x 11 >= 64 bits
	const mask = 1<<bitsPer - 1
	var count [passes][1 << bitsPer]int
	for _, k := range keys {
		for p := range passes {
			count[p][(k>>(p*bitsPer))&mask]++
		}
	}
	for p := range passes {
		shift := uint(p * bitsPer)
		c := &count[p]
		if c[(keys[0]>>shift)&mask] == S {
			continue
		}
		pos := 0
		for d, n := range c {
			c[d] = pos
			pos += n
		}
		for i, k := range keys {
			d := (k >> shift) & mask
			q := c[d]
			c[d]++
			tk[q] = k
			ti[q] = idx[i]
		}
		keys, tk = tk, keys
		idx, ti = ti, idx
	}
	r.keys, r.tmpK, r.idx, r.tmpI = keys, tk, idx, ti
	for i, j := range idx {
		r.sorted[i] = v[j]
	}
}

func growU64(p []uint64, n int) []uint64 {
	if cap(p) < n {
		return make([]uint64, n)
	}
	return p[:n]
}

func growI32(p []int32, n int) []int32 {
	if cap(p) < n {
		return make([]int32, n)
	}
	return p[:n]
}

// medianSorted is the median of sorted values, the mean of the middle two
// for an even count.
func medianSorted(s []float64) float64 {
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}
