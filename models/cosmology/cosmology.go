// Package cosmology provides the flat Lambda-CDM background on which the
// string-network spectrum is computed: H(z), cosmic time t(z), the scale
// factor a(t), the photon temperature T(z) and the relativistic degrees of
// freedom g*(T), g*s(T).
//
// The expansion rate is
//
//	H(z)^2 = H0^2 [Omega_L + Omega_m (1+z)^3 + Omega_r Gdof(z) (1+z)^4],
//	Gdof(z) = (g*(T)/g*0) (g*s0/g*s(T))^(4/3),
//
// with Omega_r = Omega_gamma (1 + 7/8 (4/11)^(4/3) N_eff), Omega_gamma from
// a_rad T_CMB^4 / rho_c, Omega_L = 1 - Omega_m - Omega_r (flat), and T(z)
// from entropy conservation, g*s(T)^(1/3) T a = g*s0^(1/3) T_CMB.
// g*(T) and g*s(T) are sums over the Standard Model particles of the exact
// ideal-gas energy and entropy integrals for each mass; the quark-gluon to
// hadron crossover is a smooth tanh interpolation in ln T centred at 170 MeV
// between a free quark-gluon gas and a hadron resonance gas. That crossover
// is approximate (10-20 % in g* between about 100 and 300 MeV); everything
// else is exact for free particles.
//
// New integrates t(a) = integral da / (a H) once on a fine grid in ln a and
// stores ln t(ln a) and ln a(ln t) with their exact derivatives
// (d ln a / d ln t = H t) for cubic Hermite interpolation; no method
// integrates anything afterwards.
package cosmology

import (
	"errors"
	"fmt"
	"math"

	"tautline/internal/numeric"
	"tautline/models/gw"
)

// Physical constants (CODATA 2018 exact or recommended values).
const (
	speedOfLight = 299792458.0     // m/s
	gravitation  = 6.67430e-11     // m^3 kg^-1 s^-2
	boltzmann    = 1.380649e-23    // J/K
	hbar         = 1.054571817e-34 // J s
	electronVolt = 1.602176634e-19 // J
	// Gyr is 1e9 Julian years in seconds.
	Gyr = 1e9 * gw.JulianYear
	// kelvinGeV converts a temperature in K to k_B T in GeV.
	kelvinGeV = boltzmann / electronVolt * 1e-9
)

// Degrees-of-freedom treatments accepted in Params.DOF.
const (
	DOFStandardModel = "standard-model"
	DOFConstant      = "constant"
)

// Params are the background's parameters.
type Params struct {
	// H0 is the Hubble constant in km/s/Mpc.
	H0 float64
	// OmegaM is the matter density today in units of the critical density.
	OmegaM float64
	// TCMB is the photon temperature today in K.
	TCMB float64
	// Neff is the effective number of neutrino species.
	Neff float64
	// DOF is DOFStandardModel (the default when empty) or DOFConstant, for
	// which Gdof = 1 and g*, g*s keep their present-day values.
	DOF string
}

// Fiducial returns the default parameters: H0 = 67.4 km/s/Mpc,
// Omega_m = 0.315, T_CMB = 2.7255 K, N_eff = 3.046, standard-model
// degrees of freedom (Aghanim et al. 2020, A&A 641, A6, from memory).
func Fiducial() Params {
	return Params{H0: 67.4, OmegaM: 0.315, TCMB: 2.7255, Neff: 3.046, DOF: DOFStandardModel}
}

// Grid settings. The background covers e^-60 < a <= 1, that is temperatures
// up to about 1e13 GeV; g*(T) is tabulated between 1e-6 and 1e6 GeV and is
// constant outside (all Standard Model species are relativistic above, none
// but photons and neutrinos below).
const (
	lnAMin    = -60.0
	lnAStep   = 0.005
	lnTGMin   = -6 * math.Ln10 // ln(T/GeV) lower end of the g* table
	lnTGMax   = 6 * math.Ln10
	lnTGStep  = 0.01
	thermoN   = 160
	bisectMax = 200
)

