package chains

import (
	"encoding/binary"
	"math"
	"math/bits"
)

// appendFloat appends v formatted exactly as strconv.AppendFloat(b, v,
// 'g', -1, 64) does: the shortest decimal that reads back as v, in the
// layout of strconv's 'g' format with the shortest precision (an exponent
// form d.ddde±dd when the decimal exponent is below -4 or at least 6, else
// plain digits), "NaN", "+Inf" and "-Inf" for the special values.
//
// The shortest digits come from the Dragonbox algorithm (J. Jeon,
// "Dragonbox: A New Floating-Point Binary-to-Decimal Conversion
// Algorithm", 2020, Algorithms 5.2, 5.4 and 5.6), as Go's strconv computes
// them; they are written straight into b in the final layout, two at a
// time, without strconv's intermediate decimal buffer.
//
// The digit search (shortestDigits and its helpers below) is adapted from
// Go's internal/strconv (ftoadbox.go, math.go), BSD-style licence, see
// Go's LICENSE.
func appendFloat(b []byte, v float64) []byte {
	u := math.Float64bits(v)
	neg := u>>63 != 0
	be := int(u>>52) & 0x7ff
	mant := u & (1<<52 - 1)
	denorm := false
	switch be {
	case 0x7ff:
		switch {
		case mant != 0:
			return append(b, "NaN"...)
		case neg:
			return append(b, "-Inf"...)
		}
		return append(b, "+Inf"...)
	case 0:
		if mant == 0 {
			if neg {
				return append(b, "-0"...)
			}
			return append(b, '0')
		}
		be, denorm = 1, true
	default:
		mant |= 1 << 52
	}
	n := len(b)
	if cap(b)-n < maxValueText+8 {
		b = append(b, make([]byte, maxValueText+8)...)
	}
	buf := b[n : n+maxValueText+8]
	i := 0
	if neg {
		buf[0] = '-'
		i = 1
	}
	var d uint64
	var e10 int
	exp := be - 1023 - 52
	if exp <= 0 && exp > -53 && mant&(1<<-exp-1) == 0 {
		// An integer below 2^53: its shortest digits are its own, less
		// trailing zeros (the value itself is the only decimal of at most
		// 17 digits that lies within half an ulp and has fewer digits
		// than any other such integer with trailing zeros removed).
		d = mant >> -exp
		d, e10 = trimZeros(d)
	} else {
		d, e10 = shortestDigits(mant, exp, denorm)
	}
	return b[:n+i+layoutG(buf[i:], d, e10)]
}

// layoutG writes the decimal d * 10^e10 (d > 0, at most 17 digits) into
// buf in strconv's shortest 'g' layout and returns the number of bytes
// written. buf must have room for maxValueText+7 bytes: it is used as
// scratch beyond the text.
func layoutG(buf []byte, d uint64, e10 int) int {
	_ = buf[maxValueText+6]
	nd := decimalLen(d)
	dp := nd + e10 // the decimal point's place: the value is 0.digits * 10^dp
	switch {
	case dp < -3 || dp > 6:
		// d.ddde±xx: the digits one place to the right, then the first
		// moved back before the point.
		putDigits(buf, d, nd)
		k := 1
		if nd > 1 {
			insertPoint(buf, 1)
			k = nd + 1
		}
		x := dp - 1
		buf[k] = 'e'
		buf[k+1] = '+'
		if x < 0 {
			buf[k+1] = '-'
			x = -x
		}
		if x < 100 {
			buf[k+2], buf[k+3] = pairs[2*x], pairs[2*x+1]
			return k + 4
		}
		h := x / 100
		x -= 100 * h
		buf[k+2], buf[k+3], buf[k+4] = byte('0'+h), pairs[2*x], pairs[2*x+1]
		return k + 5
	case dp <= 0:
		// 0.000ddd: at most three zeros after the point.
		buf[0], buf[1], buf[2], buf[3], buf[4] = '0', '.', '0', '0', '0'
		putDigits(buf[2-dp:], d, nd)
		return 2 - dp + nd
	case dp >= nd:
		// ddd000: an integer of at most 6 digits (nd <= dp <= 6), which
		// putDigits follows with the zeros.
		putDigits(buf, d, nd)
		return dp
	default:
		// ddd.ddd: at most 6 digits before the point.
		putDigits(buf, d, nd)
		insertPoint(buf, dp)
		return nd + 1
	}
}

