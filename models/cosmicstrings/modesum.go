package cosmicstrings

import "math"

// A modeSummer holds the fundamental-mode spectrum Omega^(1) of a loop
// population on a grid in frequency and sums the harmonics,
//
//	Omega_GW(f) = sum_{k=1}^{N} k^(-q) Omega^(1)(f/k),
//
// which holds for every loop number density n(l, t) because harmonic k of
// a loop of length l radiates at 2k/l with power Gamma k^(-q)/zeta(q)
// (docs/physics.md section 3): the first 32 terms are summed directly with
// cubic interpolation on the grid, the rest by the Euler-Maclaurin formula.
// The grid is uniform in y = ln(f - f_low), where f_low is the population's
// lowest frequency. Its buffers are reused, so it is not safe for concurrent
// use.
type modeSummer struct {
	q     float64 // spectral index of the emission
	modes int     // harmonics summed; 0 means all
	step  float64 // spacing of the Omega^(1) grid in y

	// Omega^(1) grid: om1[j] at y = ln(f - fLow) = y0 + j step, that is
	// at ln f = sNode[j]; cum is the running integral used by modeSum.
	lnFLow, fLow, y0 float64
	om1, sNode, cum  []float64
}

// edgeDepth is how close to the cutoff f_low = 2/(alpha t0) the Omega^(1)
// grid starts, as a fraction of f_low: Omega^(1) rises linearly from zero
// there, so the neglected sliver contributes below 1e-8 of any sum.
const edgeDepth = 1e-4

// fill tabulates Omega^(1) = om1(ln f), which vanishes at and below
// f_low = e^lnFLow, on a grid uniform in y = ln(f - f_low) covering the
// arguments f/k needed by the mode sum for frequencies in [fmin, fmax].
// The variable y resolves the steep rise of Omega^(1) just above its cutoff
// (over about 0.05 in ln f for the one-scale model, because H0 t0 = 0.95
// makes the lower time limit move fast) and is ln f far above it. It also
// stores the running trapezoidal integral of W = e^(s (q-1)) Omega^(1) over
// s = ln f for the Euler-Maclaurin tail.
func (d *modeSummer) fill(fmin, fmax, lnFLow float64, om1 func(lnf float64) float64) {
	d.lnFLow = lnFLow
	fLow := math.Exp(d.lnFLow)
	d.fLow = fLow
	y0 := d.lnFLow + math.Log(edgeDepth)
	if d.modes > 0 {
		if need := fmin / float64(d.modes); need-fLow > edgeDepth*fLow {
			y0 = math.Log(need-fLow) - 2*d.step
		}
	}
	y1 := math.Log(fmax-fLow) + 3*d.step
	if !(fmax > fLow) || y1 < y0 {
		y1 = y0 + 4*d.step
	}
	d.y0 = y0
	n := int(math.Ceil((y1-y0)/d.step)) + 1
	if cap(d.om1) < n {
		d.om1 = make([]float64, n)
		d.sNode = make([]float64, n)
		d.cum = make([]float64, n)
	}
	d.om1, d.sNode, d.cum = d.om1[:n], d.sNode[:n], d.cum[:n]
	q := d.q
	for j := range d.om1 {
		lnf := math.Log(fLow + math.Exp(y0+float64(j)*d.step))
		d.sNode[j] = lnf
		d.om1[j] = om1(lnf)
		if j == 0 {
			d.cum[0] = 0
			continue
		}
		wa := math.Exp(d.sNode[j-1]*(q-1)) * d.om1[j-1]
		wb := math.Exp(lnf*(q-1)) * d.om1[j]
		d.cum[j] = d.cum[j-1] + 0.5*(lnf-d.sNode[j-1])*(wa+wb)
	}
}

// yIndex returns the fractional grid index of ln f = lnx (-Inf at and below
// the cutoff) and d y / d ln f.
func (d *modeSummer) yIndex(lnx float64) (s, dydlnx float64) {
	x := math.Exp(lnx)
	if !(x > d.fLow) {
		return math.Inf(-1), 0
	}
	return (math.Log(x-d.fLow) - d.y0) / d.step, x / (x - d.fLow)
}

