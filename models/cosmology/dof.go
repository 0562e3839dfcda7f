package cosmology

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"
	"tautline/internal/numeric"
)

// A species is one Standard Model particle (with its antiparticle where it
// has one) in the ideal-gas sum for g*(T) and g*s(T).
type species struct {
	mass    float64 // GeV
	dof     float64 // internal degrees of freedom (spin, colour, antiparticle)
	fermion bool
	sector  int // sectorFree, sectorQGP (above the crossover) or sectorHadron
}

const (
	sectorFree = iota
	sectorQGP
	sectorHadron
)

// Masses in GeV (particle-data averages, rounded; from memory). Quarks carry
// current masses; the QCD crossover is modelled, not computed (see qcdWeight).
var smSpecies = [...]species{
	{0, 2, false, sectorFree},          // photon
	{80.377, 6, false, sectorFree},     // W+ W-, 3 polarisations each
	{91.1876, 3, false, sectorFree},    // Z
	{125.25, 1, false, sectorFree},     // Higgs
	{0.000510999, 4, true, sectorFree}, // electron
	{0.1056584, 4, true, sectorFree},   // muon
	{1.77686, 4, true, sectorFree},     // tau
	{172.69, 12, true, sectorQGP},      // top
	{4.18, 12, true, sectorQGP},        // bottom
	{1.27, 12, true, sectorQGP},        // charm
	{0.0934, 12, true, sectorQGP},      // strange
	{0.00467, 12, true, sectorQGP},     // down
	{0.00216, 12, true, sectorQGP},     // up
	{0, 16, false, sectorQGP},          // gluons
	{0.13957, 2, false, sectorHadron},  // pi+ pi-
	{0.13498, 1, false, sectorHadron},  // pi0
	{0.49368, 2, false, sectorHadron},  // K+ K-
	{0.49761, 2, false, sectorHadron},  // K0 K0bar
	{0.54786, 1, false, sectorHadron},  // eta
	{0.77526, 9, false, sectorHadron},  // rho (3 charges x 3 polarisations)
	{0.78266, 3, false, sectorHadron},  // omega
	{0.89167, 12, false, sectorHadron}, // K* (4 states x 3 polarisations)
	{0.93827, 4, true, sectorHadron},   // proton, antiproton
	{0.93957, 4, true, sectorHadron},   // neutron, antineutron
	{0.95778, 1, false, sectorHadron},  // eta'
	{1.019461, 3, false, sectorHadron}, // phi
	{1.115683, 4, true, sectorHadron},  // Lambda
	{1.232, 32, true, sectorHadron},    // Delta (4 charges x 4 spins x 2)
	{1.18937, 12, true, sectorHadron},  // Sigma
}

const (
	electronMass = 0.000510999 // GeV
	// The crossover centre and width in ln T. The width keeps
	// d ln g*s / d ln T well below 3 so that T a g*s^(1/3) stays monotonic;
	// lattice results place the pseudo-critical temperature near 155 MeV and
	// the rise of g* over roughly 120-300 MeV (from memory).
	qcdCentre = 0.17 // GeV
	qcdWidth  = 0.3  // in ln T
	// Neutrinos: 3 flavours, particle + antiparticle, one helicity each.
	neutrinoDOF = 6
)

// qcdWeight is the weight of the free quark-gluon gas; 1-qcdWeight goes to
// the hadron resonance gas. This smooth interpolation is an approximation to
// the lattice equation of state, good to perhaps 10-20 % in g* between 100
// and 300 MeV and exact outside that range.
func qcdWeight(T float64) float64 {
	return 0.5 * (1 + math.Tanh(math.Log(T/qcdCentre)/qcdWidth))
}

// thermo evaluates the normalised ideal-gas energy and entropy integrals
//
//	J_rho(x) = (15/pi^4) integral_0^inf y^2 E / (e^E -+ 1) dy
//	J_s(x)   = (45/(4 pi^4)) integral_0^inf (y^2 E + y^4/(3E)) / (e^E -+ 1) dy
//
// with E = sqrt(y^2 + x^2), x = m/T, by fixed Gauss-Legendre quadrature
// (converged to better than 1e-10 at n = 160 for all x, checked in tests).
// A massless boson has J = 1, a massless fermion 7/8.
type thermo struct {
	y, w []float64 // nodes and weights on [0, 1]
}

