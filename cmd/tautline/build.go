package main

import (
	"embed"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"tautline/likelihood"
	"tautline/models"
	"tautline/models/binaries"
	"tautline/models/gw"
	"tautline/priors"
)

// demoFS holds the embedded demo data sets. They are simulated: an invented
// array of invented pulsars (see each data set's provenance line), made with
// `tautline simulate` by the commands in demo/README.md.
//
//go:embed demo
var demoFS embed.FS

// demoNames lists the embedded data sets, as used after "demo:".
var demoNames = map[string]string{
	"smbhb":   "demo/smbhb/smbhb.yaml",
	"strings": "demo/strings/strings.yaml",
}

// loadData reads a data set from a path or from an embedded demo
// ("demo:smbhb", "demo:strings").
func loadData(spec string) (*likelihood.Dataset, error) {
	if name, ok := strings.CutPrefix(spec, "demo:"); ok {
		path, ok := demoNames[name]
		if !ok {
			return nil, fmt.Errorf("%w: data %q: no such demo; want demo:smbhb or demo:strings", errUsage, spec)
		}
		sub, err := fs.Sub(demoFS, filepath.Dir(path))
		if err != nil {
			return nil, err
		}
		return likelihood.LoadFS(sub, filepath.Base(path))
	}
	if _, err := os.Stat(spec); err != nil {
		return nil, fmt.Errorf("data set %s: %w", spec, err)
	}
	return likelihood.Load(spec)
}

// defaultData is the demo that suits a model when no data set is named.
func defaultData(model string) string {
	if strings.Contains(model, "strings") {
		return "demo:strings"
	}
	return "demo:smbhb"
}

// modelNames lists the models the command line knows.
var modelNames = []string{"smbhb", "strings", "strings+smbhb"}

// buildModel constructs the model cfg names. progress, if not nil, receives
// log lines while a string-spectrum table is built.
func buildModel(cfg Config, logf func(format string, args ...any)) (models.Model, error) {
	c := cfg.Cosmology
	if !(c.H0 > 0 && c.H0 < 1000) || !(c.OmegaM > 0 && c.OmegaM < 1) || !(c.TCMB > 0) || !(c.Neff >= 0) {
		return nil, fmt.Errorf("%w: cosmology: want 0 < --h0 < 1000 km/s/Mpc, 0 < --omega-m < 1, --t-cmb > 0 K and --n-eff >= 0; got %g, %g, %g, %g",
			errUsage, c.H0, c.OmegaM, c.TCMB, c.Neff)
	}
	h0 := gw.H0SI(cfg.Cosmology.H0)
	smbhb := func() (models.Model, error) {
		o := binaries.Options{FixGamma: cfg.Model.FixGamma, H0: h0}
		switch cfg.Model.Turnover {
		case "", "none":
		case "fixed":
			if !(cfg.Model.FBend > 0) {
				return nil, fmt.Errorf("%w: --turnover fixed needs --f-bend > 0 (Hz), got %g", errUsage, cfg.Model.FBend)
			}
			o.Turnover, o.FBend, o.Kappa = true, cfg.Model.FBend, cfg.Model.TurnoverKappa
		case "fit":
			o.Turnover, o.FitTurnover = true, true
		default:
			return nil, fmt.Errorf("%w: --turnover %q: want none, fixed or fit", errUsage, cfg.Model.Turnover)
		}
		return binaries.New(o)
	}
	str := func() (models.Model, error) {
		return buildStrings(cfg, logf)
	}
	switch cfg.Model.Name {
	case "smbhb":
		return smbhb()
	case "strings":
		return str()
	case "strings+smbhb":
		s, err := str()
		if err != nil {
			return nil, err
		}
		b, err := smbhb()
		if err != nil {
			return nil, err
		}
		return models.Sum("strings+smbhb", s, b)
	}
	return nil, fmt.Errorf("%w: model %q: unknown; want one of %s", errUsage, cfg.Model.Name, strings.Join(modelNames, ", "))
}

// resolvePriors returns one prior per model parameter: the model's default
// unless the configuration names another.
func resolvePriors(m models.Model, given map[string]string) ([]priors.Prior, error) {
	ps := m.Params()
	out := make([]priors.Prior, len(ps))
	known := map[string]bool{}
	for i, p := range ps {
		known[p.Name] = true
		out[i] = p.Prior
		if s, ok := given[p.Name]; ok {
			pr, err := priors.Parse(s)
			if err != nil {
				return nil, fmt.Errorf("model.priors.%s: %w", p.Name, err)
			}
			out[i] = pr
		}
	}
	var unknown []string
	for k := range given {
		if !known[k] {
			unknown = append(unknown, k)
		}
	}
	if len(unknown) > 0 {
		sort.Strings(unknown)
		names := make([]string, len(ps))
		for i, p := range ps {
			names[i] = p.Name
		}
		return nil, fmt.Errorf("%w: model.priors: %q is not a parameter of model %s; its parameters are %s",
			errUsage, unknown[0], m.Name(), strings.Join(names, ", "))
	}
	return out, nil
}

// problem is a data set, a model with its priors, and the posterior that
// joins them.
type problem struct {
	data   *likelihood.Dataset
	model  models.Model
	priors []priors.Prior
	like   *likelihood.FreeSpectrum
	post   *likelihood.Posterior
}

// buildProblem loads the data and model of cfg and joins them.
func buildProblem(cfg Config, logf func(string, ...any)) (*problem, error) {
	ds, err := loadData(cfg.Data)
	if err != nil {
		return nil, err
	}
	like, err := likelihood.NewFreeSpectrum(ds, likelihood.Options{Bandwidth: cfg.Likelihood.Bandwidth})
	if err != nil {
		return nil, err
	}
	m, err := buildModel(cfg, logf)
	if err != nil {
		return nil, err
	}
	return newProblem(cfg, ds, like, m)
}

// newProblem joins a loaded data set, its free spectrum and a built model
// under the priors of cfg. The data set, free spectrum and model are not
// changed, so one of each can serve many problems (compare's units).
func newProblem(cfg Config, ds *likelihood.Dataset, like *likelihood.FreeSpectrum, m models.Model) (*problem, error) {
	p := problem{data: ds, like: like, model: m}
	var err error
	if p.priors, err = resolvePriors(m, cfg.Model.Priors); err != nil {
		return nil, err
	}
	if p.post, err = likelihood.NewPosterior(m, p.priors, ds, like, gw.H0SI(cfg.Cosmology.H0)); err != nil {
		return nil, err
	}
	return &p, nil
}
