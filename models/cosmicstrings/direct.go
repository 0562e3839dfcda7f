package cosmicstrings

import (
	"errors"
	"fmt"
	"math"

	"tautline/internal/numeric"
	"tautline/models/cosmology"
)

// expansion is what the spectrum needs from a background: ln a and H t at
// ln t, the tabulated time range (its upper end is today, a = 1), H0 in
// s^-1 and the time of matter-radiation equality. *cosmology.Background
// implements it; tests supply closed-form backgrounds.
type expansion interface {
	LnAHT(lnt float64) (lnA, hT float64)
	LnTimeRange() (lo, hi float64)
	H0SI() float64
	Teq() float64
}

// Numerical settings of the direct path. The accuracy they reach is measured
// in the tests (see TestOmega1Convergence and TestModeSumConvergence).
const (
	quadRel      = 1e-7 // relative tolerance of each Omega^(1) integral
	quadMaxIvls  = 400  // adaptive subintervals per integral
	panelWidth   = 6.0  // initial Gauss-Kronrod panels, in ln t
	omega1Step   = 0.04 // spacing of the Omega^(1) grid in y = ln(f - f_low)
	exactModes   = 32   // modes summed term by term before Euler-Maclaurin
	vosStep      = 0.01 // ln t step of the C_eff table
	formationPad = 1e-9 // keeps t_i strictly inside the tables
)

// network holds the immutable, shareable part of the computation: the
// background and the loop-production coefficient C_eff(t).
type network struct {
	s            Settings
	bg           expansion
	lnTLo, lnTHi float64 // network formation (table start) and today
	lnTeq        float64
	h0           float64
	zetaQ        float64
	cTab         []float64 // C_eff on lnTLo + i vosStep (VOS only)
}

func newNetwork(s Settings, bg expansion) (*network, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	n := &network{s: s, bg: bg, h0: bg.H0SI(), zetaQ: zeta(s.Q)}
	n.lnTLo, n.lnTHi = bg.LnTimeRange()
	n.lnTeq = math.Log(bg.Teq())
	if s.CEff == CEffVOS {
		m := int((n.lnTHi-n.lnTLo)/vosStep) + 2
		ht := func(lnt float64) float64 { _, h := bg.LnAHT(lnt); return h }
		lnC, err := solveVOS(ht, n.lnTLo, vosStep, m)
		if err != nil {
			return nil, err
		}
		n.cTab = make([]float64, m)
		for i, v := range lnC {
			n.cTab[i] = math.Exp(v)
		}
	}
	return n, nil
}

// cEff returns C_eff at birth time e^lnti.
func (n *network) cEff(lnti float64) float64 {
	if n.s.CEff == CEffStep {
		if lnti < n.lnTeq {
			return CEffRadiation
		}
		return CEffMatter
	}
	return numeric.Lagrange4(n.cTab, (lnti-n.lnTLo)/vosStep)
}

// A Direct computes Omega_GW(f) by quadrature, following PHYSICS.md
// section 3:
//
//	Omega^(k)(f) = (8 pi / (3 H0^2)) (Gmu)^2 (2k/f) F Gamma_k / (alpha (alpha + Gamma Gmu))
//	               * integral dt C_eff(t_i) / t_i^4 (a(t)/a0)^5 (a(t_i)/a(t))^3,
//
// with l = 2k a(t)/(a0 f), t_i = (l + Gamma Gmu t)/(alpha + Gamma Gmu),
// t_i <= t and t_i after network formation (the start of the background
// table, T of order 1e13 GeV), Gamma_k = Gamma k^(-q)/zeta(q), and the loop
// density scaled by P^(-kappa). The fundamental mode is integrated in ln t
// with adaptive Gauss-Kronrod on a grid of spacing 0.04 in ln(f - f_low), and the
// harmonics use Omega^(k)(f) = (Gamma_k/Gamma_1) Omega^(1)(f/k): the first
// 32 terms are summed directly (cubic interpolation on the grid), the rest
// by the Euler-Maclaurin formula with the integral over k done by the
// trapezoidal rule on the same grid.
//
// A Direct holds scratch buffers and is not safe for concurrent use; Clone
// gives an independent one sharing the immutable tables.
type Direct struct {
	n     *network
	gk    *adaptiveGK
	panel float64 // initial panel width in ln t
	step  float64 // ln f spacing of the Omega^(1) grid

	// current parameters
	gg, alpha, ln2f, lnPref float64
	edges                   []float64

	// Omega^(1) grid: om1[j] at y = ln(f - fLow) = y0 + j step, that is
	// at ln f = sNode[j]; cum is the running integral used by modeSum.
	lnFLow, fLow, y0 float64
	om1, sNode, cum  []float64
}

