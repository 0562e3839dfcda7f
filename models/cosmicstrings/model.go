package cosmicstrings

import (
	"errors"
	"fmt"
	"math"

	"tautline/internal/numeric"
	"tautline/models"
	"tautline/priors"
)

// Parameter names, in the order LnOmega takes them.
const (
	ParamLog10Gmu   = "log10_Gmu"
	ParamLog10Alpha = "log10_alpha"
	ParamLog10P     = "log10_P"
)

// A Model is the cosmic-string loop network as a models.Model, evaluated
// either through a Table (fast, the default) or by the direct path.
type Model struct {
	table  *Table
	direct *Direct // prototype for the direct path; nil for the table
	kappa  float64 // loop density propto P^(-kappa)
}

// NewModel returns the tabulated (fast) model with the Kappa of
// t.Settings(), the settings t was built or loaded for (the table itself
// does not depend on Kappa).
func NewModel(t *Table) *Model { return &Model{table: t, kappa: t.s.Kappa} }

// NewDirectModel returns the model evaluated by direct quadrature at every
// call (tens of milliseconds per spectrum); for checks and for settings
// without a table, such as the step C_eff.
func NewDirectModel(s Settings) (*Model, error) {
	d, err := NewDirect(s)
	if err != nil {
		return nil, err
	}
	return &Model{direct: d, kappa: s.Kappa}, nil
}

// Name returns "strings".
func (m *Model) Name() string { return "strings" }

// Settings returns the fixed settings of the model.
func (m *Model) Settings() Settings {
	if m.table != nil {
		return m.table.s
	}
	return m.direct.Settings()
}

// Params lists log10_Gmu, log10_alpha, log10_P with their default priors
// (uniform over the table's domain in Gmu and alpha, and over 1e-3 <= P <= 1).
func (m *Model) Params() []models.Param {
	return []models.Param{
		{Name: ParamLog10Gmu, Label: `\log_{10} G\mu`, Doc: "dimensionless string tension", Prior: priors.Uniform{Min: -14, Max: -6}},
		{Name: ParamLog10Alpha, Label: `\log_{10} \alpha`, Doc: "loop length at birth as a fraction of cosmic time", Prior: priors.Uniform{Min: -5, Max: 0}},
		{Name: ParamLog10P, Label: `\log_{10} P`, Doc: "reconnection probability", Prior: priors.Uniform{Min: -3, Max: 0}},
	}
}

// Domain returns, per parameter in Params order, the range LnOmega
// accepts: the table's box in log10 Gmu and log10 alpha (the direct path:
// any Gmu, alpha <= 1), and log10 P <= 0 (P enters analytically).
// Priors must lie inside it, or the posterior would be cut off silently.
func (m *Model) Domain() [][2]float64 {
	inf := math.Inf(1)
	if m.table != nil {
		gl, gh, al, ah, _, _ := m.table.Domain()
		return [][2]float64{{gl, gh}, {al, ah}, {-inf, 0}}
	}
	return [][2]float64{{-inf, inf}, {-inf, 0}, {-inf, 0}}
}

// At prepares evaluation at the frequencies f (Hz, > 0). For the table it
// collapses the ln f direction once: each returned Spectrum holds
// ln Omega at its own frequencies on the (Gmu, alpha) grid, and a frequency
// outside the table's band (1e-11 to 1e-5 Hz) gives an error wrapping
// ErrFrequencyOutsideTable.
func (m *Model) At(f []float64) (models.Spectrum, error) {
	for i, v := range f {
		if !(v > 0 && v < math.Inf(1)) {
			return nil, fmt.Errorf("strings: frequency %d: must be positive and finite, got %g", i, v)
		}
	}
	if m.table == nil {
		return &directSpectrum{d: m.direct.Clone(), f: append([]float64(nil), f...), buf: make([]float64, len(f)), kappa: m.kappa}, nil
	}
	t := m.table
	nf := len(f)
	sp := &tableSpectrum{t: t, nf: nf, kappa: m.kappa, slice: make([]float64, t.nG*t.nA*nf)}
	for j, v := range f {
		if !(v >= tableFLo && v <= tableFHi) {
			return nil, frequencyError{v}
		}
		i0, w := numeric.Lagrange4Weights((math.Log(v)-t.f0)/tableLnFStep, t.nF)
		for node := range t.nG * t.nA {
			row := t.data[node*t.nF+i0:]
			sp.slice[node*nf+j] = w[0]*float64(row[0]) + w[1]*float64(row[1]) + w[2]*float64(row[2]) + w[3]*float64(row[3])
		}
	}
	return sp, nil
}

