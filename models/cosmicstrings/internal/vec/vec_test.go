package vec

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// value draws table-like values and, now and then, ones that stress the
// rounding: wide exponents, subnormals, signed zeros.
func value(r *rand.Rand) float64 {
	switch r.IntN(16) {
	case 0:
		return math.Ldexp(r.NormFloat64(), r.IntN(200)-100)
	case 1:
		return math.Float64frombits(r.Uint64() & (1<<52 - 1)) // subnormal
	case 2:
		return math.Copysign(0, r.NormFloat64())
	}
	return -40 + 10*r.NormFloat64()
}

// reference is the expression of Sum8 and Sum4's doc comments written out
// per element, as the metastable table's scalar loop had it: Go rounds
// every product and sum on amd64 (it fuses no multiply-add unless asked
// to), so IEEE 754 arithmetic in this order is the reference.
func reference8(dst, src []float64, m, gs int, wa, wb float64, wy [4]float64, acc bool) {
	for j := range dst {
		a := func(b int) float64 { return (wa * wy[b]) * src[b*m+j] }
		c := func(b int) float64 { return (wb * wy[b]) * src[gs+b*m+j] }
		t := ((a(0) + a(1)) + (a(2) + a(3))) + ((c(0) + c(1)) + (c(2) + c(3)))
		if acc {
			dst[j] += t
		} else {
			dst[j] = t
		}
	}
}

func reference4(dst, src []float64, gs int, w [4]float64) {
	for j := range dst {
		dst[j] = (w[0]*src[j] + w[1]*src[gs+j]) + (w[2]*src[2*gs+j] + w[3]*src[3*gs+j])
	}
}

func sameBits(t *testing.T, what string, got, want []float64) {
	t.Helper()
	for j := range want {
		if math.Float64bits(got[j]) != math.Float64bits(want[j]) {
			t.Fatalf("%s: [%d] = %v (%#x), want %v (%#x)", what, j, got[j], math.Float64bits(got[j]), want[j], math.Float64bits(want[j]))
		}
	}
}

// TestSumsMatchReference: Sum8 and Sum4 (AVX where the processor has it)
// and the scalar loops agree to the bit with the per-element IEEE 754
// expression, for every length 0..70 (the 4-wide part and each tail
// length), both modes of Sum8, and odd row and block strides.
func TestSumsMatchReference(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 14))
	for n := 0; n <= 70; n++ {
		for _, acc := range []bool{false, true} {
			m := n + r.IntN(9)
			gs := 4*m + r.IntN(5)
			src := make([]float64, gs+4*m)
			for i := range src {
				src[i] = value(r)
			}
			wy := [4]float64{r.NormFloat64(), r.NormFloat64(), r.NormFloat64(), r.NormFloat64()}
			wa, wb := r.NormFloat64(), r.NormFloat64()
			init := make([]float64, n)
			for i := range init {
				init[i] = value(r)
			}
			want := append([]float64(nil), init...)
			reference8(want, src, m, gs, wa, wb, wy, acc)
			got := append([]float64(nil), init...)
			w := [8]float64{wa * wy[0], wa * wy[1], wa * wy[2], wa * wy[3], wb * wy[0], wb * wy[1], wb * wy[2], wb * wy[3]}
			Sum8(got, src, m, gs, &w, acc)
			sameBits(t, fmt.Sprintf("Sum8 n=%d acc=%v", n, acc), got, want)
			if n > 0 {
				got = append(got[:0], init...)
				sum8Go(got, src, m, gs, &w, acc)
				sameBits(t, fmt.Sprintf("sum8Go n=%d acc=%v", n, acc), got, want)
			}

			w4 := wy
			want = make([]float64, n)
			reference4(want, src, m, w4)
			got = make([]float64, n)
			Sum4(got, src, m, &w4)
			sameBits(t, fmt.Sprintf("Sum4 n=%d", n), got, want)
		}
	}
}

// TestSumsNoAlloc: the hot path allocates nothing.
func TestSumsNoAlloc(t *testing.T) {
	src := make([]float64, 400)
	dst := make([]float64, 21)
	wy := [4]float64{0.1, 0.2, 0.3, 0.4}
	w8 := [8]float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8}
	if a := testing.AllocsPerRun(100, func() {
		Sum8(dst, src, 25, 100, &w8, false)
		Sum4(dst, src, 25, &wy)
	}); a != 0 {
		t.Fatalf("%v allocations per call, want 0", a)
	}
}

