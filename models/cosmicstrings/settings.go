package cosmicstrings

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"

	"tautline/models/cosmology"
)

// Loop-production treatments accepted in Settings.CEff.
const (
	// CEffVOS solves the velocity-dependent one-scale equations on the
	// background (smooth in time; the default).
	CEffVOS = "vos"
	// CEffStep uses the published scaling values, 5.4 for loops born before
	// matter-radiation equality and 0.39 after (a step in t_i).
	CEffStep = "step"
)

// Spectral indices of the loop emission, Gamma_k propto k^(-q).
const (
	QCusps    = 4.0 / 3.0
	QKinks    = 5.0 / 3.0
	QKinkKink = 2.0
)

// Scaling values of C_eff used by CEffStep (published values, from memory;
// the VOS equations reproduce them within a few per cent).
const (
	CEffRadiation = 5.4
	CEffMatter    = 0.39
)

// physicsVersion changes whenever the computation behind a table changes, so
// that cached tables built by older code are not reused.
const physicsVersion = 2

// Settings fix everything about the loop network that is not sampled.
type Settings struct {
	// Q is the spectral index of the emission, q > 1: QCusps (default),
	// QKinks, QKinkKink or any other value.
	Q float64
	// Gamma is the total power of a loop in units of G mu^2 (default 50).
	Gamma float64
	// F is the fraction of loop-production energy in large loops (0.1).
	F float64
	// Kappa sets the reconnection dependence: loop density propto P^(-Kappa)
	// (default 1).
	Kappa float64
	// CEff is CEffVOS (default) or CEffStep.
	CEff string
	// Modes is the number of harmonics summed, default 1e5; 0 means the
	// N -> infinity limit.
	Modes int
	// Cosmology is the background; its DOF field selects standard-model or
	// constant degrees of freedom.
	Cosmology cosmology.Params
}

// DefaultSettings returns cusps (q = 4/3), Gamma = 50, F = 0.1, kappa = 1,
// VOS loop production, 1e5 modes and the fiducial background (Aghanim et al. 2020) with
// Standard Model degrees of freedom.
func DefaultSettings() Settings {
	return Settings{
		Q: QCusps, Gamma: 50, F: 0.1, Kappa: 1, CEff: CEffVOS, Modes: 100000,
		Cosmology: cosmology.Fiducial(),
	}
}

// Validate reports the first invalid field.
func (s Settings) Validate() error {
	switch {
	case !(s.Q > 1 && s.Q < 10):
		return fmt.Errorf("strings: settings: Q must be in (1, 10), got %g", s.Q)
	case !(s.Gamma > 0 && s.Gamma < 1e4):
		return fmt.Errorf("strings: settings: Gamma must be in (0, 1e4), got %g", s.Gamma)
	case !(s.F > 0 && s.F <= 1):
		return fmt.Errorf("strings: settings: F must be in (0, 1], got %g", s.F)
	case !(s.Kappa >= 0 && s.Kappa < 10):
		return fmt.Errorf("strings: settings: Kappa must be in [0, 10), got %g", s.Kappa)
	case s.CEff != CEffVOS && s.CEff != CEffStep:
		return fmt.Errorf("strings: settings: CEff must be %q or %q, got %q", CEffVOS, CEffStep, s.CEff)
	case s.Modes < 0:
		return fmt.Errorf("strings: settings: Modes must be >= 0 (0 = infinite), got %d", s.Modes)
	}
	return nil
}

// canonical returns a stable text form of s; the cosmology's empty DOF is
// normalised to its default.
func (s Settings) canonical() string {
	g := hexBits
	return fmt.Sprintf("tautline-strings v%d;q=%s;gamma=%s;F=%s;kappa=%s;ceff=%s;modes=%d;%s",
		physicsVersion, g(s.Q), g(s.Gamma), g(s.F), g(s.Kappa), s.CEff, s.Modes, canonicalCosmology(s.Cosmology))
}

// canonicalCosmology is the stable text form of c that settings hashes
// end with.
func canonicalCosmology(c cosmology.Params) string {
	g := hexBits
	return fmt.Sprintf("H0=%s;Om=%s;T=%s;Neff=%s;dof=%s", g(c.H0), g(c.OmegaM), g(c.TCMB), g(c.Neff), dofName(c))
}

// hexBits writes v exactly, as the hex of its IEEE 754 bits.
func hexBits(v float64) string { return fmt.Sprintf("%x", math.Float64bits(v)) }

// dofName is c's degrees-of-freedom choice, the empty default normalised.
func dofName(c cosmology.Params) string {
	if c.DOF == "" {
		return cosmology.DOFStandardModel
	}
	return c.DOF
}

// modesText describes a number of summed harmonics (0: all of them).
func modesText(n int) string {
	if n > 0 {
		return fmt.Sprint(n)
	}
	return "infinite"
}

// Hash identifies the settings (and the version of the computation): the
// hex SHA-256 of their canonical form. Tables are keyed by TableHash.
func (s Settings) Hash() string {
	h := sha256.Sum256([]byte(s.canonical()))
	return hex.EncodeToString(h[:])
}

// TableHash identifies what a Table stores: Hash with Kappa set to 1. The
// table holds ln Omega at P = 1, where P^(-kappa) = 1 for every kappa, so
// one table serves all kappa (the Model applies -kappa ln P). Normalising
// Kappa rather than dropping it keeps the hash of tables built for
// kappa = 1, the embedded one included.
func (s Settings) TableHash() string {
	s.Kappa = 1
	return s.Hash()
}

// String describes the settings for logs and reports.
func (s Settings) String() string {
	return fmt.Sprintf("q=%.4g Gamma=%g F=%g kappa=%g C_eff=%s modes=%s dof=%s",
		s.Q, s.Gamma, s.F, s.Kappa, s.CEff, modesText(s.Modes), dofName(s.Cosmology))
}