// tableSpectrum interpolates in (log10 Gmu, log10 alpha) with cubic
// Lagrange weights computed once per call; slice holds ln Omega at P = 1
// at each node for each frequency, laid out [node][frequency], and LnOmega
// adds -kappa ln P.
type tableSpectrum struct {
	t     *Table
	nf    int
	kappa float64
	slice []float64
}

var errTheta = errors.New("strings: theta must have 3 entries (log10_Gmu, log10_alpha, log10_P)")

// LnOmega implements models.Spectrum without allocating.
func (s *tableSpectrum) LnOmega(theta, out []float64) error {
	if len(theta) != 3 || len(out) != s.nf {
		return errTheta
	}
	lg, la, lp := theta[0], theta[1], theta[2]
	if !inDomain(lg, la, lp) {
		return ErrOutsideTable
	}
	t := s.t
	ig, wg := numeric.Lagrange4Weights((lg-t.g0)/tableGStep, t.nG)
	ia, wa := numeric.Lagrange4Weights((la-t.a0)/tableAStep, t.nA)
	shift := -s.kappa * math.Ln10 * lp
	for j := range out {
		out[j] = shift
	}
	nf := s.nf
	o := out[:nf]
	for a := range 4 {
		// The four alpha nodes of row a are adjacent: one pass over out.
		base := ((ig+a)*t.nA + ia) * nf
		r0 := s.slice[base : base+nf]
		r1 := s.slice[base+nf : base+2*nf]
		r2 := s.slice[base+2*nf : base+3*nf]
		r3 := s.slice[base+3*nf : base+4*nf]
		w0, w1, w2, w3 := wg[a]*wa[0], wg[a]*wa[1], wg[a]*wa[2], wg[a]*wa[3]
		r0, r1, r2, r3 = r0[:len(o)], r1[:len(o)], r2[:len(o)], r3[:len(o)]
		for j := range o {
			o[j] += w0*r0[j] + w1*r1[j] + w2*r2[j] + w3*r3[j]
		}
	}
	return nil
}

// directSpectrum evaluates the direct path at each call.
type directSpectrum struct {
	d     *Direct
	f     []float64
	buf   []float64
	kappa float64
}

// ErrOutsidePhysical is returned by the direct model's LnOmega when theta
// is outside the physical range (Gmu <= 1e-2, alpha <= 10, P <= 1).
var ErrOutsidePhysical = errors.New("strings: parameters outside the physical range")

func (s *directSpectrum) LnOmega(theta, out []float64) error {
	if len(theta) != 3 || len(out) != len(s.f) {
		return errTheta
	}
	gmu, alpha, p := math.Pow(10, theta[0]), math.Pow(10, theta[1]), math.Pow(10, theta[2])
	if !(gmu > 0 && gmu <= 1e-2 && alpha > 0 && alpha <= 10 && p > 0 && p <= 1) {
		return ErrOutsidePhysical
	}
	if err := s.d.Omega(s.f, gmu, alpha, 1, s.buf); err != nil {
		return ErrOutsidePhysical
	}
	shift := -s.kappa * math.Log(p)
	for i, v := range s.buf {
		out[i] = math.Log(v) + shift
	}
	return nil
}

var _ models.Model = (*Model)(nil)
