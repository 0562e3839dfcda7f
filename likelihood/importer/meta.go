package importer

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"tautline/likelihood"
)

// A Unit says what the numbers of an input file are.
type Unit string

// The units an input may be in. All are affine in log10(rho/s), so a density
// over any of them is, up to a constant factor, the density over log10 rho.
const (
	// Log10RhoS is log10(rho / s), tautline's own unit.
	Log10RhoS Unit = "log10-rho-s"
	// Log10RhoNS is log10(rho / ns): log10(rho/s) = x - 9.
	Log10RhoNS Unit = "log10-rho-ns"
	// LnRhoS is ln(rho / s): log10(rho/s) = x / ln 10.
	LnRhoS Unit = "ln-rho-s"
	// Log10PSD is log10 of the timing-residual PSD S(f) in s^3: with
	// rho^2 = S/T (docs/physics.md section 5),
	// log10(rho/s) = (x - log10(T/s)) / 2.
	Log10PSD Unit = "log10-psd-s3"
)

// Units lists the accepted units.
var Units = []Unit{Log10RhoS, Log10RhoNS, LnRhoS, Log10PSD}

// ParseUnit returns the unit named s; the empty string is Log10RhoS.
func ParseUnit(s string) (Unit, error) {
	if s == "" {
		return Log10RhoS, nil
	}
	for _, u := range Units {
		if string(u) == s {
			return u, nil
		}
	}
	names := make([]string, len(Units))
	for i, u := range Units {
		names[i] = string(u)
	}
	return "", fmt.Errorf("importer: unit %q: must be one of %s", s, strings.Join(names, ", "))
}

// converter maps values in unit u to log10(rho/s); scale is the factor by
// which differences (interval widths) change.
type converter struct {
	u     Unit
	span  float64
	lgT   float64
	scale float64
}

func newConverter(u Unit, span float64) converter {
	c := converter{u: u, span: span, lgT: math.Log10(span), scale: 1}
	switch u {
	case LnRhoS:
		c.scale = 1 / math.Ln10
	case Log10PSD:
		c.scale = 0.5
	}
	return c
}

// to converts one value. The identity leaves the bits untouched.
func (c converter) to(x float64) float64 {
	switch c.u {
	case Log10RhoNS:
		return x - 9
	case LnRhoS:
		return x / math.Ln10
	case Log10PSD:
		return 0.5 * (x - c.lgT)
	}
	return x
}

// describe says what the conversion did, for the provenance; "" for none.
func (c converter) describe() string {
	switch c.u {
	case Log10RhoNS:
		return "values given as log10(rho/ns), converted to log10(rho/s) by subtracting 9"
	case LnRhoS:
		return "values given as ln(rho/s), converted to log10(rho/s) by dividing by ln 10"
	case Log10PSD:
		return fmt.Sprintf("values given as log10 of the residual PSD S in s^3, converted to log10(rho/s) = (log10 S - log10 T)/2 with T = %s s (rho^2 = S/T)", num(c.span))
	}
	return ""
}

// A Meta is what an input file cannot say about its data set.
type Meta struct {
	// Name names the data set (and the files written for it): letters,
	// digits, '.', '_' and '-'.
	Name string
	// Provenance is one line saying where the data come from; simulated
	// data must say so. The importer appends what it did.
	Provenance string
	// Span is the time span T of the observations in s (see
	// gw.JulianYear for years).
	Span float64
	// Harmonics, when > 0, sets n bins at f_i = i/T, i = 1..n; otherwise
	// Freqs lists the bin frequencies in Hz (strictly increasing), which
	// must be i/T unless Irregular.
	Harmonics int
	Freqs     []float64
	Irregular bool
	// PriorMin and PriorMax bound the uniform prior on log10(rho/s) under
	// which the original analysis made its posteriors (always in
	// log10(rho/s), whatever the unit of the file).
	PriorMin, PriorMax float64
	// Unit is the unit of the file's values; "" means Log10RhoS.
	Unit Unit
}

