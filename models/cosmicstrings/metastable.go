package cosmicstrings

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"

	"tautline/models/cosmology"
)

// PlanckTime is hbar/M_Planck = sqrt(hbar G/c^5) in s (CODATA 2018:
// hbar = 6.582119569e-25 GeV s over PlanckMassGeV).
const PlanckTime = 6.582119569e-25 / PlanckMassGeV

// MetastableSettings fix everything about a metastable string network that
// is not sampled: the one-scale settings of the loops it makes before it
// decays (Q, Gamma, F, Kappa, CEff, Modes, Cosmology), the loop size Alpha
// and the reconnection probability P, which are fixed here rather than
// sampled.
type MetastableSettings struct {
	Settings
	// Alpha is the loop length at birth over cosmic time (default 0.1).
	Alpha float64
	// P is the reconnection probability (default 1); the loop density
	// scales as P^(-Kappa).
	P float64
}

// DefaultMetastableSettings returns DefaultSettings with alpha = 0.1 and
// P = 1.
func DefaultMetastableSettings() MetastableSettings {
	return MetastableSettings{Settings: DefaultSettings(), Alpha: 0.1, P: 1}
}

// Validate reports the first invalid field.
func (s MetastableSettings) Validate() error {
	if err := s.Settings.Validate(); err != nil {
		return err
	}
	switch {
	case !(s.Alpha > 0 && s.Alpha <= 1):
		return fmt.Errorf("strings: metastable settings: Alpha must be in (0, 1], got %g", s.Alpha)
	case !(s.P > 0 && s.P <= 1):
		return fmt.Errorf("strings: metastable settings: P must be in (0, 1], got %g", s.P)
	}
	return nil
}

// metastableVersion changes whenever the metastable computation changes.
const metastableVersion = 1

// Hash identifies the settings and the version of the computation (hex
// SHA-256 of their canonical form).
func (s MetastableSettings) Hash() string {
	c := fmt.Sprintf("tautline-metastable v%d;alpha=%s;P=%s;%s", metastableVersion, hexBits(s.Alpha), hexBits(s.P), s.Settings.canonical())
	h := sha256.Sum256([]byte(c))
	return hex.EncodeToString(h[:])
}

// TableHash identifies what a MetastableTable stores, ln Omega at P = 1:
// Hash with Kappa and P set to 1, so that one table serves every P and
// Kappa (the table adds -Kappa ln P).
func (s MetastableSettings) TableHash() string {
	s.Kappa, s.P = 1, 1
	return s.Hash()
}

// String describes the settings for logs and reports.
func (s MetastableSettings) String() string {
	return fmt.Sprintf("metastable: alpha=%g P=%g %v", s.Alpha, s.P, s.Settings)
}

// DecayTime returns the time t_s = Gamma_d^(-1/2) in s at which a
// metastable network with tension gmu and sqrt(kappa) = sqrtKappa breaks
// up, Gamma_d = (mu/(2 pi)) exp(-pi kappa) being the rate of monopole-pair
// nucleation per unit length (Leblond, Shlaer & Siemens 2009, from
// memory; the rate and t_s as used by Buchmueller, Domcke & Schmitz 2021):
//
//	t_s = sqrt(2 pi / Gmu) exp(pi kappa / 2) t_Planck,
//
// with mu = Gmu M_Planck^2 in natural units.
func DecayTime(gmu, sqrtKappa float64) float64 {
	return math.Exp(lnDecayTime(gmu, sqrtKappa))
}

func lnDecayTime(gmu, sqrtKappa float64) float64 {
	return 0.5*math.Log(2*math.Pi/gmu) + 0.5*math.Pi*sqrtKappa*sqrtKappa + math.Log(PlanckTime)
}

// A MetastableDirect computes the spectrum of metastable strings by
// quadrature: the one-scale loops of Direct, produced until t_s, each
// surviving after t_s with the probability
// exp(-Gamma_d [l (t - t_s) + (1/2) Gamma Gmu (t - t_s)^2]) (population in
// loops.go); no loops are produced after t_s, and the network's long
// strings, gone at t_s, do not radiate in this model. For t_s at or after
// today the spectrum is exactly that of Direct with the same alpha.
//
// A MetastableDirect is not safe for concurrent use; Clone gives an
// independent one sharing the immutable tables.
type MetastableDirect struct {
	s MetastableSettings
	n *network
	p *popDirect
}

// NewMetastableDirect builds the background and the C_eff table for s.
func NewMetastableDirect(s MetastableSettings) (*MetastableDirect, error) {
	return onBackground(s, s.Cosmology, newMetastableOn)
}

