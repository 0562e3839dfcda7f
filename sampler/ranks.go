package sampler

import (
	"math"
	"unsafe"

	"gonum.org/v1/gonum/stat/distuv"

	"tautline/sampler/internal/scores"
)

// A ranker computes the normal scores of pooled ranks of Vehtari et al.
// (2021), eq. 14,
//
//	z = Phi^-1((r - 3/8)/(S + 1/4)),
//
// with average ranks r for ties, reusing its buffers and the scores of
// untied ranks between calls on samples of one size. It orders the values
// by their bit patterns (the order of cmp.Compare: NaN first, then
// increasing), with a stable bucket sort by value for many finite values
// and a radix sort otherwise, so its scores equal those of a comparison
// sort, and keeps the ordered values as their sort keys (no copy of the
// values).
type ranker struct {
	own  scoreTable
	tab  *scoreTable // if not nil, shared scores set up for the sizes ranked
	keys []uint64    // sortKey of the values, in order after sort
	idx  []int32     // idx[p] is the index of the value at position p
	tmpI []int32
	tmpK []uint64 // the sort's second key buffer
	// minK and maxK are the least and greatest loaded keys.
	minK, maxK uint64
	cnt        [2][]int32 // bucketSort's bucket ends, per round
}

// A scoreTable holds the normal scores of the untied ranks of size values,
// scores[i] for rank i+1.
type scoreTable struct {
	size   int
	scores []float64
}

// set makes t the table for S values, filling it on two goroutines with
// par (on the crew c, which may be nil).
func (t *scoreTable) set(S int, par bool, c *crew) {
	if t.size == S && t.scores != nil {
		return
	}
	t.size = S
	t.scores = growF64(t.scores, S)
	split(c, par && S >= parMin, S, func(lo, hi int) {
		// Equal to the bit to the quantile of rank i+1 of tiedScore.
		scores.Fill(t.scores[lo:hi], lo, S)
	})
}

// scores returns the scores of untied ranks for S values: the shared
// table if it is for S, else the ranker's own.
func (r *ranker) scores(S int) []float64 {
	if r.tab != nil && r.tab.size == S && r.tab.scores != nil {
		return r.tab.scores
	}
	r.own.set(S, false, nil)
	return r.own.scores
}

// sortKey maps a float64 to a uint64 whose unsigned order is the order of
// cmp.Compare on the floats (NaNs first, all mapped to 0): the bits of a
// negative float inverted, of a positive one with the sign bit set.
func sortKey(v float64) uint64 {
	if v != v {
		return 0
	}
	b := math.Float64bits(v)
	return b ^ (uint64(int64(b)>>63) | 1<<63) // without a branch on the sign
}

// keyValue inverts sortKey (a NaN key gives a NaN).
func keyValue(k uint64) float64 {
	return math.Float64frombits(k ^ ((k>>63 - 1) | 1<<63))
}

// load sets the values to rank: n of them, value i being v(i).
func (r *ranker) load(n int, v func(i int) float64) {
	r.keys = growU64(r.keys, n)
	minK, maxK := uint64(math.MaxUint64), uint64(0)
	for i := range n {
		k := sortKey(v(i))
		r.keys[i] = k
		minK, maxK = min(minK, k), max(maxK, k)
	}
	r.minK, r.maxK = minK, maxK
}

// loadRuns is load of the values x[j*n+(skip+s)*every] for runs j < runs
// and s < m, value i = j*m+s.
func (r *ranker) loadRuns(x []float64, runs, n, skip, every, m int) {
	r.keys = growU64(r.keys, runs*m)
	minK, maxK := uint64(math.MaxUint64), uint64(0)
	for j := range runs {
		keys := r.keys[j*m : (j+1)*m]
		if every == 1 {
			for s, v := range x[j*n+skip : j*n+skip+m] {
				k := sortKey(v)
				keys[s] = k
				minK, maxK = min(minK, k), max(maxK, k)
			}
			continue
		}
		for s := range keys {
			k := sortKey(x[j*n+(skip+s)*every])
			keys[s] = k
			minK, maxK = min(minK, k), max(maxK, k)
		}
	}
	r.minK, r.maxK = minK, maxK
}

// at returns the value at position p of the order.
func (r *ranker) at(p int) float64 { return keyValue(r.keys[p]) }

// median is the median of the ordered values, the mean of the middle two
// for an even count.
func (r *ranker) median() float64 {
	n := len(r.keys)
	if n%2 == 1 {
		return r.at(n / 2)
	}
	return (r.at(n/2-1) + r.at(n/2)) / 2
}