// BenchmarkSum8 times one metastable-table combination of 16 rows (two
// Sum8 calls) for a typical row length, with the scalar loop beside it.
// BenchmarkSum8 times one metastable-table combination of 16 rows (two
// Sum8 calls) for a typical row length (22 v nodes), with the scalar loop
// beside it.
func BenchmarkSum8(b *testing.B) {
	const n, m = 22, 90
	gs := 30 * m
	src := make([]float64, 3*gs+4*m)
	for i := range src {
		src[i] = float64(i%97) * 0.01
	}
	dst := make([]float64, n)
	w := [8]float64{-0.06, 0.6, 0.5, -0.04, 0.1, 0.2, 0.3, 0.4}
	b.Run("dispatch", func(b *testing.B) {
		for b.Loop() {
			Sum8(dst, src, m, gs, &w, false)
			Sum8(dst, src[2*gs:], m, gs, &w, true)
		}
	})
	b.Run("scalar", func(b *testing.B) {
		for b.Loop() {
			sum8Go(dst, src, m, gs, &w, false)
			sum8Go(dst, src[2*gs:], m, gs, &w, true)
		}
	})
}

// TestCubicsMatchReference: Cubics (AVX where the processor has it) and
// its scalar loop agree to the bit with the interpolating cubic written
// out per stencil in IEEE 754 arithmetic, for every row length 0..40 (the
// 4-wide part and each tail length). The coefficients are those of
// 4-point Lagrange interpolation (Abramowitz & Stegun 25.2.13, from
// memory): TestCubicsInterpolate checks that on the nodes.
func TestCubicsMatchReference(t *testing.T) {
	type cubic [4]float64
	r := rand.New(rand.NewPCG(15, 92))
	for n := 0; n <= 40; n++ {
		row := make([]float64, n)
		for i := range row {
			row[i] = value(r)
		}
		shift := r.NormFloat64()
		want := make([]cubic, max(n-3, 0))
		for j := range want {
			r0, r1, r2, r3 := row[j], row[j+1], row[j+2], row[j+3]
			c2 := 0.5*(r0+r2) - r1
			c3 := (r3-r0)*(1.0/6) + 0.5*(r1-r2)
			want[j] = cubic{r1 + shift, ((r2 - r1) - c2) - c3, c2, c3}
		}
		got := make([]cubic, len(want)+1) // one spare, which must stay 0
		Cubics(got, row, shift)
		if got[len(want)] != (cubic{}) {
			t.Fatalf("n=%d: Cubics wrote past its %d cubics", n, len(want))
		}
		for j := range want {
			sameBits(t, fmt.Sprintf("Cubics n=%d stencil %d", n, j), got[j][:], want[j][:])
		}
		if len(want) > 0 {
			clear(got)
			cubicsGo(got[:len(want)], row, shift)
			for j := range want {
				sameBits(t, fmt.Sprintf("cubicsGo n=%d stencil %d", n, j), got[j][:], want[j][:])
			}
		}
	}
}

// TestCubicsInterpolate: each cubic passes through its 4 nodes (shifted),
// p(-1), p(0), p(1), p(2) = r[j..j+3] + shift, to rounding: the node
// values are about 40 in magnitude and the coefficients are sums of a
// few of them, so the dozen roundings on the way stay within a few ulp of
// the coefficients' size, far below the 1e-12 relative allowed.
func TestCubicsInterpolate(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 7))
	row := make([]float64, 23)
	for i := range row {
		row[i] = -40 + 10*r.NormFloat64()
	}
	const shift = 0.75
	cf := make([][4]float64, len(row)-3)
	Cubics(cf, row, shift)
	for j, q := range cf {
		for i, u := range []float64{-1, 0, 1, 2} {
			p := q[0] + u*q[1] + u*u*q[2] + u*u*u*q[3]
			if want := row[j+i] + shift; math.Abs(p-want) > 1e-12*math.Abs(want) {
				t.Errorf("stencil %d: p(%g) = %.17g, want %.17g", j, u, p, want)
			}
		}
	}
}