// A Background is a tabulated flat Lambda-CDM cosmology. It is immutable
// after New and safe for concurrent use.
type Background struct {
	p                      Params
	h0                     float64 // s^-1
	omegaR, omegaG, omegaL float64
	g0, gs0                float64
	t0, zeq                float64

	// g* tables on a uniform ln T grid.
	lnTG          []float64
	gStar, gStarS []float64

	// Uniform ln a grid.
	lnT      []float64 // ln t(ln a)
	lnTemp   []float64 // ln T(ln a), T in GeV
	hT       []float64 // H t at each node: d ln a / d ln t
	lnH      []float64
	lnGdof   []float64
	lnTimeLo float64

	// Uniform ln t grid (inverse table).
	lnTime0, lnTimeStep float64
	lnAOfT              []float64
	hTOfT               []float64
}

// Errors returned by New.
var errDOF = errors.New("cosmology: DOF must be \"standard-model\" or \"constant\"")

// New tabulates the background for p. Construction takes tens of
// milliseconds (see BenchmarkNew).
func New(p Params) (*Background, error) {
	if p.DOF == "" {
		p.DOF = DOFStandardModel
	}
	switch {
	case !(p.H0 > 0 && p.H0 < 1000):
		return nil, fmt.Errorf("cosmology: H0 must be in (0, 1000) km/s/Mpc, got %g", p.H0)
	case !(p.OmegaM >= 0 && p.OmegaM < 1):
		return nil, fmt.Errorf("cosmology: OmegaM must be in [0, 1), got %g", p.OmegaM)
	case !(p.TCMB > 0 && p.TCMB < 100):
		return nil, fmt.Errorf("cosmology: TCMB must be in (0, 100) K, got %g", p.TCMB)
	case !(p.Neff >= 0 && p.Neff < 20):
		return nil, fmt.Errorf("cosmology: Neff must be in [0, 20), got %g", p.Neff)
	case p.DOF != DOFStandardModel && p.DOF != DOFConstant:
		return nil, fmt.Errorf("%w, got %q", errDOF, p.DOF)
	}
	b := &Background{p: p}
	b.h0 = gw.H0SI(p.H0)
	rhoC := 3 * b.h0 * b.h0 / (8 * math.Pi * gravitation) * speedOfLight * speedOfLight // J/m^3
	aRad := math.Pi * math.Pi * math.Pow(boltzmann, 4) / (15 * math.Pow(hbar, 3) * math.Pow(speedOfLight, 3))
	b.omegaG = aRad * math.Pow(p.TCMB, 4) / rhoC
	b.omegaR = b.omegaG * (1 + 7.0/8.0*math.Pow(4.0/11.0, 4.0/3.0)*p.Neff)
	b.omegaL = 1 - p.OmegaM - b.omegaR
	if b.omegaL < 0 {
		return nil, fmt.Errorf("cosmology: OmegaM = %g leaves negative Omega_Lambda", p.OmegaM)
	}
	b.g0 = 2 + 7.0/4.0*p.Neff*math.Pow(4.0/11.0, 4.0/3.0)
	b.gs0 = 2 + 7.0/4.0*3*math.Pow(p.Neff/3, 0.75)*4.0/11.0

	if err := b.tabulateDOF(); err != nil {
		return nil, err
	}
	if err := b.tabulateExpansion(); err != nil {
		return nil, err
	}
	return b, nil
}

func (b *Background) tabulateDOF() error {
	n := int(math.Round((lnTGMax-lnTGMin)/lnTGStep)) + 1
	b.lnTG = make([]float64, n)
	b.gStar = make([]float64, n)
	b.gStarS = make([]float64, n)
	th := newThermoTable(newThermo(thermoN))
	for i := range n {
		lt := lnTGMin + float64(i)*lnTGStep
		b.lnTG[i] = lt
		if b.p.DOF == DOFConstant {
			b.gStar[i], b.gStarS[i] = b.g0, b.gs0
			continue
		}
		b.gStar[i], b.gStarS[i] = dofAt(th, math.Exp(lt), b.p.Neff)
	}
	// Entropy conservation needs T g*s^(1/3) to increase with T.
	for i := 1; i < n; i++ {
		prev := b.lnTG[i-1] + math.Log(b.gStarS[i-1])/3
		cur := b.lnTG[i] + math.Log(b.gStarS[i])/3
		if !(cur > prev) {
			return fmt.Errorf("cosmology: T g*s^(1/3) not increasing near T = %g GeV", math.Exp(b.lnTG[i]))
		}
	}
	return nil
}