// om1Interp returns Omega^(1) and its derivative with respect to ln f at
// ln f = lnx by 4-point Lagrange interpolation in y; zero below the grid.
func (d *modeSummer) om1Interp(lnx float64) (v, dv float64) {
	s, jac := d.yIndex(lnx)
	if s < -1 {
		return 0, 0
	}
	i := int(math.Floor(s)) - 1
	u := s - float64(i)
	var p [4]float64
	for m := range 4 {
		k := i + m
		if k >= 0 && k < len(d.om1) {
			p[m] = d.om1[k]
		}
	}
	v = -p[0]*(u-1)*(u-2)*(u-3)/6 + p[1]*u*(u-2)*(u-3)/2 - p[2]*u*(u-1)*(u-3)/2 + p[3]*u*(u-1)*(u-2)/6
	dv = (-p[0]*(3*u*u-12*u+11)/6 + p[1]*(3*u*u-10*u+6)/2 - p[2]*(3*u*u-8*u+3)/2 + p[3]*(3*u*u-6*u+2)/6) / d.step * jac
	return v, dv
}

// modeSum returns sum_k k^(-q) Omega^(1)(f/k) for k = 1..Modes (or to
// infinity), using Euler-Maclaurin beyond exactModes:
//
//	sum_{k=K+1}^{N} g(k) = integral_K^N g dk + (g(N) - g(K))/2 + (g'(N) - g'(K))/12 + O(g'''),
//
// where integral_K^N g dk = f^(1-q) integral ds e^(s(q-1)) Omega^(1)(e^s)
// over s = ln(f/k), done by the trapezoidal rule on the grid nodes.
func (d *modeSummer) modeSum(f float64) float64 {
	q := d.q
	lnf := math.Log(f)
	N := d.modes
	kmax := exactModes
	if N > 0 && N < kmax {
		kmax = N
	}
	var sum float64
	for k := 1; k <= kmax; k++ {
		lk := math.Log(float64(k))
		v, _ := d.om1Interp(lnf - lk)
		sum += math.Exp(-q*lk) * v
	}
	if N > 0 && N <= exactModes {
		return sum
	}
	// g(k) and g'(k) at k = e^lk.
	gAt := func(lk float64) (g, gp float64) {
		v, dv := d.om1Interp(lnf - lk)
		g = math.Exp(-q*lk) * v
		gp = -math.Exp(-(q+1)*lk) * (q*v + dv)
		return g, gp
	}
	lnK := math.Log(exactModes)
	gK, gpK := gAt(lnK)
	sum += -gK/2 - gpK/12
	sHi := lnf - lnK  // ln of the argument f/k at k = K
	sLo := d.sNode[0] // Omega^(1) is negligible below the grid
	if N > 0 {
		lnN := math.Log(float64(N))
		if lnf-lnN > sLo {
			sLo = lnf - lnN
			gN, gpN := gAt(lnN)
			sum += gN/2 + gpN/12
		}
	}
	if sHi <= sLo {
		return sum
	}
	W := func(s float64) float64 { v, _ := d.om1Interp(s); return math.Exp(s*(q-1)) * v }
	// Nodes strictly inside (sLo, sHi).
	a, _ := d.yIndex(sLo)
	b, _ := d.yIndex(sHi)
	ja := max(int(math.Floor(a))+1, 0)
	jb := min(int(math.Ceil(b))-1, len(d.om1)-1)
	var integral float64
	if ja > jb {
		integral = 0.5 * (sHi - sLo) * (W(sLo) + W(sHi))
	} else {
		sa, sb := d.sNode[ja], d.sNode[jb]
		wa := math.Exp(sa*(q-1)) * d.om1[ja]
		wb := math.Exp(sb*(q-1)) * d.om1[jb]
		integral = 0.5*(sa-sLo)*(W(sLo)+wa) + (d.cum[jb] - d.cum[ja]) + 0.5*(sHi-sb)*(wb+W(sHi))
	}
	return sum + math.Exp(lnf*(1-q))*integral
}
