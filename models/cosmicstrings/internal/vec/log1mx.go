package vec

import "math"

// The log table's layout: logTabN nodes m_k = 1 + (k + 1/2)/logTabN
// spanning [1, 2).
const (
	logTabBits = 8
	logTabN    = 1 << logTabBits
	// ln 2 split as in the standard library's math.Log (fdlibm): ln2Hi
	// has 32 significant bits, so e ln2Hi is exact for the exponents here.
	ln2Hi = 6.93147180369123816490e-01
	ln2Lo = 1.90821492927058770002e-10
)

// Log1mxSwitch is the smallest x for which LogTable.Run takes ln(1 - x)
// from the table; below it a caller's Taylor series is shorter.
const Log1mxSwitch = 0x1p-10

// A LogTable holds, for each node m_k, (m_k, 1/m_k, ln(m_k/2), 0): 32
// bytes, one vector load per node. Init fills it.
type LogTable [logTabN][4]float64

// Init fills the table.
func (tab *LogTable) Init() {
	for k := range tab {
		mk := 1 + (float64(k)+0.5)/logTabN // exact: 9 significant bits
		tab[k] = [4]float64{mk, 1 / mk, math.Log(mk / 2), 0}
	}
}

// Run writes ln(1 - x), x = c invF[k], into dst[k] for the leading run of
// k with x >= 2^-10 (-Inf for x >= 1) and returns its length; invF must
// not increase. It is the metastable spectrum's edge term
// ln(1 - f_*/f) = ln(1 - e^-v) at the ascending frequencies below
// 1024 f_*, where a Taylor series would need many terms. With
// 1 - x = y + dy (y = fl(1 - x), dy exact) and y = 2^e m, m in [1, 2), it
// takes ln(1 - x) = (e + 1) ln 2 + ln(m_k/2) + ln(1 + r) with
// r = (m - m_k + 2^-e dy)/m_k, |r| < 2^-9, for the table node m_k nearest
// m (the table-driven reduction of Tang 1990, ACM TOMS 16, 378, from
// memory), and ln(1 + r) by its Taylor series to r^5 (remainder below
// |r|^6/6 < 1e-17, summed in Estrin's order for a shorter chain). Taking
// ln(m_k/2) from the table rather than ln m_k - ln 2 keeps the result
// accurate to a few ulp up to y = 1, and there is no division (math.Log
// and math.Log1p take one). With AVX2 four frequencies go at a time, with
// the same operations in the same order, so the results are identical.
func (tab *LogTable) Run(dst, invF []float64, c float64) int {
	dst = dst[:len(invF)]
	k0 := 0 // x >= 1 (f <= f_* by rounding) comes first
	for k0 < len(dst) && !(c*invF[k0] < 1) {
		dst[k0] = math.Inf(-1)
		k0++
	}
	k := k0 + log1mxHead(dst[k0:], invF[k0:], c, tab)
	for ; k < len(dst); k++ {
		x := c * invF[k]
		if x < Log1mxSwitch {
			return k
		}
		dst[k] = tab.log1mx(x)
	}
	return len(dst)
}

// log1mx is Run's scalar arithmetic for one x in [2^-10, 1).
func (tab *LogTable) log1mx(x float64) float64 {
	y := 1 - x
	// Both subtractions are exact (Sterbenz): for x >= 1/2 so is y, and
	// dy = 0; below, y is in (1/2, 1).
	dy := (1 - y) - x
	b := math.Float64bits(y) // y is normal: y >= 2^-53
	ex := b >> 52            // biased exponent, e + 1023
	n := &tab[b>>(52-logTabBits)&(logTabN-1)]
	m := math.Float64frombits(b&(1<<52-1) | 1023<<52)
	s := math.Float64frombits((2046 - ex) << 52) // 2^-e
	r := ((m - n[0]) + dy*s) * n[1]              // m - m_k and dy s are exact
	r2 := r * r
	p := r + r2*((-1.0/2+r*(1.0/3))+r2*(-1.0/4+r*(1.0/5)))
	e1 := float64(int(ex) - 1022) // e + 1 <= 0
	return (e1*ln2Hi + n[2]) + (p + e1*ln2Lo)
}