// NewDirect builds the background and the C_eff table for s (about half
// a second) and returns a direct evaluator.
func NewDirect(s Settings) (*Direct, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	bg, err := cosmology.New(s.Cosmology)
	if err != nil {
		return nil, fmt.Errorf("strings: %w", err)
	}
	return newDirectOn(s, bg)
}

func newDirectOn(s Settings, bg expansion) (*Direct, error) {
	n, err := newNetwork(s, bg)
	if err != nil {
		return nil, err
	}
	return n.direct(), nil
}

func (n *network) direct() *Direct {
	return &Direct{n: n, gk: newAdaptiveGK(quadRel, quadMaxIvls), panel: panelWidth, step: omega1Step, edges: make([]float64, 0, 64)}
}

// Clone returns an independent Direct sharing d's immutable tables.
func (d *Direct) Clone() *Direct { return d.n.direct() }

// Settings returns the settings d was built with.
func (d *Direct) Settings() Settings { return d.n.s }

var (
	errParams = errors.New("strings: Gmu, alpha must be in (0, 1e-2], (0, 10] and P in (0, 1]")
	errFreq   = errors.New("strings: frequencies must be positive and finite")
	errLen    = errors.New("strings: len(out) must equal len(f)")
)

// Omega writes Omega_GW(f_i) for tension gmu, loop size alpha and
// reconnection probability p into out.
func (d *Direct) Omega(f []float64, gmu, alpha, p float64, out []float64) error {
	if len(out) != len(f) {
		return errLen
	}
	if !(gmu > 0 && gmu <= 1e-2 && alpha > 0 && alpha <= 10 && p > 0 && p <= 1) {
		return fmt.Errorf("%w, got %g, %g, %g", errParams, gmu, alpha, p)
	}
	if len(f) == 0 {
		return nil
	}
	fmin, fmax := math.Inf(1), 0.0
	for _, v := range f {
		if !(v > 0 && v < math.Inf(1)) {
			return fmt.Errorf("%w, got %g", errFreq, v)
		}
		fmin, fmax = math.Min(fmin, v), math.Max(fmax, v)
	}
	d.setParams(gmu, alpha)
	d.fillOmega1(fmin, fmax)
	pf := math.Pow(p, -d.n.s.Kappa)
	for i, v := range f {
		out[i] = pf * d.modeSum(v)
	}
	return nil
}

// Omega1 returns the fundamental-mode spectrum Omega^(1)(f) at P = 1 by
// direct quadrature (no grid), with the quadrature's error estimate.
func (d *Direct) Omega1(f, gmu, alpha float64) (val, errEst float64) {
	d.setParams(gmu, alpha)
	return d.omega1At(math.Log(f))
}

func (d *Direct) setParams(gmu, alpha float64) {
	s := d.n.s
	d.gg = s.Gamma * gmu
	d.alpha = alpha
	gamma1 := s.Gamma / d.n.zetaQ
	d.lnPref = math.Log(8*math.Pi/(3*d.n.h0*d.n.h0)) + 2*math.Log(gmu) + math.Log(s.F*gamma1) -
		math.Log(alpha) - math.Log(alpha+d.gg)
}

// lnTi returns ln t_i for emission at ln t (ln2f = ln(2/f) is set).
func (d *Direct) lnTi(u float64) (lnti, lnA float64) {
	lnA, _ = d.n.bg.LnAHT(u)
	ti := (math.Exp(lnA+d.ln2f) + d.gg*math.Exp(u)) / (d.alpha + d.gg)
	return math.Log(ti), lnA
}

func (d *Direct) integrand(u float64) float64 {
	lnti, lnA := d.lnTi(u)
	if lnti < d.n.lnTLo {
		return 0
	}
	lnAi, _ := d.n.bg.LnAHT(lnti)
	return d.n.cEff(lnti) * math.Exp(d.lnPref+d.ln2f+u+3*lnAi+2*lnA-4*lnti)
}

