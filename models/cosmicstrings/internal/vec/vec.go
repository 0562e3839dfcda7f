// Package vec holds the vector loops of the metastable-string table's
// lookup: the weighted sum of the table rows of an interpolation stencil in
// (log10 Gmu, t_s) (Sum8, Sum4), the cubic of each 4-node stencil of the
// summed row (Cubics), its evaluation at each frequency (AddClamped, and
// Series2 and Series5 with a polynomial edge term), and the edge term
// ln(1 - x) by table (LogTable). On amd64 processors with AVX (AVX2 for
// LogTable) they run four values per instruction, else as scalar loops.
// Both round every operation and do the operations in the same order (no
// fused multiply-add), so their results are bit-identical.
package vec

// Sum8 sets dst[j] (acc false) or adds to it (acc true)
//
//	((w[0] a0[j] + w[1] a1[j]) + (w[2] a2[j] + w[3] a3[j])) +
//	((w[4] b0[j] + w[5] b1[j]) + (w[6] b2[j] + w[7] b3[j]))
//
// for j < len(dst), where ak[j] = src[k m + j] and bk[j] = src[gs + k m + j]:
// two 4-row blocks of a table whose rows are m apart, the second gs after
// the first. It panics, as an index expression does, when src is too short
// or a stride is negative.
func Sum8(dst, src []float64, m, gs int, w *[8]float64, acc bool) {
	n := len(dst)
	if n == 0 {
		return
	}
	if m < 0 || gs < 0 {
		panic("vec: negative stride")
	}
	_ = src[gs+3*m+n-1]
	sum8(dst, src, m, gs, w, acc)
}

// Sum4 sets dst[j] to (w[0] s0[j] + w[1] s1[j]) + (w[2] s2[j] + w[3] s3[j])
// for j < len(dst), where sk[j] = src[k gs + j]. It panics, as an index
// expression does, when src is too short or gs is negative.
func Sum4(dst, src []float64, gs int, w *[4]float64) {
	n := len(dst)
	if n == 0 {
		return
	}
	if gs < 0 {
		panic("vec: negative stride")
	}
	_ = src[3*gs+n-1]
	sum4(dst, src, gs, w)
}

// sum8Go is Sum8's scalar loop (dst non-empty, src long enough).
func sum8Go(dst, src []float64, m, gs int, w *[8]float64, acc bool) {
	n := len(dst)
	a0, a1, a2, a3 := src[:n], src[m:][:n], src[2*m:][:n], src[3*m:][:n]
	b := src[gs:]
	b0, b1, b2, b3 := b[:n], b[m:][:n], b[2*m:][:n], b[3*m:][:n]
	if !acc {
		for j := range dst {
			dst[j] = ((w[0]*a0[j] + w[1]*a1[j]) + (w[2]*a2[j] + w[3]*a3[j])) +
				((w[4]*b0[j] + w[5]*b1[j]) + (w[6]*b2[j] + w[7]*b3[j]))
		}
		return
	}
	for j := range dst {
		dst[j] += ((w[0]*a0[j] + w[1]*a1[j]) + (w[2]*a2[j] + w[3]*a3[j])) +
			((w[4]*b0[j] + w[5]*b1[j]) + (w[6]*b2[j] + w[7]*b3[j]))
	}
}

// sum4Go is Sum4's scalar loop (dst non-empty, src long enough).
func sum4Go(dst, src []float64, gs int, w *[4]float64) {
	n := len(dst)
	s0, s1, s2, s3 := src[:n], src[gs:][:n], src[2*gs:][:n], src[3*gs:][:n]
	for j := range dst {
		dst[j] = (w[0]*s0[j] + w[1]*s1[j]) + (w[2]*s2[j] + w[3]*s3[j])
	}
}

