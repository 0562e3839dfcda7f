// Package registry names the gravitational-wave background models tautline
// can fit and builds them from plain settings: the supermassive black-hole
// binary power law (package binaries), the cosmic-string loop network in
// three forms (package cosmicstrings: the one-scale model of docs/physics.md
// section 3, metastable strings of section 21 and the simulation-calibrated
// loops of section 22) and sums of them (models.Sum). It also resolves priors given by parameter name and reads
// NAME=VALUE parameter lists.
//
// Adding a model is one entry in the table returned by Entries.
package registry

import (
	"errors"
	"fmt"
	"runtime"
	"strings"

	"tautline/models"
	"tautline/models/binaries"
	"tautline/models/cosmicstrings"
	"tautline/models/gw"
)

// ErrUsage marks errors in what the caller asked for (an unknown model
// name, a setting out of range, a parameter the model does not have), as
// opposed to failures while building. Its text, "usage", prefixes such
// errors' messages.
var ErrUsage = errors.New("usage")

// Settings are the fixed settings of every model the registry builds; each
// model reads the part that concerns it.
type Settings struct {
	// Name is the model's name, one of Names.
	Name string
	// Binaries configures the SMBHB power law.
	Binaries Binaries
	// Strings configures the string-network spectrum.
	Strings Strings
	// Cosmology is the background.
	Cosmology Cosmology
}

// Binaries holds the SMBHB model's fixed settings.
type Binaries struct {
	// FixGamma fixes the spectral index to 13/3.
	FixGamma bool
	// Turnover is the low-frequency bend: "" or "none", "fixed" (at FBend
	// and TurnoverKappa) or "fit" (log10_fbend and kappa sampled).
	Turnover string
	// FBend is the fixed bend frequency in Hz.
	FBend float64
	// TurnoverKappa is the fixed shape exponent of the bend (0: 10/3).
	TurnoverKappa float64
}

// Strings holds the string-network models' fixed settings (see
// cosmicstrings.Settings, MetastableSettings and BOSSettings for their
// meaning). strings and strings-metastable read all of Q, Gamma, F, CEff,
// Kappa, Modes and DOF; strings-bos reads Q, Gamma, Kappa, Modes and DOF
// (its loop sizes and production rate are the simulations', so it has no
// F, C_eff or alpha).
type Strings struct {
	Q, Gamma, F float64
	// CEff is the loop-production efficiency, "vos" or "step".
	CEff  string
	Kappa float64
	// Modes is the number of harmonics summed; 0 adds the N -> infinity tail.
	Modes int
	// DOF is "standard-model" or "constant".
	DOF string
	// Direct evaluates the spectrum by quadrature instead of the table
	// (strings only).
	Direct bool
	// Alpha is the loop length at birth over cosmic time of
	// strings-metastable, fixed there rather than sampled; 0 means 0.1.
	Alpha float64
	// P is the reconnection probability of strings-metastable, fixed
	// there rather than sampled (the loop density scales as P^-Kappa);
	// 0 means 1.
	P float64
}

// Cosmology holds the background parameters.
type Cosmology struct {
	// H0 is the Hubble constant in km/s/Mpc.
	H0 float64
	// OmegaM is the matter density today.
	OmegaM float64
	// TCMB is the CMB temperature today in K.
	TCMB float64
	// Neff is the effective number of neutrino species.
	Neff float64
}

// Logf receives progress lines while a model is built (a string-spectrum
// table can take minutes); nil discards them.
type Logf func(format string, args ...any)

// An Entry is one model of the registry.
type Entry struct {
	// Name identifies the model, e.g. "strings+smbhb".
	Name string
	// Data is the embedded demo data set that suits the model, e.g.
	// "demo:strings".
	Data string
	// Build constructs the model from s (whose Cosmology is already checked).
	Build func(s Settings, logf Logf) (models.Model, error)
}

// Entries is the table of models, in the order they are listed to users.
func Entries() []Entry {
	return []Entry{
		{Name: "smbhb", Data: "demo:smbhb", Build: buildBinaries},
		{Name: "strings", Data: "demo:strings", Build: buildStrings},
		{Name: "strings+smbhb", Data: "demo:strings", Build: sum("strings+smbhb", buildStrings, buildBinaries)},
		{Name: "strings-metastable", Data: "demo:strings", Build: buildMetastable},
		{Name: "strings-metastable+smbhb", Data: "demo:strings", Build: sum("strings-metastable+smbhb", buildMetastable, buildBinaries)},
		{Name: "strings-bos", Data: "demo:strings", Build: buildBOS},
		{Name: "strings-bos+smbhb", Data: "demo:strings", Build: sum("strings-bos+smbhb", buildBOS, buildBinaries)},
	}
}