// quantile is numeric.Quantile (type 7) of the ordered values.
func (r *ranker) quantile(p float64) float64 {
	n := len(r.keys)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	h := p * float64(n-1)
	if h <= 0 {
		return r.at(0)
	}
	j := int(h)
	if j >= n-1 {
		return r.at(n - 1)
	}
	return r.at(j) + (h-float64(j))*(r.at(j+1)-r.at(j))
}

// normalize writes into z (allocated if too short) the scores of the
// pooled ranks of v and returns z; afterwards the ranker holds v in order.
func (r *ranker) normalize(v, z []float64) []float64 {
	S := len(v)
	if cap(z) < S {
		z = make([]float64, S)
	}
	z = z[:S]
	r.load(S, func(i int) float64 { return v[i] })
	r.sort(nil)
	r.score(z)
	return z
}

// sort orders the loaded values; spare, if at least as long as the
// values, may be overwritten as the sort's second key buffer.
func (r *ranker) sort(spare []uint64) {
	n := len(r.keys)
	if len(spare) < n {
		r.tmpK = growU64(r.tmpK, n)
		spare = r.tmpK
	}
	spare = spare[:n]
	r.tmpI = growI32(r.tmpI, n)
	r.idx = growI32(r.idx, n)
	if n >= bucketMin && r.bucketSort(r.keys, r.idx, spare, r.tmpI) {
		return
	}
	for i := range r.idx {
		r.idx[i] = int32(i)
	}
	sortPairs(r.keys, r.idx, spare, r.tmpI)
}

// bucketMin is the number of values from which sort distributes them
// into buckets by value before sorting each bucket.
const bucketMin = 1 << 12

// coarseLoad and fineLoad are the mean numbers of values per bucket of
// the two rounds of bucketSort.
const (
	coarseLoad = 512
	fineLoad   = 1
)

// insertMax is the largest bucket bucketSort orders by insertion.
const insertMax = 48

// A bucketing maps the finite values lo <= v <= hi to nb buckets of equal
// width, (v - lo) * nb/(hi - lo) truncated: monotone in v, since each
// operation rounds monotonically.
type bucketing struct {
	lo, scale float64
	last      int
}

// newBucketing returns the bucketing of the keys, of least and greatest
// minK and maxK, into about n/load buckets, and false if the keys are not
// those of finite values of a positive range that the buckets resolve.
func newBucketing(minK, maxK uint64, n, load int) (bucketing, bool) {
	lo, hi := keyValue(minK), keyValue(maxK)
	nb := max(n/load, 1)
	scale := float64(nb) / (hi - lo)
	if minK == 0 || math.IsInf(hi-lo, 0) || !(hi > lo) || math.IsInf(scale, 0) {
		// NaNs, infinities, a range beyond the floats, no range (zeros
		// of both signs) or too little of it for the scale.
		return bucketing{}, false
	}
	return bucketing{lo: lo, scale: scale, last: nb - 1}, true
}

// keyRange returns the least and greatest of the keys.
func keyRange(keys []uint64) (minK, maxK uint64) {
	minK, maxK = keys[0], keys[0]
	for _, k := range keys {
		minK = min(minK, k)
		maxK = max(maxK, k)
	}
	return minK, maxK
}

func (g bucketing) of(k uint64) int {
	return min(int((keyValue(k)-g.lo)*g.scale), g.last)
}

// scatter writes the pairs (keys[i], idx[i]) (with idx nil, (keys[i], i))
// into dk, di bucket by bucket in order, stably, and returns the end of
// every bucket (in cnt, which it grows).
func (g bucketing) scatter(keys []uint64, idx []int32, dk []uint64, di []int32, cnt []int32) []int32 {
	nb := g.last + 1
	cnt = growI32(cnt, nb+1)
	clear(cnt)
	for _, k := range keys {
		cnt[g.of(k)+1]++
	}
	for b := 1; b <= nb; b++ {
		cnt[b] += cnt[b-1]
	}
	// cnt[b] is now the start of bucket b; after the loop, its end.
	if idx == nil {
		for i, k := range keys {
			b := g.of(k)
			p := cnt[b]
			cnt[b] = p + 1
			dk[p] = k
			di[p] = int32(i)
		}
		return cnt[:nb]
	}
	for i, k := range keys {
		b := g.of(k)
		p := cnt[b]
		cnt[b] = p + 1
		dk[p] = k
		di[p] = idx[i]
	}
	return cnt[:nb]
}

