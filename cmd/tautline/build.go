package main

import (
	"embed"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"tautline/likelihood"
	"tautline/models"
	"tautline/models/gw"
	"tautline/models/registry"
	"tautline/priors"
	"tautline/runconfig"
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
	"pair-a":  "demo/pair-a/pair-a.yaml",
	"pair-b":  "demo/pair-b/pair-b.yaml",
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

// buildModel constructs the model cfg names. logf, if not nil, receives
// log lines while a string-spectrum table is built.
func buildModel(cfg runconfig.Config, logf func(format string, args ...any)) (models.Model, error) {
	return registry.Build(cfg.ModelSettings(), logf)
}

// modelAt builds the configured model and evaluates ln Omega_GW at freqs
// for the parameters given as NAME=VALUE (the rest from the registry's
// injection defaults).
func modelAt(cfg runconfig.Config, given []string, freqs []float64, logf func(string, ...any)) (models.Model, []float64, []float64, error) {
	m, err := buildModel(cfg, logf)
	if err != nil {
		return nil, nil, nil, err
	}
	theta, ln, err := registry.Evaluate(m, given, freqs)
	return m, theta, ln, err
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
func buildProblem(cfg runconfig.Config, logf func(string, ...any)) (*problem, error) {
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
func newProblem(cfg runconfig.Config, ds *likelihood.Dataset, like *likelihood.FreeSpectrum, m models.Model) (*problem, error) {
	p := problem{data: ds, like: like, model: m}
	var err error
	if p.priors, err = registry.ResolvePriors(m, cfg.Model.Priors); err != nil {
		return nil, err
	}
	if p.post, err = likelihood.NewPosterior(m, p.priors, ds, like, gw.H0SI(cfg.Cosmology.H0)); err != nil {
		return nil, err
	}
	return &p, nil
}
