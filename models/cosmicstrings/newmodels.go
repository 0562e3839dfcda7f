package cosmicstrings

import (
	"fmt"
	"math"

	"tautline/models"
	"tautline/priors"
)

// Parameter names of the metastable and BOS models (log10_Gmu and log10_P
// are shared with Model).
const (
	// ParamSqrtKappaM is sqrt(kappa) = sqrt(m^2/mu), the monopole mass over
	// the square root of the string tension, which sets the decay rate
	// (not the reconnection exponent Settings.Kappa).
	ParamSqrtKappaM = "sqrt_kappa_m"
)

// A MetastableModel is the metastable string network as a models.Model with
// parameters log10_Gmu and sqrt_kappa_m, evaluated through a
// MetastableTable.
type MetastableModel struct{ t *MetastableTable }

// NewMetastableModel returns the tabulated metastable model.
func NewMetastableModel(t *MetastableTable) *MetastableModel { return &MetastableModel{t: t} }

// Name returns "strings-metastable".
func (m *MetastableModel) Name() string { return "strings-metastable" }

// Settings returns the fixed settings of the model.
func (m *MetastableModel) Settings() MetastableSettings { return m.t.s }

// Params lists log10_Gmu (uniform on [-14, -6]) and sqrt_kappa_m (uniform on
// [7, 9.5]).
func (m *MetastableModel) Params() []models.Param {
	return []models.Param{
		{Name: ParamLog10Gmu, Label: `\log_{10} G\mu`, Doc: "dimensionless string tension", Prior: priors.Uniform{Min: -14, Max: -6}},
		{Name: ParamSqrtKappaM, Label: `\sqrt{\kappa}`, Doc: "monopole mass over the square root of the string tension (sets the decay rate)", Prior: priors.Uniform{Min: DefaultSqrtKappaLo, Max: DefaultSqrtKappaHi}},
	}
}

// Domain returns [-14, -6] for log10_Gmu and [0, inf) for sqrt_kappa_m.
func (m *MetastableModel) Domain() [][2]float64 {
	return [][2]float64{{tableGLo, tableGHi}, {0, math.Inf(1)}}
}

// At prepares evaluation at f (Hz, within 1e-11..1e-5).
func (m *MetastableModel) At(f []float64) (models.Spectrum, error) {
	if _, err := tableLnF(f); err != nil {
		return nil, err
	}
	return &metaSpectrum{t: m.t, fr: m.t.newFreqs(f)}, nil
}

// metaSpectrum evaluates a MetastableTable at fixed frequencies; fr holds
// lnOmega's scratch, so a metaSpectrum serves one goroutine at a time (as
// models.Spectrum requires).
type metaSpectrum struct {
	t  *MetastableTable
	fr *metaFreqs
}

// LnOmega implements models.Spectrum without allocating; -Inf where the
// spectrum vanishes (below its cutoff).
func (s *metaSpectrum) LnOmega(theta, out []float64) error {
	if len(theta) != 2 || len(out) != len(s.fr.lnf) {
		return errGridTheta
	}
	return s.t.lnOmega(theta[0], theta[1], s.fr, out)
}

// tableLnF checks that f lies in the tables' band and returns ln f.
func tableLnF(f []float64) ([]float64, error) {
	lnf := make([]float64, len(f))
	for i, v := range f {
		if !(v > 0 && v < math.Inf(1)) {
			return nil, fmt.Errorf("strings: frequency %d: must be positive and finite, got %g", i, v)
		}
		if !(v >= tableFLo && v <= tableFHi) {
			return nil, frequencyError{v}
		}
		lnf[i] = math.Log(v)
	}
	return lnf, nil
}

// A BOSModel is the simulation-calibrated loop network as a models.Model
// with parameters log10_Gmu and log10_P, evaluated through a BOSTable. The
// loop sizes are those of the simulations, so it has no alpha.
type BOSModel struct{ t *BOSTable }

// NewBOSModel returns the tabulated BOS model.
func NewBOSModel(t *BOSTable) *BOSModel { return &BOSModel{t: t} }

// Name returns "strings-bos".
func (m *BOSModel) Name() string { return "strings-bos" }

// Settings returns the fixed settings of the model.
func (m *BOSModel) Settings() BOSSettings { return m.t.s }

// Params lists log10_Gmu (uniform on [-14, -6]) and log10_P (uniform on
// [-3, 0]).
func (m *BOSModel) Params() []models.Param {
	return []models.Param{
		{Name: ParamLog10Gmu, Label: `\log_{10} G\mu`, Doc: "dimensionless string tension", Prior: priors.Uniform{Min: -14, Max: -6}},
		{Name: ParamLog10P, Label: `\log_{10} P`, Doc: "reconnection probability", Prior: priors.Uniform{Min: -3, Max: 0}},
	}
}

// Domain returns [-14, -6] for log10_Gmu and (-inf, 0] for log10_P.
func (m *BOSModel) Domain() [][2]float64 {
	return [][2]float64{{tableGLo, tableGHi}, {math.Inf(-1), 0}}
}

// At collapses the table's ln f direction at f: the Spectrum then costs 4
// multiply-adds per frequency.
func (m *BOSModel) At(f []float64) (models.Spectrum, error) {
	lnf, err := tableLnF(f)
	if err != nil {
		return nil, err
	}
	nrow, mm := m.t.g.rows()
	sp := &bosSpectrum{t: m.t, nf: len(f), slice: make([]float64, nrow*len(f))}
	for j, l := range lnf {
		i0, w := bosAxisF.index(l)
		for r := range nrow {
			row := m.t.g.data[r*mm+i0:]
			sp.slice[r*len(f)+j] = w[0]*float64(row[0]) + w[1]*float64(row[1]) + w[2]*float64(row[2]) + w[3]*float64(row[3])
		}
	}
	return sp, nil
}

type bosSpectrum struct {
	t     *BOSTable
	nf    int
	slice []float64 // [Gmu node][frequency]
}

// LnOmega implements models.Spectrum without allocating.
func (s *bosSpectrum) LnOmega(theta, out []float64) error {
	if len(theta) != 2 || len(out) != s.nf {
		return errGridTheta
	}
	lg, lp := theta[0], theta[1]
	if !(lg >= tableGLo && lg <= tableGHi && lp <= 0 && lp > -math.MaxFloat64) {
		return ErrOutsideTable
	}
	ig, w := bosAxisG.index(lg)
	nf := s.nf
	r0 := s.slice[ig*nf : (ig+1)*nf]
	r1 := s.slice[(ig+1)*nf : (ig+2)*nf]
	r2 := s.slice[(ig+2)*nf : (ig+3)*nf]
	r3 := s.slice[(ig+3)*nf : (ig+4)*nf]
	shift := -s.t.s.Kappa * math.Ln10 * lp
	o := out[:nf]
	for j := range o {
		o[j] = shift + w[0]*r0[j] + w[1]*r1[j] + w[2]*r2[j] + w[3]*r3[j]
	}
	return nil
}

var (
	_ models.Model = (*MetastableModel)(nil)
	_ models.Model = (*BOSModel)(nil)
)