// BenchmarkCubics times the cubics of a 22-node row, scalar beside AVX.
func BenchmarkCubics(b *testing.B) {
	row := make([]float64, 22)
	for i := range row {
		row[i] = float64(i%7) * 0.3
	}
	cf := make([][4]float64, len(row)-3)
	b.Run("dispatch", func(b *testing.B) {
		for b.Loop() {
			Cubics(cf, row, 0.5)
		}
	})
	b.Run("scalar", func(b *testing.B) {
		for b.Loop() {
			cubicsGo(cf, row, 0.5)
		}
	})
}

// TestSeriesMatchReference: Series2 and Series5 (AVX for the leading
// multiple of 4 where the processor has it) agree to the bit with the
// lookup written out per frequency in IEEE 754 arithmetic, for every
// length 0..40 and frequencies falling in any slot.
func TestSeriesMatchReference(t *testing.T) {
	type cubic [4]float64
	r := rand.New(rand.NewPCG(8, 21))
	cf := new([Slots]cubic)
	for i := range cf {
		cf[i] = cubic{value(r), value(r), value(r), value(r)}
	}
	eval := func(q cubic, u float64) float64 { return (q[0] + u*q[1]) + (u*u)*(q[2]+u*q[3]) }
	for n := 0; n <= 40; n++ {
		c := 3 * r.NormFloat64()
		xs, invF := make([]float64, n), make([]float64, n)
		for k := range xs {
			xs[k] = c + float64(Slots-1)*r.Float64()
			invF[k] = math.Ldexp(1+r.Float64(), -r.IntN(40))
		}
		a := [5]float64{r.NormFloat64(), r.NormFloat64(), r.NormFloat64(), r.NormFloat64(), r.NormFloat64()}
		want2, want5 := make([]float64, n), make([]float64, n)
		for k := range xs {
			x := xs[k] - c
			s := int(x)
			y := invF[k]
			p := eval(cf[s&(Slots-1)], x-float64(s))
			want2[k] = p + y*(a[0]+y*a[1])
			want5[k] = p + y*(a[0]+y*(a[1]+y*(a[2]+y*(a[3]+y*a[4]))))
		}
		got := make([]float64, n)
		Series2(got, xs, invF, cf, c, a[0], a[1])
		sameBits(t, fmt.Sprintf("Series2 n=%d", n), got, want2)
		Series5(got, xs, invF, cf, c, &a)
		sameBits(t, fmt.Sprintf("Series5 n=%d", n), got, want5)
	}
}

// BenchmarkSeries times Series2 on 30 frequencies.
func BenchmarkSeries(b *testing.B) {
	type cubic [4]float64
	cf := new([Slots]cubic)
	for i := range cf {
		cf[i] = cubic{float64(i), 0.5, 0.25, 0.125}
	}
	xs, invF, dst := make([]float64, 30), make([]float64, 30), make([]float64, 30)
	for k := range xs {
		xs[k] = 40 + 17*math.Log(float64(k+1))
		invF[k] = 1 / float64(k+1)
	}
	for b.Loop() {
		Series2(dst, xs, invF, cf, 1.5, -1e-6, -5e-13)
	}
}

// TestAddClampedMatchesReference: AddClamped (AVX for the leading multiple
// of 4 where the processor has it) agrees to the bit with the clamped
// lookup written out per frequency, for every length 0..40, stencils
// below, inside and above the row.
func TestAddClampedMatchesReference(t *testing.T) {
	type cubic [4]float64
	r := rand.New(rand.NewPCG(6, 60))
	cf := new([Slots]cubic)
	for i := range cf {
		cf[i] = cubic{value(r), value(r), value(r), value(r)}
	}
	eval := func(q cubic, u float64) float64 { return (q[0] + u*q[1]) + (u*u)*(q[2]+u*q[3]) }
	for n := 0; n <= 40; n++ {
		last := r.IntN(Slots - 1)
		c := 3 * r.NormFloat64()
		xs, init := make([]float64, n), make([]float64, n)
		for k := range xs {
			xs[k] = c - 0.49 + (float64(last)+6)*r.Float64()
			init[k] = value(r)
		}
		want := append([]float64(nil), init...)
		for k := range xs {
			x := xs[k] - c
			s := min(max(int(x)-1, 0), last) + 1
			want[k] += eval(cf[s], x-float64(s))
		}
		got := append([]float64(nil), init...)
		AddClamped(got, xs, cf, c, last)
		sameBits(t, fmt.Sprintf("AddClamped n=%d last=%d", n, last), got, want)
	}
}