// Names lists the models' names, in table order.
func Names() []string {
	var out []string
	for _, e := range Entries() {
		out = append(out, e.Name)
	}
	return out
}

// Lookup returns the entry named name.
func Lookup(name string) (Entry, bool) {
	for _, e := range Entries() {
		if e.Name == name {
			return e, true
		}
	}
	return Entry{}, false
}

// DefaultData is the demo data set that suits a model when no data set is
// named; names not in the table get the SMBHB demo unless they mention
// strings.
func DefaultData(name string) string {
	if e, ok := Lookup(name); ok {
		return e.Data
	}
	if strings.Contains(name, "strings") {
		return "demo:strings"
	}
	return "demo:smbhb"
}

// Build checks the cosmology and constructs the model s names. logf, if not
// nil, receives log lines while a string-spectrum table is built.
func Build(s Settings, logf Logf) (models.Model, error) {
	c := s.Cosmology
	if !(c.H0 > 0 && c.H0 < 1000) || !(c.OmegaM > 0 && c.OmegaM < 1) || !(c.TCMB > 0) || !(c.Neff >= 0) {
		return nil, fmt.Errorf("%w: cosmology: want 0 < --h0 < 1000 km/s/Mpc, 0 < --omega-m < 1, --t-cmb > 0 K and --n-eff >= 0; got %g, %g, %g, %g",
			ErrUsage, c.H0, c.OmegaM, c.TCMB, c.Neff)
	}
	e, ok := Lookup(s.Name)
	if !ok {
		return nil, fmt.Errorf("%w: model %q: unknown; want one of %s", ErrUsage, s.Name, strings.Join(Names(), ", "))
	}
	if logf == nil {
		logf = func(string, ...any) {}
	}
	return e.Build(s, logf)
}

// sum builds a model that adds the spectra of parts, built in order.
func sum(name string, parts ...func(Settings, Logf) (models.Model, error)) func(Settings, Logf) (models.Model, error) {
	return func(s Settings, logf Logf) (models.Model, error) {
		ms := make([]models.Model, len(parts))
		for i, p := range parts {
			m, err := p(s, logf)
			if err != nil {
				return nil, err
			}
			ms[i] = m
		}
		return models.Sum(name, ms...)
	}
}

func buildBinaries(s Settings, _ Logf) (models.Model, error) {
	b := s.Binaries
	o := binaries.Options{FixGamma: b.FixGamma, H0: gw.H0SI(s.Cosmology.H0)}
	switch b.Turnover {
	case "", "none":
	case "fixed":
		if !(b.FBend > 0) {
			return nil, fmt.Errorf("%w: --turnover fixed needs --f-bend > 0 (Hz), got %g", ErrUsage, b.FBend)
		}
		o.Turnover, o.FBend, o.Kappa = true, b.FBend, b.TurnoverKappa
	case "fit":
		o.Turnover, o.FitTurnover = true, true
	default:
		return nil, fmt.Errorf("%w: --turnover %q: want none, fixed or fit", ErrUsage, b.Turnover)
	}
	return binaries.New(o)
}

// StringSettings turns s into the string model's settings.
func StringSettings(s Settings) cosmicstrings.Settings {
	cs := cosmicstrings.DefaultSettings()
	sc := s.Strings
	cs.Q, cs.Gamma, cs.F, cs.Kappa, cs.CEff, cs.Modes = sc.Q, sc.Gamma, sc.F, sc.Kappa, sc.CEff, sc.Modes
	cs.Cosmology.H0, cs.Cosmology.OmegaM, cs.Cosmology.DOF = s.Cosmology.H0, s.Cosmology.OmegaM, sc.DOF
	cs.Cosmology.TCMB, cs.Cosmology.Neff = s.Cosmology.TCMB, s.Cosmology.Neff
	return cs
}