// bucketSort sorts the loaded keys (least and greatest r.minK and r.maxK)
// in increasing order, stably, setting idx[p] to the index of the value
// at position p, with tk and ti (as long as keys) as its second buffers,
// and returns true; it returns false, having done nothing, when the keys
// are not those of finite values of positive range. The values are
// distributed into buckets of equal width, ordered since the bucketing is
// monotone, each small enough to fit in the first-level cache, and each
// of those in turn into buckets of a few values (a bucket can only hold
// more when its values crowd together: those are radix sorted), which
// insertion then orders.
func (r *ranker) bucketSort(keys []uint64, idx []int32, tk []uint64, ti []int32) bool {
	g, ok := newBucketing(r.minK, r.maxK, len(keys), coarseLoad)
	if !ok {
		return false
	}
	r.cnt[0] = g.scatter(keys, nil, tk, ti, r.cnt[0])
	start := 0
	for _, e := range r.cnt[0] {
		end := int(e)
		k, i, sk, si := keys[start:end], idx[start:end], tk[start:end], ti[start:end]
		start = end
		if len(k) <= insertMax {
			copy(k, sk)
			copy(i, si)
			insertionSort(k, i)
			continue
		}
		minK, maxK := keyRange(sk)
		f, ok := newBucketing(minK, maxK, len(sk), fineLoad)
		if !ok {
			copy(k, sk)
			copy(i, si)
			sortPairs(k, i, sk, si)
			continue
		}
		r.cnt[1] = f.scatter(sk, si, k, i, r.cnt[1])
		s := 0
		for _, e := range r.cnt[1] {
			if int(e)-s > insertMax {
				sortPairs(k[s:e], i[s:e], sk[s:e], si[s:e])
			}
			s = int(e)
		}
		// The buckets being in order, no value moves out of its own.
		insertionSort(k, i)
	}
	return true
}

// insertionSort sorts keys in increasing order, permuting idx alike,
// stably.
func insertionSort(keys []uint64, idx []int32) {
	for j := 1; j < len(keys); j++ {
		k, x := keys[j], idx[j]
		i := j - 1
		for ; i >= 0 && keys[i] > k; i-- {
			keys[i+1], idx[i+1] = keys[i], idx[i]
		}
		keys[i+1], idx[i+1] = k, x
	}
}

// tiedScore is the score of the ranks i+1 .. j+1 of S values, sc being
// the scores of untied ranks.
func tiedScore(sc []float64, i, j, S int) float64 {
	if i == j {
		return sc[i]
	}
	rk := float64(i+j)/2 + 1
	return distuv.UnitNormal.Quantile((rk - 0.375) / (float64(S) + 0.25))
}

// score writes the score of every loaded, ordered value into z[i] for
// its index i, with average ranks for equal values.
func (r *ranker) score(z []float64) {
	S := len(r.keys)
	sc := r.scores(S)
	keys, idx := r.keys, r.idx
	for i := 0; i < S; {
		vi := keyValue(keys[i])
		j := i
		for j+1 < S && keyValue(keys[j+1]) == vi {
			j++
		}
		if i == j {
			z[idx[i]] = sc[i]
			i++
			continue
		}
		q := tiedScore(sc, i, j, S)
		for k := i; k <= j; k++ {
			z[idx[k]] = q
		}
		i = j + 1
	}
}