// insertPoint moves the 16 bytes from buf[i] one place to the right and
// puts a '.' at buf[i]: it makes room for the decimal point before digit i
// of at most i+16 digits. buf must hold i+17 bytes.
func insertPoint(buf []byte, i int) {
	_ = buf[i+16]
	lo := binary.LittleEndian.Uint64(buf[i:])
	hi := binary.LittleEndian.Uint64(buf[i+8:])
	binary.LittleEndian.PutUint64(buf[i+1:], lo)
	binary.LittleEndian.PutUint64(buf[i+9:], hi)
	buf[i] = '.'
}

// pairs is the text of 00 to 99, two bytes each.
const pairs = "00010203040506070809" +
	"10111213141516171819" +
	"20212223242526272829" +
	"30313233343536373839" +
	"40414243444546474849" +
	"50515253545556575859" +
	"60616263646566676869" +
	"70717273747576777879" +
	"80818283848586878889" +
	"90919293949596979899"

// putDigits writes the nd (1 to 17) decimal digits of d at the start of
// buf, eight at a time; when nd is at most 8, '0's follow the digits up to
// the eighth byte. buf must have room for max(nd, 8) bytes.
func putDigits(buf []byte, d uint64, nd int) {
	switch {
	case nd <= 8:
		// The eight-digit text, its leading zeros rotated to the end.
		binary.LittleEndian.PutUint64(buf, bits.RotateLeft64(digits8(uint32(d)), -8*(8-nd)))
	case nd <= 16:
		hi, lo := d/1e8, d%1e8
		binary.LittleEndian.PutUint64(buf, bits.RotateLeft64(digits8(uint32(hi)), -8*(16-nd)))
		binary.LittleEndian.PutUint64(buf[nd-8:], digits8(uint32(lo)))
	default:
		hi, lo := d/1e8, d%1e8
		h1, h2 := hi/1e8, hi%1e8
		_ = buf[16]
		buf[0] = byte('0' + h1)
		binary.LittleEndian.PutUint64(buf[1:], digits8(uint32(h2)))
		binary.LittleEndian.PutUint64(buf[9:], digits8(uint32(lo)))
	}
}

// digits8 returns the eight decimal digits of x < 1e8, with leading zeros,
// as ASCII in the bytes of a little-endian word (the first digit in the
// lowest byte). It splits x in lanes of one word: into two four-digit
// halves 32 bits apart, each into two pairs 16 bits apart, each into two
// digits 8 bits apart, dividing by 100 and by 10 with a multiply and shift
// (floor(v*10486/2^20) = floor(v/100) for v < 10^4 and floor(v*103/2^10) =
// floor(v/10) for v < 100, H. S. Warren, Hacker's Delight, 2nd ed.,
// section 10-8; TestDigits8 checks every lane value). No lane's product
// overflows into the next.
func digits8(x uint32) uint64 {
	hi := x / 10000
	v := uint64(hi) | uint64(x-hi*10000)<<32
	q := (v * 10486 >> 20) & 0x0000007f_0000007f
	v = q | (v-q*100)<<16
	q = (v * 103 >> 10) & 0x000f000f_000f000f
	v = q | (v-q*10)<<8
	return v + 0x30303030_30303030
}

// pow10u64 holds 10^0 to 10^19.
var pow10u64 = [20]uint64{
	1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19,
}