// omega1At integrates the fundamental mode at ln f.
func (d *Direct) omega1At(lnf float64) (float64, float64) {
	d.ln2f = math.Ln2 - lnf
	lo, hi := d.n.lnTLo+formationPad, d.n.lnTHi
	// t_i <= t  <=>  l(t) <= alpha t; g decreases with t.
	g := func(u float64) float64 { lnA, _ := d.n.bg.LnAHT(u); return d.ln2f + lnA - math.Log(d.alpha) - u }
	if g(hi) > 0 {
		return 0, 0
	}
	if g(lo) < 0 {
		// Loops born before formation would radiate here: the lower limit
		// is where t_i reaches the start of the tables.
		lo = numeric.Bisect(func(u float64) float64 { v, _ := d.lnTi(u); return v - d.n.lnTLo - formationPad }, lo, hi, bisectTol, bisectMaxIter)
	} else {
		lo = numeric.Bisect(func(u float64) float64 { return -g(u) }, lo, hi, bisectTol, bisectMaxIter)
	}
	d.edges = d.edges[:0]
	np := int(math.Ceil((hi - lo) / d.panel))
	np = max(1, min(np, 48))
	split := math.NaN()
	if d.n.s.CEff == CEffStep {
		// C_eff jumps where t_i = t_eq: never integrate across it.
		if a, _ := d.lnTi(lo); a < d.n.lnTeq {
			if b, _ := d.lnTi(hi); b > d.n.lnTeq {
				split = numeric.Bisect(func(u float64) float64 { v, _ := d.lnTi(u); return v - d.n.lnTeq }, lo, hi, bisectTol, bisectMaxIter)
			}
		}
	}
	for i := 0; i <= np; i++ {
		x := lo + (hi-lo)*float64(i)/float64(np)
		if i == np {
			x = hi
		}
		if !math.IsNaN(split) && len(d.edges) > 0 && d.edges[len(d.edges)-1] < split && x > split {
			d.edges = append(d.edges, split)
		}
		d.edges = append(d.edges, x)
	}
	v, e, _ := d.gk.integrate(d.integrand, d.edges)
	return v, e
}

// The root searches of the integration limits halve their bracket (in ln t)
// until it is narrower than bisectTol, at most bisectMaxIter times.
const (
	bisectTol     = 1e-13
	bisectMaxIter = 100
)

// edgeDepth is how close to the cutoff f_low = 2/(alpha t0) the Omega^(1)
// grid starts, as a fraction of f_low: Omega^(1) rises linearly from zero
// there, so the neglected sliver contributes below 1e-8 of any sum.
const edgeDepth = 1e-4

// fillOmega1 tabulates Omega^(1) on a grid uniform in y = ln(f - f_low)
// covering the arguments f/k needed by the mode sum for frequencies in
// [fmin, fmax]. The variable y resolves the steep rise of Omega^(1) just
// above its cutoff (over about 0.05 in ln f, because H0 t0 = 0.95 makes the
// lower time limit move fast) and is ln f far above it. It also stores the
// running trapezoidal integral of W = e^(s (q-1)) Omega^(1) over s = ln f
// for the Euler-Maclaurin tail.
func (d *Direct) fillOmega1(fmin, fmax float64) {
	d.lnFLow = math.Ln2 - math.Log(d.alpha) - d.n.lnTHi
	fLow := math.Exp(d.lnFLow)
	d.fLow = fLow
	y0 := d.lnFLow + math.Log(edgeDepth)
	if d.n.s.Modes > 0 {
		if need := fmin / float64(d.n.s.Modes); need-fLow > edgeDepth*fLow {
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
	q := d.n.s.Q
	for j := range d.om1 {
		lnf := math.Log(fLow + math.Exp(y0+float64(j)*d.step))
		d.sNode[j] = lnf
		d.om1[j], _ = d.omega1At(lnf)
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
func (d *Direct) yIndex(lnx float64) (s, dydlnx float64) {
	x := math.Exp(lnx)
	if !(x > d.fLow) {
		return math.Inf(-1), 0
	}
	return (math.Log(x-d.fLow) - d.y0) / d.step, x / (x - d.fLow)
}

// om1Interp returns Omega^(1) and its derivative with respect to ln f at
// ln f = lnx by 4-point Lagrange interpolation in y; zero below the grid.
func (d *Direct) om1Interp(lnx float64) (v, dv float64) {
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
func (d *Direct) modeSum(f float64) float64 {
	q := d.n.s.Q
	lnf := math.Log(f)
	N := d.n.s.Modes
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