// GStar returns g*(T), the energy degrees of freedom, at temperature T in GeV.
func (b *Background) GStar(T float64) float64 { return b.dofInterp(b.gStar, T) }

// GStarS returns g*s(T), the entropy degrees of freedom, at T in GeV.
func (b *Background) GStarS(T float64) float64 { return b.dofInterp(b.gStarS, T) }

func (b *Background) dofInterp(tab []float64, T float64) float64 {
	if b.p.DOF == DOFConstant {
		return tab[0]
	}
	return numeric.Lagrange4(tab, (math.Log(T)-lnTGMin)/lnTGStep)
}

// lnEntropyT returns ln(T g*s(T)^(1/3)) for ln T (GeV).
func (b *Background) lnEntropyT(lt float64) float64 {
	return lt + math.Log(b.GStarS(math.Exp(lt)))/3
}

// solveLnTemp returns ln T (GeV) at scale factor e^x from entropy conservation.
func (b *Background) solveLnTemp(x float64) float64 {
	target := math.Log(b.p.TCMB*kelvinGeV) + math.Log(b.gs0)/3 - x
	if b.p.DOF == DOFConstant {
		return math.Log(b.p.TCMB*kelvinGeV) - x
	}
	// Newton's method from the guess with today's g*s, which converges in
	// a few steps because T g*s^(1/3) rises steeply with T; bisection on
	// the bracket [target - ln(200)/3, target] as a fallback.
	lt := target - math.Log(b.gs0)/3
	for range 30 {
		f := b.lnEntropyT(lt) - target
		d := (b.lnEntropyT(lt+1e-6) - b.lnEntropyT(lt-1e-6)) / 2e-6
		if !(d > 0) {
			break
		}
		step := f / d
		lt -= step
		if math.Abs(step) < 1e-12 {
			return lt
		}
	}
	f := func(lt float64) float64 { return b.lnEntropyT(lt) - target }
	return numeric.Bisect(f, target-math.Log(200.0)/3, target, 1e-13, bisectMax)
}

func (b *Background) gdofAtLnTemp(lt float64) float64 {
	if b.p.DOF == DOFConstant {
		return 1
	}
	T := math.Exp(lt)
	return b.GStar(T) / b.g0 * math.Pow(b.gs0/b.GStarS(T), 4.0/3.0)
}

