// Package binaries implements the gravitational-wave background of a
// population of supermassive black-hole binaries as a power law in
// characteristic strain (Phinney 2001),
//
//	h_c(f) = A (f / f_yr)^((3 - gamma)/2),
//
// with gamma = 13/3 for circular binaries whose orbits shrink by GW emission
// alone, and an optional low-frequency turnover for environmental hardening
// (stellar scattering or gas driving the binaries through the lowest
// frequencies faster than GW emission would):
//
//	h_c(f) = A (f / f_yr)^((3 - gamma)/2) (1 + (f_bend / f)^kappa)^(-1/2).
//
// Far above f_bend the turnover factor is 1; far below it h_c grows as
// f^((3 - gamma + kappa)/2); at f = f_bend it is 2^(-1/2). The energy
// spectrum follows exactly (package gw):
//
//	ln Omega_GW(f) = ln(2 pi^2 / (3 H0^2)) + 2 ln f + 2 ln h_c(f).
package binaries

import (
	"errors"
	"fmt"
	"math"

	"tautline/internal/numeric"
	"tautline/models"
	"tautline/models/gw"
	"tautline/priors"
)

// DefaultH0 is the Hubble constant, in km/s/Mpc, used when Options.H0 is
// zero (Aghanim et al. 2020 value, as in docs/physics.md section 2).
const DefaultH0 = 67.4

// Gamma0 is the spectral index of GW-driven circular binaries, 13/3.
const Gamma0 = 13.0 / 3

// Options configures the power law.
type Options struct {
	// FixGamma fixes gamma to 13/3: the parameter stays in the list, with
	// default prior fixed(13/3).
	FixGamma bool
	// H0 is the Hubble constant in s^-1 (see gw.H0SI); zero means
	// DefaultH0 km/s/Mpc.
	H0 float64
	// Turnover adds the low-frequency bend, with two more parameters,
	// "log10_fbend" and "kappa".
	Turnover bool
	// FitTurnover gives the bend parameters broad default priors,
	// uniform(-9, -7) for log10 f_bend/Hz and uniform(0, 10) for kappa;
	// otherwise their default priors are fixed to FBend and Kappa.
	FitTurnover bool
	// FBend is the fixed bend frequency in Hz, required (> 0) when
	// Turnover is set and FitTurnover is not.
	FBend float64
	// Kappa is the fixed shape exponent; zero means 10/3 (from memory: the
	// value usually quoted for hardening by stellar scattering).
	Kappa float64
}

// PowerLaw is the SMBHB model. It implements models.Model.
type PowerLaw struct {
	h0     float64
	params []models.Param
}

// New returns the power-law model configured by o.
func New(o Options) (*PowerLaw, error) {
	h0 := o.H0
	if h0 == 0 {
		h0 = gw.H0SI(DefaultH0)
	}
	if o.FitTurnover && !o.Turnover {
		return nil, errors.New("binaries: FitTurnover set without Turnover")
	}
	if !(h0 > 1e-19 && h0 < 1e-16) {
		// 1e-19 to 1e-16 s^-1 is 3 to 3000 km/s/Mpc: anything else is a unit
		// mistake, most likely km/s/Mpc passed unconverted.
		return nil, fmt.Errorf("binaries: H0 = %g s^-1 is outside 1e-19..1e-16 s^-1; give it in s^-1 (gw.H0SI converts from km/s/Mpc)", o.H0)
	}
	gammaPrior := priors.Prior(priors.Uniform{Min: 0, Max: 7})
	if o.FixGamma {
		gammaPrior = priors.Fixed{Value: Gamma0}
	}
	ps := []models.Param{
		{Name: "log10_A", Label: `\log_{10} A`, Doc: "log10 of the characteristic-strain amplitude at f = 1/yr",
			Prior: priors.Uniform{Min: -18, Max: -11}},
		{Name: "gamma", Label: `\gamma`, Doc: "timing-residual spectral index; h_c ~ f^((3-gamma)/2)",
			Prior: gammaPrior},
	}
	if o.Turnover {
		fb, kappa := priors.Prior(priors.Uniform{Min: -9, Max: -7}), priors.Prior(priors.Uniform{Min: 0, Max: 10})
		if !o.FitTurnover {
			if !(o.FBend > 0) || math.IsInf(o.FBend, 0) {
				return nil, fmt.Errorf("binaries: turnover with a fixed bend needs FBend > 0 Hz, got %g", o.FBend)
			}
			k := o.Kappa
			if k == 0 {
				k = 10.0 / 3
			}
			if !numeric.Finite(k) {
				return nil, fmt.Errorf("binaries: Kappa must be finite, got %g", o.Kappa)
			}
			fb, kappa = priors.Fixed{Value: math.Log10(o.FBend)}, priors.Fixed{Value: k}
		}
		ps = append(ps,
			models.Param{Name: "log10_fbend", Label: `\log_{10} f_\mathrm{bend}`, Unit: "Hz",
				Doc: "log10 of the turnover (bend) frequency in Hz", Prior: fb},
			models.Param{Name: "kappa", Label: `\kappa`,
				Doc: "turnover shape exponent; below f_bend h_c gains a factor (f/f_bend)^(kappa/2)", Prior: kappa})
	}
	return &PowerLaw{h0: h0, params: ps}, nil
}

