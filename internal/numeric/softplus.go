package numeric

import "math"

// softplus table: nodes d_k = -k h, h = 1/softplusPerUnit, for d in
// [-softplusMax, 0]; beyond it ln(1 + e^d) = e^d to double precision
// (the next term, e^{2d}/2, is below 2^-57 of it).
const (
	softplusPerUnit = 128
	softplusMax     = 40
	softplusNodes   = softplusMax*softplusPerUnit + 1
)

// softplusTab holds, for every node d_k, the Taylor coefficients of
// ln(1 + e^x) about d_k: the value ln(1 + e^{d_k}), the logistic sigmoid
// s = 1/(1 + e^{-d_k}) (the first derivative) and f^(n)(d_k)/n! for
// n = 2..5 (see Softplus). Precomputing the last four saves three
// divisions a call; they are the same expressions of s a call would
// evaluate, so the results are the same bits. It is filled once at
// package initialisation and only read afterwards.
var softplusTab = func() *[softplusNodes][6]float64 {
	var t [softplusNodes][6]float64
	for k := range t {
		d := -float64(k) / softplusPerUnit
		e := math.Exp(d)
		t[k] = softplusNode(math.Log1p(e), e/(1+e))
	}
	return &t
}()

// softplusNode returns the coefficients of a table node from its value f0
// and sigmoid s.
func softplusNode(f0, s float64) [6]float64 {
	t := s * (1 - s)
	u := 1 - 2*s
	return [6]float64{f0, s, t / 2, t * u / 6, t * (1 - 6*t) / 24, t * u * (1 - 12*t) / 120}
}

// Softplus returns ln(1 + e^x) to within a few units in the last place,
// several times faster than math.Log1p(math.Exp(x)).
//
// For x <= 0 it evaluates the degree-5 Taylor polynomial of the function
// about the nearest node of a table with spacing h = 1/128: the
// derivatives of softplus are polynomials in the sigmoid s = 1/(1 + e^-x)
// (with t = s(1 - s): f^(1) = s, f^(2) = t, f^(3) = t(1 - 2s),
// f^(4) = t(1 - 6t), f^(5) = t(1 - 2s)(1 - 12t)), and the remainder is
// below (h/2)^6/720 max|f^(6)| < 1e-17. Below x = -40 it returns e^x;
// for x > 0 it uses ln(1 + e^x) = x + ln(1 + e^-x).
func Softplus(x float64) float64 {
	if x > 0 {
		if x > softplusMax {
			return x + math.Exp(-x)
		}
		return x + softplusNeg(-x)
	}
	if !(x >= -softplusMax) { // also NaN
		if x != x {
			return x
		}
		return math.Exp(x)
	}
	return softplusNeg(x)
}

// softplusNeg is Softplus for x in [-softplusMax, 0].
func softplusNeg(x float64) float64 {
	k := int(-x*softplusPerUnit + 0.5)
	n := &softplusTab[k]
	// x - d_k is exact (Sterbenz: the two are within a factor of 2).
	d := x + float64(k)/softplusPerUnit
	return n[0] + d*(n[1]+d*(n[2]+d*(n[3]+d*(n[4]+d*n[5]))))
}