func (b *Background) tabulateExpansion() error {
	n := int(math.Round(-lnAMin/lnAStep)) + 1
	b.lnT = make([]float64, n)
	b.lnTemp = make([]float64, n)
	b.hT = make([]float64, n)
	b.lnH = make([]float64, n)
	b.lnGdof = make([]float64, n)
	invH := make([]float64, n)
	for i := range n {
		x := lnAMin + float64(i)*lnAStep
		if i == n-1 {
			x = 0
		}
		lt := b.solveLnTemp(x)
		g := b.gdofAtLnTemp(lt)
		b.lnTemp[i] = lt
		b.lnGdof[i] = math.Log(g)
		h2 := b.omegaL + b.p.OmegaM*math.Exp(-3*x) + b.omegaR*g*math.Exp(-4*x)
		b.lnH[i] = math.Log(b.h0) + 0.5*math.Log(h2)
		invH[i] = math.Exp(-b.lnH[i])
	}
	// t(a_min) = 1/(2H): deep in radiation domination with constant g*
	// (all species relativistic at T ~ 1e13 GeV).
	t := 0.5 * invH[0]
	b.lnT[0] = math.Log(t)
	// Cumulative integral of dt/dx = 1/H: Simpson's rule on each pair of
	// half-steps using the midpoint H computed directly.
	for i := 1; i < n; i++ {
		x0 := lnAMin + float64(i-1)*lnAStep
		x1 := lnAMin + float64(i)*lnAStep
		if i == n-1 {
			x1 = 0
		}
		xm := 0.5 * (x0 + x1)
		lm := b.solveLnTemp(xm)
		gm := b.gdofAtLnTemp(lm)
		hm := b.h0 * math.Sqrt(b.omegaL+b.p.OmegaM*math.Exp(-3*xm)+b.omegaR*gm*math.Exp(-4*xm))
		t += (x1 - x0) / 6 * (invH[i-1] + 4/hm + invH[i])
		b.lnT[i] = math.Log(t)
	}
	for i := range n {
		b.hT[i] = math.Exp(b.lnH[i] + b.lnT[i])
	}
	b.t0 = math.Exp(b.lnT[n-1])
	b.lnTimeLo = b.lnT[0]

	// Inverse table on a uniform ln t grid with the same number of nodes.
	m := n
	b.lnTime0 = b.lnT[0]
	b.lnTimeStep = (b.lnT[n-1] - b.lnT[0]) / float64(m-1)
	b.lnAOfT = make([]float64, m)
	b.hTOfT = make([]float64, m)
	j := 0
	for i := range m {
		lt := b.lnTime0 + float64(i)*b.lnTimeStep
		if i == m-1 {
			lt = b.lnT[n-1]
		}
		for j < n-2 && b.lnT[j+1] < lt {
			j++
		}
		// Newton on the Hermite interpolant of ln t(x) within [x_j, x_j+1].
		x := lnAMin + float64(j)*lnAStep
		xHi := x + lnAStep
		if j+1 == n-1 {
			xHi = 0
		}
		u := x + (xHi-x)*(lt-b.lnT[j])/(b.lnT[j+1]-b.lnT[j])
		for range 30 {
			f, d := b.lnTOfLnA(u)
			du := (f - lt) / d
			u -= du
			if math.Abs(du) < 1e-14 {
				break
			}
		}
		b.lnAOfT[i] = u
		b.hTOfT[i] = 1 / b.dLnTdLnA(u)
	}

	// Matter-radiation equality: Omega_m (1+z)^3 = Omega_r Gdof (1+z)^4.
	// Omega_m - Omega_r Gdof e^(-ln a) rises through zero at equality; run
	// all bisectMax halvings (tolerance 0).
	eq := func(x float64) float64 {
		return b.p.OmegaM - b.omegaR*math.Exp(b.interpLnA(b.lnGdof, x))*math.Exp(-x)
	}
	b.zeq = math.Exp(-numeric.Bisect(eq, -20, 0, 0, bisectMax)) - 1
	for i := 1; i < m; i++ {
		if !(b.lnAOfT[i] > b.lnAOfT[i-1]) {
			return errors.New("cosmology: internal error: a(t) table not increasing")
		}
	}
	return nil
}

// lnTOfLnA returns ln t and d ln t / d ln a at ln a = x by cubic Hermite
// interpolation with the exact derivative 1/(H t).
func (b *Background) lnTOfLnA(x float64) (lt, d float64) {
	n := len(b.lnT)
	s := (x - lnAMin) / lnAStep
	i := int(s)
	if i < 0 {
		i = 0
	}
	if i > n-2 {
		i = n - 2
	}
	h := lnAStep
	if i == n-2 {
		h = -(lnAMin + float64(i)*lnAStep)
	}
	u := (x - (lnAMin + float64(i)*lnAStep)) / h
	return hermite(b.lnT[i], b.lnT[i+1], h/b.hT[i], h/b.hT[i+1], u, h)
}

func (b *Background) dLnTdLnA(x float64) float64 {
	_, d := b.lnTOfLnA(x)
	return d
}

// interpLnA interpolates a table on the ln a grid linearly.
func (b *Background) interpLnA(tab []float64, x float64) float64 {
	s := (x - lnAMin) / lnAStep
	if s <= 0 {
		return tab[0]
	}
	n := len(tab)
	i := int(s)
	if i >= n-1 {
		return tab[n-1]
	}
	u := s - float64(i)
	return tab[i]*(1-u) + tab[i+1]*u
}