// foldScore writes into z[i] the score of |v_i - med| among the folded
// values, for the ordered values v of the ranker, and reports whether it
// could: the folded values are ordered by merging those below med
// (decreasing) with those above (increasing), which needs finite values;
// it leaves z alone and returns false otherwise. Rounding is monotone, so
// the merge orders the folded values exactly as sorting them would. When
// it returns true it has consumed the order: the ranker holds no values
// until the next load.
func (r *ranker) foldScore(z []float64, med float64) bool {
	S := len(r.keys)
	if S == 0 || math.IsNaN(med) || math.IsInf(med, 0) {
		return false
	}
	if lo, hi := r.at(0), r.at(S-1); math.IsNaN(lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return false
	}
	sc := r.scores(S)
	keys, idx := r.keys, r.idx
	// p0 is the first position whose value is at least med.
	p0, hi := 0, S
	for p0 < hi {
		m := int(uint(p0+hi) >> 1)
		if keyValue(keys[m]) < med {
			p0 = m + 1
		} else {
			hi = m
		}
	}
	// Merge the run below med, read downwards, with the run above, into
	// the order of the folded values: order[rank] is the position of the
	// draw of that rank. The folded values are computed first (f[p] for
	// position p, in place of the keys, which nothing reads after this),
	// so that the merge waits on loads only, and it chooses without a
	// branch (which is as unpredictable as the draws). Equal folded
	// values, which tie, are taken from the run above first: the order is
	// then strict, so the merge can run from both ends at once, two
	// independent chains meeting at rank h. From the front, fl and fu are
	// the folded values at the heads l and u (+Inf past the end, with the
	// runs' lengths deciding which is exhausted); from the back, bl and bu
	// those at the tails a and b (-Inf past the end).
	r.tmpI = growI32(r.tmpI, S)
	f, order := asFloats(keys), r.tmpI
	for p, k := range keys {
		f[p] = math.Abs(keyValue(k) - med)
	}
	inf := math.Inf(1)
	l, u := p0-1, p0
	a, b := 0, S-1
	fl, fu, bl, bu := inf, inf, -inf, -inf
	if l >= 0 {
		fl, bl = f[l], f[a]
	}
	if u < S {
		fu, bu = f[u], f[b]
	}
	h := S / 2
	for rank := range S - h {
		end := S - 1 - rank
		up := 0 // take the run below from the back
		if bl < bu {
			up = 1
		}
		order[end] = int32(a ^ ((a ^ b) & -up)) // b if up, else a
		a += 1 - up
		b -= up
		bl, bu = -inf, -inf
		if a < p0 {
			bl = f[a]
		}
		if b >= p0 {
			bu = f[b]
		}
		if rank >= h {
			break
		}
		down := 0 // take the run below from the front
		if fl < fu {
			down = 1
		}
		if u >= S {
			down = 1
		}
		order[rank] = int32(u ^ ((u ^ l) & -down)) // l if down, else u
		l -= down
		u += 1 - down
		fl, fu = inf, inf
		if l >= 0 {
			fl = f[l]
		}
		if u < S {
			fu = f[u]
		}
	}
	for i := 0; i < S; {
		g := f[order[i]]
		j := i
		for j+1 < S && f[order[j+1]] == g {
			j++
		}
		if i == j {
			z[idx[order[i]]] = sc[i]
			i++
			continue
		}
		q := tiedScore(sc, i, j, S)
		for k := i; k <= j; k++ {
			z[idx[order[k]]] = q
		}
		i = j + 1
	}
	return true
}

// asFloats is k's memory as float64 values (the sizes and alignments of
// the two types agree).
func asFloats(k []uint64) []float64 {
	if len(k) == 0 {
		return nil
	}
	return unsafe.Slice((*float64)(unsafe.Pointer(&k[0])), len(k))
}

// sortPairs sorts keys in increasing order, permuting idx alike: a
// least-significant-digit radix sort on 11-bit digits, skipping digits all
// keys share, with tk and ti (as long as keys) as its second buffers.
func sortPairs(keys []uint64, idx []int32, tk []uint64, ti []int32) {
	S := len(keys)
	if S == 0 {
		return
	}
	orig := keys
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
	if &keys[0] != &orig[0] {
		copy(tk, keys)
		copy(ti, idx)
	}
}

// growU64, growI32 and growF64 return p resized to n values, reallocated
// (contents lost) if its capacity is short, to at least twice the old
// capacity: the diagnostics' buffers grow in steps (a final report's
// refinement of tau thins the chain less at each pass), and freshly
// allocated memory costs about 0.5 ms per MB to touch here, so that a
// buffer reallocated at every step would be touched anew each time (see
// growth).
func growU64(p []uint64, n int) []uint64 {
	if cap(p) < n {
		return make([]uint64, n, growth(cap(p), n))
	}
	return p[:n]
}

func growI32(p []int32, n int) []int32 {
	if cap(p) < n {
		return make([]int32, n, growth(cap(p), n))
	}
	return p[:n]
}

func growF64(p []float64, n int) []float64 {
	if cap(p) < n {
		return make([]float64, n, growth(cap(p), n))
	}
	return p[:n]
}

// growth is the capacity a buffer of capacity c reallocated for n > c
// values gets: n, or twice c if that is more. Only the pages written are
// touched, so the spare capacity costs address space until it is used.
func growth(c, n int) int { return max(n, 2*c) }