// decimalLen returns the number of decimal digits of d > 0: from
// floor(log10(2) * bit length), which is the digit count or one less
// (1233/4096 approximates log10(2) from below closely enough for 64 bits;
// H. S. Warren, Hacker's Delight, 2nd ed., section 11-4).
func decimalLen(d uint64) int {
	n := (bits.Len64(d) * 1233) >> 12
	if d >= pow10u64[n] {
		n++
	}
	return n
}

// A uint128 is a 128-bit unsigned integer.
type uint128 struct{ Hi, Lo uint64 }

// shortestDigits returns the shortest decimal d * 10^e10 that rounds to
// the float64 mant * 2^exp (mant the significand with its implicit bit;
// denorm for a subnormal), with ties in the decimal rounding to even, as
// strconv's shortest formatting computes it (Dragonbox, Jeon 2020).
func shortestDigits(mant uint64, exp int, denorm bool) (d uint64, e10 int) {
	if mant == 1<<52 && !denorm {
		// A power of two: the interval of values rounding to it is
		// asymmetric (Algorithm 5.6).
		k0 := -mulLog10_2MinusLog10_4Over3(exp)
		φ, β := dboxPow64(k0, exp)
		xi, zi := dboxRange64(φ, β)
		if exp != 2 && exp != 3 {
			xi++
		}
		q := zi / 10
		if xi <= q*10 {
			q, zeros := trimZeros(q)
			return q, -k0 + 1 + zeros
		}
		yru := dboxRoundUp64(φ, β)
		if exp == -77 && yru%2 != 0 {
			yru--
		} else if yru < xi {
			yru++
		}
		return yru, -k0
	}

	// κ = 2 for float64 (Jeon 2020, section 5.1.3).
	const (
		κ     = 2
		p10κ  = 100       // 10^κ
		p10κ1 = p10κ * 10 // 10^(κ+1)
	)

	// Algorithm 5.2.
	k0 := -mulLog10_2(exp)
	φ, β := dboxPow64(κ+k0, exp)
	zi, exact := dboxMulPow64((mant*2+1)<<β, φ)
	s, r := zi/p10κ1, uint32(zi%p10κ1)
	δi := dboxDelta64(φ, β)

	if r < δi {
		if r != 0 || !exact || mant%2 == 0 {
			s, zeros := trimZeros(s)
			return s, -k0 + 1 + zeros
		}
		s--
		r = p10κ * 10
	} else if r == δi {
		parity, exact := dboxParity64(mant*2-1, φ, β)
		if parity || (exact && mant%2 == 0) {
			s, zeros := trimZeros(s)
			return s, -k0 + 1 + zeros
		}
	}

	// Algorithm 5.4.
	D := r + p10κ/2 - δi/2
	t, ρ := D/p10κ, D%p10κ
	yru := 10*s + uint64(t)
	if ρ == 0 {
		parity, exact := dboxParity64(mant*2, φ, β)
		if parity != ((D-p10κ/2)%2 != 0) || exact && yru%2 != 0 {
			yru--
		}
	}
	return yru, -k0
}

// umul192Upper128 returns the upper 128 bits of the 192-bit x * y.
func umul192Upper128(x uint64, y uint128) uint128 {
	hi, lo := bits.Mul64(x, y.Hi)
	t, _ := bits.Mul64(x, y.Lo)
	lo, c := bits.Add64(lo, t, 0)
	return uint128{hi + c, lo}
}

// umul192Lower128 returns the lower 128 bits of the 192-bit x * y.
func umul192Lower128(x uint64, y uint128) uint128 {
	high := x * y.Hi
	hl, ll := bits.Mul64(x, y.Lo)
	return uint128{high + hl, ll}
}

// dboxMulPow64 returns the integer part of u * φ / 2^128 and whether
// its fraction is zero (Jeon 2020, section 5.2.1).
func dboxMulPow64(u uint64, φ uint128) (intPart uint64, isInt bool) {
	r := umul192Upper128(u, φ)
	return r.Hi, r.Lo == 0
}