// buildStrings returns the string-network model: the certified table for
// the settings (embedded when they are the defaults, else from the user
// cache, else built in parallel and cached), or the direct quadrature when
// Direct is set and for the step C_eff, whose kink a table would smooth
// over.
func buildStrings(st Settings, logf Logf) (models.Model, error) {
	s := StringSettings(st)
	if st.Strings.Direct || s.CEff == cosmicstrings.CEffStep {
		if !st.Strings.Direct {
			logf("loop_production step: using the direct quadrature (slow), since a table would smooth the step's kink")
		}
		return cosmicstrings.NewDirectModel(s)
	}
	t, err := loadTable(logf, "string-spectrum", func(opt cosmicstrings.BuildOptions) (*cosmicstrings.Table, error) {
		return cosmicstrings.LoadTable(s, "", opt)
	}, func(t *cosmicstrings.Table) fmt.Stringer { return t.Certificate() })
	if err != nil {
		return nil, err
	}
	return cosmicstrings.NewModel(t), nil
}

// MetastableSettings turns s into the metastable model's settings: the
// string settings of StringSettings with the fixed Alpha and P.
func MetastableSettings(s Settings) cosmicstrings.MetastableSettings {
	ms := cosmicstrings.DefaultMetastableSettings()
	ms.Settings = StringSettings(s)
	if a := s.Strings.Alpha; a != 0 {
		ms.Alpha = a
	}
	if p := s.Strings.P; p != 0 {
		ms.P = p
	}
	return ms
}

// BOSSettings turns s into the simulation-calibrated model's settings.
func BOSSettings(s Settings) cosmicstrings.BOSSettings {
	cs := StringSettings(s)
	return cosmicstrings.BOSSettings{Q: cs.Q, Gamma: cs.Gamma, Kappa: cs.Kappa, Modes: cs.Modes, Cosmology: cs.Cosmology}
}

// buildMetastable returns the metastable string model through its
// certified table (embedded for the defaults, else cached or built).
func buildMetastable(st Settings, logf Logf) (models.Model, error) {
	if st.Strings.Direct {
		return nil, fmt.Errorf("%w: model strings-metastable: no direct-quadrature model (drop the direct option)", ErrUsage)
	}
	s := MetastableSettings(st)
	if s.CEff == cosmicstrings.CEffStep {
		return nil, fmt.Errorf("%w: model strings-metastable: loop_production step has no table (its kink would be smoothed over); use vos", ErrUsage)
	}
	if err := s.Validate(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrUsage, err)
	}
	t, err := loadTable(logf, "metastable string-spectrum", func(opt cosmicstrings.BuildOptions) (*cosmicstrings.MetastableTable, error) {
		return cosmicstrings.LoadMetastableTable(s, "", opt)
	}, func(t *cosmicstrings.MetastableTable) fmt.Stringer { return t.Certificate() })
	if err != nil {
		return nil, err
	}
	return cosmicstrings.NewMetastableModel(t), nil
}

// buildBOS returns the simulation-calibrated loop model through its
// certified table.
func buildBOS(st Settings, logf Logf) (models.Model, error) {
	if st.Strings.Direct {
		return nil, fmt.Errorf("%w: model strings-bos: no direct-quadrature model (drop the direct option)", ErrUsage)
	}
	s := BOSSettings(st)
	if err := s.Validate(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrUsage, err)
	}
	t, err := loadTable(logf, "BOS string-spectrum", func(opt cosmicstrings.BuildOptions) (*cosmicstrings.BOSTable, error) {
		return cosmicstrings.LoadBOSTable(s, "", opt)
	}, func(t *cosmicstrings.BOSTable) fmt.Stringer { return t.Certificate() })
	if err != nil {
		return nil, err
	}
	return cosmicstrings.NewBOSModel(t), nil
}

// loadTable runs load (one of the cosmicstrings table loaders) on all
// CPUs, logging the progress of a build and the certificate of a freshly
// built table; a table that could not be cached is used with a warning.
func loadTable[T any](logf Logf, what string, load func(cosmicstrings.BuildOptions) (T, error), cert func(T) fmt.Stringer) (T, error) {
	last := -1
	t, err := load(cosmicstrings.BuildOptions{
		Workers: runtime.NumCPU(), Seed: 1,
		Progress: func(done, total int) {
			if pct := 10 * done / total; pct != last {
				last = pct
				logf("building the %s table for these settings: %d%% (%d of %d nodes)", what, 10*pct, done, total)
			}
		},
	})
	if errors.Is(err, cosmicstrings.ErrCacheWrite) {
		logf("warning: %v (the table is used but will be rebuilt next time)", err)
		err = nil
	}
	if err != nil {
		return t, err
	}
	if last >= 0 {
		logf("%s table certified: %s", what, cert(t))
	}
	return t, nil
}