// hermite evaluates the cubic Hermite interpolant on [0, 1] with end values
// p0, p1 and end slopes m0, m1 (per unit of u), returning the value and the
// derivative with respect to the original variable (u = (x - x0)/h).
func hermite(p0, p1, m0, m1, u, h float64) (v, d float64) {
	u2 := u * u
	u3 := u2 * u
	v = (2*u3-3*u2+1)*p0 + (u3-2*u2+u)*m0 + (-2*u3+3*u2)*p1 + (u3-u2)*m1
	d = ((6*u2-6*u)*p0 + (3*u2-4*u+1)*m0 + (-6*u2+6*u)*p1 + (3*u2-2*u)*m1) / h
	return v, d
}

// H0SI returns H0 in s^-1.
func (b *Background) H0SI() float64 { return b.h0 }

// Params returns the parameters the background was built with.
func (b *Background) Params() Params { return b.p }

// OmegaR returns the radiation density today (photons and neutrinos).
func (b *Background) OmegaR() float64 { return b.omegaR }

// OmegaGamma returns the photon density today.
func (b *Background) OmegaGamma() float64 { return b.omegaG }

// OmegaL returns the cosmological-constant density today.
func (b *Background) OmegaL() float64 { return b.omegaL }

// Age returns the age of the universe t0 in s.
func (b *Background) Age() float64 { return b.t0 }

// Zeq returns the redshift of matter-radiation equality.
func (b *Background) Zeq() float64 { return b.zeq }

// Teq returns the cosmic time of matter-radiation equality in s.
func (b *Background) Teq() float64 { return b.Time(b.zeq) }

// Gdof returns (g*(T)/g*0) (g*s0/g*s(T))^(4/3) at redshift z.
func (b *Background) Gdof(z float64) float64 {
	return math.Exp(b.interpLnA(b.lnGdof, -math.Log1p(z)))
}

// H returns the Hubble rate at redshift z in s^-1.
func (b *Background) H(z float64) float64 {
	x := -math.Log1p(z)
	g := b.Gdof(z)
	if x < lnAMin {
		g = math.Exp(b.lnGdof[0])
	}
	return b.h0 * math.Sqrt(b.omegaL+b.p.OmegaM*math.Exp(-3*x)+b.omegaR*g*math.Exp(-4*x))
}

// T returns the photon temperature at redshift z in GeV.
func (b *Background) T(z float64) float64 {
	return math.Exp(b.interpLnA(b.lnTemp, -math.Log1p(z)))
}

// Time returns the cosmic time at redshift z in s; z must lie in
// [0, 1e20) (clamped).
func (b *Background) Time(z float64) float64 {
	x := -math.Log1p(z)
	x = math.Max(lnAMin, math.Min(0, x))
	lt, _ := b.lnTOfLnA(x)
	return math.Exp(lt)
}

// LnTimeRange returns the range of ln(t/s) covered by the tables.
func (b *Background) LnTimeRange() (lo, hi float64) {
	return b.lnTime0, b.lnTime0 + b.lnTimeStep*float64(len(b.lnAOfT)-1)
}

// LnA returns ln a at ln t (t in s), a = 1 today, by cubic Hermite
// interpolation; clamped to the tabulated range.
func (b *Background) LnA(lnt float64) float64 {
	v, _ := b.lnAHT(lnt)
	return v
}

// HT returns H t = d ln a / d ln t at ln t.
func (b *Background) HT(lnt float64) float64 {
	_, d := b.lnAHT(lnt)
	return d
}

// LnAHT returns ln a and H t at ln t in one interpolation.
func (b *Background) LnAHT(lnt float64) (lnA, hT float64) { return b.lnAHT(lnt) }

func (b *Background) lnAHT(lnt float64) (float64, float64) {
	s := (lnt - b.lnTime0) / b.lnTimeStep
	n := len(b.lnAOfT)
	i := int(s)
	if s < 0 {
		i = 0
	}
	if i > n-2 {
		i = n - 2
	}
	u := s - float64(i)
	u = math.Max(0, math.Min(1, u))
	h := b.lnTimeStep
	return hermite(b.lnAOfT[i], b.lnAOfT[i+1], h*b.hTOfT[i], h*b.hTOfT[i+1], u, h)
}

// A returns the scale factor at cosmic time t (s).
func (b *Background) A(t float64) float64 { return math.Exp(b.LnA(math.Log(t))) }