// dboxParity64 returns the parity of the integer part of mant2 * φ scaled
// by β, and whether its fraction is zero (Jeon 2020, section 5.2.1).
func dboxParity64(mant2 uint64, φ uint128, β int) (parity bool, isInt bool) {
	r := umul192Lower128(mant2, φ)
	parity = (r.Hi>>(64-β))&1 != 0
	isInt = (r.Hi<<β)|(r.Lo>>(64-β)) == 0
	return parity, isInt
}

// dboxDelta64 returns δ^(i) from φ (Jeon 2020, Algorithm 5.2).
func dboxDelta64(φ uint128, β int) uint32 {
	return uint32(φ.Hi >> (64 - 1 - β))
}

// dboxRange64 returns the integer parts of the ends of the rounding
// interval of a power of two (Jeon 2020, Algorithm 5.6).
func dboxRange64(φ uint128, β int) (left, right uint64) {
	left = (φ.Hi - (φ.Hi >> (52 + 2))) >> (64 - 52 - 1 - β)
	right = (φ.Hi + (φ.Hi >> (52 + 1))) >> (64 - 52 - 1 - β)
	return left, right
}

// dboxRoundUp64 returns y rounded up, y^(ru) (Jeon 2020, Algorithm 5.6).
func dboxRoundUp64(φ uint128, β int) uint64 {
	return (φ.Hi>>(128/2-52-2-β) + 1) / 2
}

// dboxPow64 returns φ̃_k, 10^k rounded up to 128 bits (exact for 0 <= k
// <= 55, where 5^k fits), and β, the shift that goes with the binary
// exponent e.
func dboxPow64(k, e int) (φ uint128, β int) {
	φ = pow10Tab[k-pow10Min]
	if k < 0 || k > 55 {
		φ.Lo++
	}
	return φ, e + mulLog2_10(k)
}

// mulLog10_2 returns floor(x * log10(2)) for -1600 <= x <= 1600.
func mulLog10_2(x int) int {
	return (x * 78913) >> 18
}

// mulLog2_10 returns floor(x * log2(10)) for -500 <= x <= 500.
func mulLog2_10(x int) int {
	return (x * 108853) >> 15
}

// mulLog10_2MinusLog10_4Over3 returns floor(e*log10(2) - log10(4/3))
// (Jeon 2020, section 6.3).
func mulLog10_2MinusLog10_4Over3(e int) int {
	return (e*631305 - 261663) >> 21
}

// trimZeros returns x / 10^p and p for the largest p with x % 10^p == 0
// (x > 0), testing divisibility by multiplying with the inverse of 5^p
// modulo 2^64 (H. S. Warren, Hacker's Delight, 2nd ed., sections 10-16
// and 10-17).
func trimZeros(x uint64) (uint64, int) {
	const (
		div1e8m  = 0xc767074b22e90e21
		div1e8le = math.MaxUint64 / 100000000
		div1e4m  = 0xd288ce703afb7e91
		div1e4le = math.MaxUint64 / 10000
		div1e2m  = 0x8f5c28f5c28f5c29
		div1e2le = math.MaxUint64 / 100
		div1e1m  = 0xcccccccccccccccd
		div1e1le = math.MaxUint64 / 10
	)
	if bits.RotateLeft64(x*div1e1m, -1) > div1e1le {
		return x, 0 // the most common case: no trailing zero
	}
	p := 0
	for d := bits.RotateLeft64(x*div1e8m, -8); d <= div1e8le; d = bits.RotateLeft64(x*div1e8m, -8) {
		x = d
		p += 8
	}
	if d := bits.RotateLeft64(x*div1e4m, -4); d <= div1e4le {
		x = d
		p += 4
	}
	if d := bits.RotateLeft64(x*div1e2m, -2); d <= div1e2le {
		x = d
		p += 2
	}
	if d := bits.RotateLeft64(x*div1e1m, -1); d <= div1e1le {
		x = d
		p++
	}
	return x, p
}
