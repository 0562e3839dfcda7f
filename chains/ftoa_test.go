package chains

import (
	"encoding/binary"
	"math"
	"math/big"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// The reference of every test here is Go's strconv:
// strconv.AppendFloat(b, v, 'g', -1, 64), the shortest round-trip text that
// doc.go specifies for chain files.

// checkFloat fails t unless appendFloat formats v as strconv does, both
// appended after a prefix.
func checkFloat(t *testing.T, v float64) {
	t.Helper()
	got := appendFloat([]byte("x,"), v)
	want := strconv.AppendFloat([]byte("x,"), v, 'g', -1, 64)
	if string(got) != string(want) {
		t.Fatalf("%#016x: appendFloat gives %q, strconv %q", math.Float64bits(v), got, want)
	}
}

// TestAppendFloatEdges checks the values at the edges of every branch:
// signed zeros, the extremes and subnormals, the switches to the exponent
// form (below 1e-4 and from 1e6 on), the integer path's limit at 2^53,
// powers of ten and of two, and values whose shortest form has 17 digits.
func TestAppendFloatEdges(t *testing.T) {
	vals := []float64{
		0, math.Copysign(0, -1), math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64,
		2 * math.SmallestNonzeroFloat64, 0x1p-1022, math.Nextafter(0x1p-1022, 0), math.Nextafter(0x1p-1022, 1),
		math.MaxFloat64, -math.MaxFloat64, math.Nextafter(math.MaxFloat64, 0),
		math.Inf(1), math.Inf(-1), math.NaN(), math.Float64frombits(0x7ff0000000000001),
		math.Float64frombits(0xfff8000000000000), math.Float64frombits(0x7fffffffffffffff),
		1e21, 1e-5, 1e-4, math.Nextafter(1e-4, 0), math.Nextafter(1e-4, 1), 9.9999e-5, 1.23e-4,
		0.001, 0.01, 0.1, 0.5, 123456, 123456.7, 999999, 999999.9, 1e6, math.Nextafter(1e6, 0),
		1234567, -1e6, 1e7, 100, 1000, 120000, 1<<53 - 1, 1 << 53, 1<<53 + 2, 1 << 52, 1<<52 + 1,
		4503599627370495.5, 1 << 54, 1 << 63, 1 << 64, -(1 << 62), 0.3, 1.0 / 3, 2.0 / 3,
		-12.3456789012345, 4.33333333333, 1.2e-15, 5e-324, 1.7976931348623157e308,
		2.2250738585072014e-308, 2.225073858507201e-308, 9007199254740993,
		0.1 + 0.2, 1.0000000000000002, 0.9999999999999999, 5.0e-10, 123456789012345680,
		-2.2250738585072014e-308, -1.2345678901234567e-100, 9.876543210987654e+299,
	}
	for k := -325; k <= 309; k++ {
		vals = append(vals, math.Pow(10, float64(k)))
		if v, err := strconv.ParseFloat("1e"+strconv.Itoa(k), 64); err == nil {
			vals = append(vals, v, math.Nextafter(v, 0), math.Nextafter(v, math.Inf(1)), -v)
		}
	}
	for k := -1074; k <= 1023; k++ {
		v := math.Ldexp(1, k)
		vals = append(vals, v, math.Nextafter(v, 0), math.Nextafter(v, math.Inf(1)), -3*v)
	}
	seventeen := 0
	for _, v := range vals {
		checkFloat(t, v)
		// 'e' text of 17 significant digits: d.dddddddddddddddde±xx.
		if e := strings.IndexByte(strconv.FormatFloat(math.Abs(v), 'e', -1, 64), 'e'); e == 18 {
			seventeen++
		}
	}
	if seventeen < 100 {
		t.Errorf("only %d values with 17 significant digits", seventeen)
	}
}

// TestAppendFloatEveryLayout compares appendFloat with strconv on values
// of every digit count (1 to 17) at every place of the decimal point that
// selects a different layout or shift (0.digits x 10^dp for dp from -6 to
// 9: the exponent form on both sides, the leading "0.", "0.0", "0.00" and
// "0.000", the point after each of the first six digits and integers
// padded with zeros), each sign, 50 random digit strings each.
func TestAppendFloatEveryLayout(t *testing.T) {
	r := rand.New(rand.NewPCG(13, 17))
	for nd := 1; nd <= 17; nd++ {
		for dp := -6; dp <= 9; dp++ {
			for range 50 {
				digits := make([]byte, nd)
				for i := range digits {
					digits[i] = byte('0' + r.IntN(10))
				}
				digits[0] = byte('1' + r.IntN(9))
				digits[nd-1] = byte('1' + r.IntN(9))
				text := "0." + string(digits) + "e" + strconv.Itoa(dp)
				v, err := strconv.ParseFloat(text, 64)
				if err != nil {
					t.Fatal(err)
				}
				checkFloat(t, v)
				checkFloat(t, -v)
			}
		}
	}
}

// chainLike returns n values like those of a chain file: long fractions
// around log posteriors and parameters, values rounded to a few decimals,
// tiny and huge magnitudes, small integers (steps and walker indices),
// repeated values and the occasional special value.
func chainLike(r *rand.Rand, n int) []float64 {
	vals := make([]float64, n)
	for i := range vals {
		var v float64
		switch r.IntN(10) {
		case 0, 1:
			v = -50 + 100*r.Float64() // ln posterior
		case 2:
			v = -14.5 + 0.1*r.NormFloat64() // log10 amplitude
		case 3:
			v = 13.0/3 + 0.2*r.NormFloat64() // spectral index
		case 4:
			v = float64(r.IntN(20001)) // step, walker
		case 5:
			v = math.Round(r.NormFloat64()*1e4) / math.Pow(10, float64(r.IntN(8))) // few digits
		case 6:
			v = r.NormFloat64() * math.Pow(10, float64(r.IntN(40)-20)) // 1.2e-15 and the like
		case 7:
			v = math.Ldexp(r.Float64(), r.IntN(200)-100)
		case 8:
			if i > 0 {
				v = vals[i-1] // a rejected walker repeats its value
			}
		default:
			switch r.IntN(50) {
			case 0:
				v = math.NaN()
			case 1:
				v = math.Inf(1 - 2*r.IntN(2))
			case 2:
				v = math.Copysign(0, -1)
			default:
				v = float64(r.IntN(100)) / 3
			}
		}
		vals[i] = v
	}
	return vals
}

// TestAppendFloatRandom compares appendFloat with strconv on a million
// random bit patterns (any sign, exponent and significand) and a million
// chain-like values.
func TestAppendFloatRandom(t *testing.T) {
	n := 1_000_000
	if testing.Short() {
		n = 100_000
	}
	r := rand.New(rand.NewPCG(7, 11))
	var got, want []byte
	for range n {
		v := math.Float64frombits(r.Uint64())
		got = appendFloat(got[:0], v)
		want = strconv.AppendFloat(want[:0], v, 'g', -1, 64)
		if string(got) != string(want) {
			t.Fatalf("%#016x: appendFloat gives %q, strconv %q", math.Float64bits(v), got, want)
		}
	}
	for _, v := range chainLike(r, n) {
		got = appendFloat(got[:0], v)
		want = strconv.AppendFloat(want[:0], v, 'g', -1, 64)
		if string(got) != string(want) {
			t.Fatalf("%#016x: appendFloat gives %q, strconv %q", math.Float64bits(v), got, want)
		}
	}
}

// TestDecimalLen checks decimalLen against the length of strconv's
// decimal text at every power of ten and its neighbours.
func TestDecimalLen(t *testing.T) {
	for k := range 20 {
		p := pow10u64[k]
		for _, d := range []uint64{p - 1, p, p + 1, 2 * p, 9*p + (p - 1)} {
			if d == 0 || d < p-1 {
				continue
			}
			if got, want := decimalLen(d), len(strconv.FormatUint(d, 10)); got != want {
				t.Errorf("decimalLen(%d) = %d, want %d", d, got, want)
			}
		}
	}
}

// TestPow10Tab recomputes every entry of pow10Tab exactly with math/big:
// floor(10^k * 2^s) for the s that puts the top bit at bit 127, where
// 10^k * 2^s = 2^(128-1-floor(k*log2(10))).
func TestPow10Tab(t *testing.T) {
	for k := pow10Min; k <= pow10Max; k++ {
		s := 127 - mulLog2_10(k) // 2^127 <= 10^k * 2^s < 2^128
		num, den := big.NewInt(1), big.NewInt(1)
		p := new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(max(k, -k))), nil)
		if k >= 0 {
			num.Set(p)
		} else {
			den.Set(p)
		}
		if s >= 0 {
			num.Lsh(num, uint(s))
		} else {
			den.Lsh(den, uint(-s))
		}
		q := new(big.Int).Quo(num, den)
		if q.BitLen() != 128 {
			t.Fatalf("1e%d: mantissa has %d bits, want 128 (floor(k log2 10) wrong?)", k, q.BitLen())
		}
		hi := new(big.Int).Rsh(q, 64).Uint64()
		lo := new(big.Int).Mod(q, new(big.Int).Lsh(big.NewInt(1), 64)).Uint64()
		if e := pow10Tab[k-pow10Min]; e.Hi != hi || e.Lo != lo {
			t.Errorf("1e%d: table {%#x, %#x}, want {%#x, %#x}", k, e.Hi, e.Lo, hi, lo)
		}
	}
}