func newThermo(n int) thermo {
	t := thermo{y: make([]float64, n), w: make([]float64, n)}
	quad.Legendre{}.FixedLocations(t.y, t.w, 0, 1)
	return t
}

func (t thermo) integrals(x float64, fermion bool) (jrho, js float64) {
	if x > 45 {
		return 0, 0
	}
	sign := -1.0
	if fermion {
		sign = 1
	}
	ymax := math.Sqrt((x+60)*(x+60) - x*x)
	var sr, ss float64
	for i, u := range t.y {
		y := u * ymax
		e := math.Sqrt(y*y + x*x)
		var occ float64
		if e > 0 {
			occ = 1 / (math.Exp(e) + sign)
		}
		w := t.w[i] * ymax
		sr += w * y * y * e * occ
		if e > 0 {
			ss += w * (y*y*e + y*y*y*y/(3*e)) * occ
		}
	}
	return 15 / math.Pow(math.Pi, 4) * sr, 45 / (4 * math.Pow(math.Pi, 4)) * ss
}

// thermoTable holds J_rho and J_s for bosons and fermions on a uniform grid
// in ln x (step 0.005, x from e^-25 to 45), so that g*(T) costs four cubic
// interpolations per species instead of four quadratures; the cubic
// interpolation error is below 1e-9 (checked in tests). Below the grid the
// massless values apply; above x = 45 the integrals vanish (< 1e-18).
type thermoTable struct {
	rho, s [2][]float64 // [boson, fermion]
}

const (
	thermoLnX0   = -25.0
	thermoLnXStp = 0.005
	thermoXMax   = 45.0
)

func newThermoTable(th thermo) thermoTable {
	n := int(math.Ceil((math.Log(thermoXMax)-thermoLnX0)/thermoLnXStp)) + 4
	var t thermoTable
	for k, fermion := range []bool{false, true} {
		t.rho[k] = make([]float64, n)
		t.s[k] = make([]float64, n)
		for i := range n {
			t.rho[k][i], t.s[k][i] = th.integrals(math.Exp(thermoLnX0+float64(i)*thermoLnXStp), fermion)
		}
	}
	return t
}

func (t thermoTable) integrals(x float64, fermion bool) (jrho, js float64) {
	if x > thermoXMax {
		return 0, 0
	}
	k := 0
	if fermion {
		k = 1
	}
	if x <= 0 {
		return t.rho[k][0], t.s[k][0]
	}
	u := (math.Log(x) - thermoLnX0) / thermoLnXStp
	return numeric.Lagrange4(t.rho[k], u), numeric.Lagrange4(t.s[k], u)
}

// dofAt returns g*(T) and g*s(T) at temperature T (GeV) for the Standard
// Model content with nEff effective neutrino species.
//
// Neutrinos are in equilibrium while e+e- are relativistic; their temperature
// follows from entropy conservation of the photon-electron plasma after
// (instantaneous) decoupling, (T_nu/T)^3 = (2 + 4 J_s,e)/(11/2). The excess
// nEff - 3 (non-instantaneous decoupling) is switched on in proportion to the
// fraction of electron entropy already transferred, so that g* = 10.75 above
// an MeV and g*0 = 2 + (7/4) nEff (4/11)^(4/3) today.
func dofAt(th thermoTable, T, nEff float64) (gs, gss float64) {
	wq := qcdWeight(T)
	for _, s := range smSpecies {
		jr, js := th.integrals(s.mass/T, s.fermion)
		w := 1.0
		switch s.sector {
		case sectorQGP:
			w = wq
		case sectorHadron:
			w = 1 - wq
		}
		gs += w * s.dof * jr
		gss += w * s.dof * js
	}
	_, jse := th.integrals(electronMass/T, true)
	jse0 := 7.0 / 8.0
	r3 := (2 + 4*jse) / (2 + 4*jse0) // (T_nu/T)^3
	transferred := 1 - jse/jse0
	excess := nEff/3 - 1
	rhoFac := math.Pow(r3, 4.0/3.0) * (1 + excess*transferred)
	sFac := r3 * math.Pow(1+excess*transferred, 0.75)
	gs += neutrinoDOF * 7.0 / 8.0 * rhoFac
	gss += neutrinoDOF * 7.0 / 8.0 * sFac
	return gs, gss
}