// onBackground checks s, builds the background c and returns on(s, bg).
func onBackground[S interface{ Validate() error }, T any](s S, c cosmology.Params, on func(S, expansion) (T, error)) (T, error) {
	bg, err := newBackground(s, c)
	if err != nil {
		var zero T
		return zero, err
	}
	return on(s, bg)
}

// newBackground checks s and builds the background c for it.
func newBackground(s interface{ Validate() error }, c cosmology.Params) (*cosmology.Background, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	bg, err := cosmology.New(c)
	if err != nil {
		return nil, fmt.Errorf("strings: %w", err)
	}
	return bg, nil
}

func newMetastableOn(s MetastableSettings, bg expansion) (*MetastableDirect, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	n, err := newNetwork(s.Settings, bg)
	if err != nil {
		return nil, err
	}
	return n.metastable(s), nil
}

func (n *network) metastable(s MetastableSettings) *MetastableDirect {
	p := newPopDirect(n.bg, s.Q, s.Gamma, s.Modes)
	p.cEff = n.cEff
	p.cEffStep = s.CEff == CEffStep
	return &MetastableDirect{s: s, n: n, p: p}
}

// Clone returns an independent MetastableDirect sharing d's tables.
func (d *MetastableDirect) Clone() *MetastableDirect { return d.n.metastable(d.s) }

// Settings returns the settings d was built with.
func (d *MetastableDirect) Settings() MetastableSettings { return d.s }

var errMetaParams = errors.New("strings: metastable: Gmu must be in (0, 1e-2] and sqrt(kappa) finite and >= 0")

// set prepares the population for (gmu, t_s).
func (d *MetastableDirect) set(gmu, lnTs float64) {
	s := d.s
	pop := population{
		bornK:     s.F / (s.Alpha * (s.Alpha + s.Gamma*gmu)),
		bornAlpha: s.Alpha,
		lnTCut:    math.Inf(1),
	}
	if lnTs < d.n.lnTHi {
		pop.decay = true
		pop.ts = math.Exp(lnTs)
		pop.gammaD = math.Exp(-2 * lnTs)
	}
	d.p.set(gmu, pop, math.Pow(s.P, -s.Kappa))
}

// Omega writes Omega_GW(f_i) for tension gmu and sqrt(kappa) = sqrtKappa
// into out. Omega is zero at frequencies below 2 a(t_s)/(alpha t_s), and
// everywhere when t_s precedes the formation of the network.
func (d *MetastableDirect) Omega(f []float64, gmu, sqrtKappa float64, out []float64) error {
	if !(sqrtKappa >= 0 && sqrtKappa < math.Inf(1)) {
		return fmt.Errorf("%w, got %g, %g", errMetaParams, gmu, sqrtKappa)
	}
	return d.OmegaTs(f, gmu, DecayTime(gmu, sqrtKappa), out)
}

// OmegaTs is Omega with the decay time t_s (s) given instead of
// sqrt(kappa); the spectrum depends on kappa only through t_s.
func (d *MetastableDirect) OmegaTs(f []float64, gmu, ts float64, out []float64) error {
	if len(out) != len(f) {
		return errLen
	}
	if !(gmu > 0 && gmu <= 1e-2 && ts > 0) {
		return fmt.Errorf("%w, got Gmu = %g, t_s = %g s", errMetaParams, gmu, ts)
	}
	if err := checkFreqs(f); err != nil {
		return err
	}
	if len(f) == 0 {
		return nil
	}
	if math.Log(ts) <= d.n.lnTLo {
		clear(out)
		return nil
	}
	d.set(gmu, math.Log(ts))
	d.p.omega(f, out)
	return nil
}

// CutoffFrequency returns 2 a(t_s)/(alpha t_s), below which the spectrum
// vanishes (the fundamental mode of the largest loop at t_s; today's
// 2/(alpha t0) when t_s is later).
func (d *MetastableDirect) CutoffFrequency(ts float64) float64 {
	lt := math.Min(math.Log(ts), d.n.lnTHi)
	lnA, _ := d.n.bg.LnAHT(lt)
	return 2 * math.Exp(lnA-lt) / d.s.Alpha
}

// checkFreqs reports the first frequency that is not positive and finite.
func checkFreqs(f []float64) error {
	for _, v := range f {
		if !(v > 0 && v < math.Inf(1)) {
			return fmt.Errorf("%w, got %g", errFreq, v)
		}
	}
	return nil
}