// Name returns "smbhb".
func (*PowerLaw) Name() string { return "smbhb" }

// Params returns log10_A, gamma and, with a turnover, log10_fbend and kappa.
// The slice is a copy.
func (p *PowerLaw) Params() []models.Param { return append([]models.Param(nil), p.params...) }

// H0 returns the Hubble constant the model uses, in s^-1.
func (p *PowerLaw) H0() float64 { return p.h0 }

// At prepares evaluation at the frequencies f (Hz, increasing, > 0).
func (p *PowerLaw) At(f []float64) (models.Spectrum, error) {
	if len(f) == 0 {
		return nil, errors.New("binaries: no frequencies")
	}
	s := &spectrum{
		nparam:   len(p.params),
		turnover: len(p.params) == 4,
		base:     make([]float64, len(f)),
		lnx:      make([]float64, len(f)),
		lnf:      make([]float64, len(f)),
	}
	lnC := math.Log(2 * math.Pi * math.Pi / (3 * p.h0 * p.h0))
	for i, fi := range f {
		if !(fi > 0) || math.IsInf(fi, 0) {
			return nil, fmt.Errorf("binaries: f[%d] = %g: must be a positive, finite frequency in Hz", i, fi)
		}
		if i > 0 && !(fi > f[i-1]) {
			return nil, fmt.Errorf("binaries: f[%d] = %g: frequencies must increase (f[%d] = %g)", i, fi, i-1, f[i-1])
		}
		s.lnf[i] = math.Log(fi)
		s.lnx[i] = math.Log(fi / gw.FYear)
		s.base[i] = lnC + 2*s.lnf[i]
	}
	return s, nil
}

var (
	errTheta  = errors.New("binaries: wrong number of parameters")
	errOut    = errors.New("binaries: output length differs from the number of frequencies")
	errDomain = errors.New("binaries: parameter is NaN or infinite")
)

type spectrum struct {
	nparam   int
	turnover bool
	base     []float64 // ln(2 pi^2/(3 H0^2)) + 2 ln f
	lnx      []float64 // ln(f / f_yr)
	lnf      []float64 // ln f
}

// LnOmega writes ln Omega_GW at each frequency. theta is log10_A, gamma
// and, with a turnover, log10_fbend and kappa.
func (s *spectrum) LnOmega(theta, out []float64) error {
	if len(theta) != s.nparam {
		return errTheta
	}
	if len(out) != len(s.base) {
		return errOut
	}
	for _, v := range theta {
		if !numeric.Finite(v) {
			return errDomain
		}
	}
	// 2 ln h_c = 2 ln A + (3 - gamma) ln(f/f_yr) [- ln(1 + (f_bend/f)^kappa)].
	twoLnA := 2 * math.Ln10 * theta[0]
	slope := 3 - theta[1]
	base, lnx := s.base[:len(out)], s.lnx[:len(out)]
	for i := range out {
		out[i] = base[i] + twoLnA + slope*lnx[i]
	}
	if s.turnover {
		lnfb, kappa := math.Ln10*theta[2], theta[3]
		lnf := s.lnf[:len(out)]
		for i := range out {
			out[i] -= softplus(kappa * (lnfb - lnf[i]))
		}
	}
	return nil
}

// softplus returns ln(1 + e^x) without overflow.
func softplus(x float64) float64 { return numeric.Softplus(x) }
