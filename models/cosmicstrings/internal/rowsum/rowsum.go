// Package rowsum forms weighted sums of rows of a float64 table, the inner
// loop of the metastable-string table's interpolation in (log10 Gmu, t_s):
// with AVX on amd64 processors that have it, four values per instruction,
// else with a scalar loop. Both round every product and add the products
// in the same order (no fused multiply-add), so their results are
// bit-identical.
package rowsum

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
		panic("rowsum: negative stride")
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
		panic("rowsum: negative stride")
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