// Cubics writes into dst[j], for each run of 4 consecutive values
// r0, r1, r2, r3 of r starting at r[j], the coefficients (p(0), c1, c2, c3)
// of the cubic p(u) = p(0) + c1 u + c2 u^2 + c3 u^3 through p(-1) = r0 + shift,
// p(0) = r1 + shift, p(1) = r2 + shift and p(2) = r3 + shift, computed as
//
//	c2 = 0.5 (r0 + r2) - r1
//	c3 = (r3 - r0)/6 + 0.5 (r1 - r2)
//	c1 = ((r2 - r1) - c2) - c3
//
// (the sum and difference of p(1) and p(-1), and p(2)): 4-point Lagrange
// interpolation of r at u = x - (j + 1) for the stencil starting at node j.
// dst must hold len(r) - 3 cubics; nothing is written when len(r) < 4.
func Cubics[C ~[4]float64](dst []C, r []float64, shift float64) {
	if len(r) < 4 {
		return
	}
	cubics(dst[:len(r)-3], r, shift)
}

// cubicsGo is Cubics' scalar loop (len(dst) = len(r) - 3 > 0).
func cubicsGo[C ~[4]float64](dst []C, r []float64, shift float64) {
	r0, r1, r2 := r[0], r[1], r[2]
	dst = dst[:len(r)-3]
	for j, r3 := range r[3:] {
		c2 := 0.5*(r0+r2) - r1
		c3 := (r3-r0)*(1.0/6) + 0.5*(r1-r2)
		dst[j] = C{r1 + shift, (r2 - r1) - c2 - c3, c2, c3}
		r0, r1, r2 = r1, r2, r3
	}
}

// Slots is the size of the table of cubics that Series2 and Series5 read:
// a power of two, so that the slot of a stencil is masked with Slots - 1,
// which keeps every read inside the table.
const Slots = 256

// at evaluates the cubic q at u (Estrin's order: a shorter chain).
func at[C ~[4]float64](q *C, u float64) float64 {
	return ((*q)[0] + u*(*q)[1]) + (u*u)*((*q)[2]+u*(*q)[3])
}

// Series2 writes into dst[k], for k < len(xs), the cubic cf[s] at x - s
// plus y (a1 + y a2), where x = xs[k] - c, s = int(x) (x >= 0, so int
// truncates like floor) masked with Slots - 1, and y = invF[k]: the table
// lookup of one frequency and a polynomial edge term. dst and invF must
// hold len(xs) values.
func Series2[C ~[4]float64](dst, xs, invF []float64, cf *[Slots]C, c, a1, a2 float64) {
	n := len(xs)
	dst, invF = dst[:n], invF[:n]
	k := series(dst, xs, invF, cf, c, &[5]float64{a1, a2}, 2)
	for ; k < n; k++ {
		x := xs[k] - c
		s := int(x)
		y := invF[k]
		dst[k] = at(&cf[s&(Slots-1)], x-float64(s)) + y*(a1+y*a2)
	}
}

// Series5 is Series2 with the edge term y (a1 + y (a2 + y (a3 + y (a4 +
// y a5)))), a = (a1, ..., a5).
func Series5[C ~[4]float64](dst, xs, invF []float64, cf *[Slots]C, c float64, a *[5]float64) {
	n := len(xs)
	dst, invF = dst[:n], invF[:n]
	k := series(dst, xs, invF, cf, c, a, 5)
	a1, a2, a3, a4, a5 := a[0], a[1], a[2], a[3], a[4]
	for ; k < n; k++ {
		x := xs[k] - c
		s := int(x)
		y := invF[k]
		dst[k] = at(&cf[s&(Slots-1)], x-float64(s)) + y*(a1+y*(a2+y*(a3+y*(a4+y*a5))))
	}
}

// AddClamped adds to dst[k], for k < len(xs), the cubic cf[s] at x - s,
// where x = xs[k] - c (x > -1/2, where int truncates to the same node as
// floor) and s = min(max(int(x) - 1, 0), last) + 1: the table lookup of
// the frequencies whose stencil may clamp to the ends of the row
// (0 <= last < Slots - 1). dst must hold len(xs) values.
func AddClamped[C ~[4]float64](dst, xs []float64, cf *[Slots]C, c float64, last int) {
	n := len(xs)
	dst = dst[:n]
	last = min(max(last, 0), Slots-2)
	k := addClamped(dst, xs, cf, c, last)
	for ; k < n; k++ {
		x := xs[k] - c
		s := min(max(int(x)-1, 0), last) + 1
		dst[k] += at(&cf[s&(Slots-1)], x-float64(s))
	}
}
