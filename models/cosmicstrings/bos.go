package cosmicstrings

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"

	"tautline/models/cosmology"
)

// Radiation-era loop density of Blanco-Pillado, Olum & Shlaer 2014 (PRD 89,
// 023512; from memory): n_r(l, t) = 0.18 / (t^(3/2) (l + Gamma Gmu t)^(5/2))
// for l <= 0.1 t.
const (
	bosRadiationA     = 0.18
	bosRadiationAlpha = 0.1
)

// BOSSettings fix everything about the simulation-calibrated loop network
// that is not sampled. The loop distribution itself (sizes at birth,
// production rate) is the one measured in the simulations, so it has no
// alpha and no F.
type BOSSettings struct {
	// Q is the spectral index of the emission (default QCusps).
	Q float64
	// Gamma is the total power of a loop in units of G mu^2 (default 50).
	Gamma float64
	// Kappa: the loop density scales as P^(-Kappa) (default 1).
	Kappa float64
	// Modes is the number of harmonics summed, default 1e5; 0 means all.
	Modes int
	// Cosmology is the background.
	Cosmology cosmology.Params
}

// DefaultBOSSettings returns cusps, Gamma = 50, kappa = 1, 1e5 modes and
// the fiducial background (Aghanim et al. 2020) with Standard Model degrees of freedom.
func DefaultBOSSettings() BOSSettings {
	return BOSSettings{Q: QCusps, Gamma: 50, Kappa: 1, Modes: 100000, Cosmology: cosmology.Fiducial()}
}

// Validate reports the first invalid field.
func (s BOSSettings) Validate() error {
	switch {
	case !(s.Q > 1 && s.Q < 10):
		return fmt.Errorf("strings: BOS settings: Q must be in (1, 10), got %g", s.Q)
	case !(s.Gamma > 0 && s.Gamma < 1e4):
		return fmt.Errorf("strings: BOS settings: Gamma must be in (0, 1e4), got %g", s.Gamma)
	case !(s.Kappa >= 0 && s.Kappa < 10):
		return fmt.Errorf("strings: BOS settings: Kappa must be in [0, 10), got %g", s.Kappa)
	case s.Modes < 0:
		return fmt.Errorf("strings: BOS settings: Modes must be >= 0 (0 = infinite), got %d", s.Modes)
	}
	return nil
}

// bosVersion changes whenever the BOS computation changes.
const bosVersion = 1

// TableHash identifies what a BOS table stores (ln Omega at P = 1, so
// Kappa is normalised to 1): the hex SHA-256 of the canonical settings.
func (s BOSSettings) TableHash() string {
	text := fmt.Sprintf("tautline-strings-bos v%d;q=%s;gamma=%s;modes=%d;%s",
		bosVersion, hexBits(s.Q), hexBits(s.Gamma), s.Modes, canonicalCosmology(s.Cosmology))
	h := sha256.Sum256([]byte(text))
	return hex.EncodeToString(h[:])
}

// String describes the settings for logs and reports.
func (s BOSSettings) String() string {
	return fmt.Sprintf("BOS loops: q=%.4g Gamma=%g kappa=%g modes=%s dof=%s", s.Q, s.Gamma, s.Kappa, modesText(s.Modes), dofName(s.Cosmology))
}

// A BOSDirect computes the spectrum of the loop distribution of
// Blanco-Pillado, Olum & Shlaer 2014 by quadrature (population in loops.go):
//
//   - loops born in the radiation era (t_b <= t_eq), whose density
//     0.18 t^(-3/2) (l + Gamma Gmu t)^(-5/2) (their radiation-era result)
//     is, in pure radiation, that of loops born at t_b = x/(0.1 + Gamma Gmu)
//     with density 0.18 t_b^(-3/2) x^(-5/2) and then diluted as a^-3
//     (x = l + Gamma Gmu t); we use the latter form on the real
//     background, which conserves loops through changes of g* and, after
//     t_eq, is their density of radiation-era loops surviving into the
//     matter era, 0.18 (2 H0 sqrt(Omega_r))^(3/2) (1+z)^3 x^(-5/2);
//   - loops of the matter era, (0.27 - 0.45 (l/t)^0.31)/(t^2 x^2) for
//     l <= 0.18 t, counted from t_eq on (common practice).
//
// It is not safe for concurrent use; Clone gives an independent one.
type BOSDirect struct {
	s BOSSettings
	p *popDirect
}

// NewBOSDirect builds the background for s.
func NewBOSDirect(s BOSSettings) (*BOSDirect, error) {
	return onBackground(s, s.Cosmology, newBOSOn)
}

func newBOSOn(s BOSSettings, bg expansion) (*BOSDirect, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	return &BOSDirect{s: s, p: newPopDirect(bg, s.Q, s.Gamma, s.Modes)}, nil
}

// Clone returns an independent BOSDirect sharing d's background.
func (d *BOSDirect) Clone() *BOSDirect { return &BOSDirect{s: d.s, p: d.p.clone()} }

// Settings returns the settings d was built with.
func (d *BOSDirect) Settings() BOSSettings { return d.s }

var errBOSParams = errors.New("strings: BOS: Gmu must be in (0, 1e-2] and P in (0, 1]")

func (d *BOSDirect) population(gmu float64, radiation, matter bool) population {
	pop := population{lnTCut: d.p.lnTeq, bornAlpha: bosRadiationAlpha, matter: matter}
	if radiation {
		pop.bornK = bosRadiationA * math.Pow(bosRadiationAlpha+d.s.Gamma*gmu, -2.5)
	}
	return pop
}

// Omega writes Omega_GW(f_i) for tension gmu and reconnection probability
// p into out.
func (d *BOSDirect) Omega(f []float64, gmu, p float64, out []float64) error {
	return d.omegaParts(f, gmu, p, true, true, out)
}

func (d *BOSDirect) omegaParts(f []float64, gmu, p float64, radiation, matter bool, out []float64) error {
	if len(out) != len(f) {
		return errLen
	}
	if !(gmu > 0 && gmu <= 1e-2 && p > 0 && p <= 1) {
		return fmt.Errorf("%w, got %g, %g", errBOSParams, gmu, p)
	}
	if err := checkFreqs(f); err != nil {
		return err
	}
	if len(f) == 0 {
		return nil
	}
	d.p.set(gmu, d.population(gmu, radiation, matter), math.Pow(p, -d.s.Kappa))
	d.p.omega(f, out)
	return nil
}
