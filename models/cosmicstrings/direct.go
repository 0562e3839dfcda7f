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

// A Direct computes Omega_GW(f) by quadrature, following docs/physics.md
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

	// current parameters
	gg, alpha, ln2f, lnPref float64
	edges                   []float64

	// the Omega^(1) grid and the mode sum over it
	modeSummer
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
	d := &Direct{n: n, gk: newAdaptiveGK(quadRel, quadMaxIvls), panel: panelWidth, edges: make([]float64, 0, 64)}
	d.modeSummer = modeSummer{q: n.s.Q, modes: n.s.Modes, step: omega1Step}
	return d
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
	d.fill(fmin, fmax, math.Ln2-math.Log(d.alpha)-d.n.lnTHi, d.omega1Val)
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

// omega1Val is omega1At without the error estimate.
func (d *Direct) omega1Val(lnf float64) float64 { v, _ := d.omega1At(lnf); return v }

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
		lo = bisect(func(u float64) float64 { v, _ := d.lnTi(u); return v - d.n.lnTLo - formationPad }, lo, hi)
	} else {
		lo = bisect(func(u float64) float64 { return -g(u) }, lo, hi)
	}
	d.edges = d.edges[:0]
	np := int(math.Ceil((hi - lo) / d.panel))
	np = max(1, min(np, 48))
	split := math.NaN()
	if d.n.s.CEff == CEffStep {
		// C_eff jumps where t_i = t_eq: never integrate across it.
		if a, _ := d.lnTi(lo); a < d.n.lnTeq {
			if b, _ := d.lnTi(hi); b > d.n.lnTeq {
				split = bisect(func(u float64) float64 { v, _ := d.lnTi(u); return v - d.n.lnTeq }, lo, hi)
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

// bisect finds the root of an increasing function on [lo, hi].
func bisect(f func(float64) float64, lo, hi float64) float64 {
	return numeric.Bisect(f, lo, hi, bisectTol, bisectMaxIter)
}