// FuzzAppendFloatMatchesStrconv compares appendFloat with strconv on the
// float64 of any 64 bits.
func FuzzAppendFloatMatchesStrconv(f *testing.F) {
	for _, v := range []float64{0, math.Copysign(0, -1), 1, 1e6, 1e-5, 1e21, 5e-324, math.MaxFloat64,
		math.NaN(), math.Inf(-1), -12.3456789012345, 4.33333333333, 1.2e-15, 0x1p-1022} {
		f.Add(math.Float64bits(v))
	}
	f.Fuzz(func(t *testing.T, bits uint64) {
		checkFloat(t, math.Float64frombits(bits))
	})
}

// BenchmarkAppendFloat formats the same values with strconv and with
// appendFloat: chain-like values (mixed, from
// chainLike) and the values of an ensemble's rows in order (rows, from
// ensembleStream, where a rejected walker repeats its row); ns/op is per
// value.
func BenchmarkAppendFloat(b *testing.B) {
	var rows []float64
	for _, r := range ensembleStream(2000) {
		rows = append(rows, r...)
	}
	for _, c := range []struct {
		name string
		vals []float64
	}{{"mixed", chainLike(rand.New(rand.NewPCG(3, 5)), 1<<16)}, {"rows", rows}} {
		vals := c.vals
		buf := make([]byte, 0, 64)
		b.Run(c.name+"/strconv", func(b *testing.B) {
			for i := 0; b.Loop(); i++ {
				buf = strconv.AppendFloat(buf[:0], vals[i%len(vals)], 'g', -1, 64)
			}
		})
		b.Run(c.name+"/new", func(b *testing.B) {
			for i := 0; b.Loop(); i++ {
				buf = appendFloat(buf[:0], vals[i%len(vals)])
			}
		})
	}
}

// TestDigits8 compares digits8 with strconv's zero-padded decimal text on
// every four-digit value in each half (x = a*10^4 + a and x = a*10^4 +
// 9999 - a for every a below 10^4, which puts every value in every lane)
// and on random values below 10^8.
func TestDigits8(t *testing.T) {
	check := func(x uint32) {
		var got [8]byte
		binary.LittleEndian.PutUint64(got[:], digits8(x))
		want := strconv.FormatUint(uint64(x)+1e8, 10)[1:]
		if string(got[:]) != want {
			t.Fatalf("digits8(%d) = %q, want %q", x, got, want)
		}
	}
	for a := range uint32(10000) {
		check(a*10000 + a)
		check(a*10000 + 9999 - a)
	}
	r := rand.New(rand.NewPCG(1, 1))
	for range 100000 {
		check(r.Uint32N(1e8))
	}
}