// bins checks m and returns the bin frequencies.
func (m *Meta) bins() ([]float64, error) {
	fail := func(format string, a ...any) ([]float64, error) {
		return nil, fmt.Errorf("importer: "+format, a...)
	}
	switch {
	case m.Name == "":
		return fail("data set name: missing")
	case strings.TrimLeft(m.Name, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789._-") != "" || m.Name[0] == '.':
		return fail("data set name %q: use letters, digits, '.', '_' and '-' only, not starting with '.' (it names the files written)", m.Name)
	case strings.TrimSpace(m.Provenance) == "":
		return fail("data set %q: provenance: missing; say where the data come from (and that they are simulated, if so)", m.Name)
	case strings.ContainsAny(m.Provenance, "\r\n"):
		return fail("data set %q: provenance: must be one line", m.Name)
	case !(m.Span > 0) || math.IsInf(m.Span, 0):
		return fail("data set %q: span: must be a finite number of seconds > 0, got %g", m.Name, m.Span)
	case !finite(m.PriorMin) || !finite(m.PriorMax) || m.PriorMin >= m.PriorMax:
		return fail("data set %q: prior range of log10(rho/s): need finite lo < hi, got [%g, %g]", m.Name, m.PriorMin, m.PriorMax)
	case m.Harmonics > 0 && len(m.Freqs) > 0:
		return fail("data set %q: give the number of harmonics or the list of frequencies, not both", m.Name)
	case m.Harmonics > 1<<16:
		return fail("data set %q: %d harmonics is more than the %d supported", m.Name, m.Harmonics, 1<<16)
	case m.Harmonics < 0 || m.Harmonics == 0 && len(m.Freqs) == 0:
		return fail("data set %q: bins: give the number of harmonics (f_i = i/T) or list the frequencies", m.Name)
	case m.Harmonics > 0 && m.Irregular:
		return fail("data set %q: irregular frequencies must be listed", m.Name)
	}
	if _, err := ParseUnit(string(m.Unit)); err != nil {
		return nil, err
	}
	if m.Harmonics > 0 {
		f := make([]float64, m.Harmonics)
		for i := range f {
			f[i] = float64(i+1) / m.Span
		}
		return f, nil
	}
	f := append([]float64(nil), m.Freqs...)
	probe := &likelihood.Dataset{Name: m.Name, Span: m.Span, Freqs: f, Irregular: m.Irregular,
		PriorMin: m.PriorMin, PriorMax: m.PriorMax, Bins: make([]likelihood.Bin, len(f))}
	for i := range probe.Bins {
		probe.Bins[i] = likelihood.Bin{Kind: likelihood.Gaussian, Mean: m.PriorMin, SD: 1}
	}
	if err := probe.Validate(); err != nil {
		return nil, errors.New("importer: " + strings.TrimPrefix(err.Error(), "likelihood: "))
	}
	return f, nil
}

func (m *Meta) converter() converter {
	u := m.Unit
	if u == "" {
		u = Log10RhoS
	}
	return newConverter(u, m.Span)
}

// dataset assembles and validates the data set; steps are appended to the
// provenance.
func (m *Meta) dataset(freqs []float64, bins []likelihood.Bin, steps []string) (*likelihood.Dataset, error) {
	prov := strings.TrimSpace(m.Provenance)
	if len(steps) > 0 {
		prov += "; imported by tautline: " + strings.Join(steps, "; ")
	}
	ds := &likelihood.Dataset{
		Name: m.Name, Provenance: prov, Span: m.Span, Freqs: freqs, Irregular: m.Irregular,
		PriorMin: m.PriorMin, PriorMax: m.PriorMax, Bins: bins,
	}
	if err := ds.Validate(); err != nil {
		return nil, fmt.Errorf("importer: %w", err)
	}
	return ds, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
