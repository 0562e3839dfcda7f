package main

import (
	"embed"
	"fmt"
	"io/fs"
	"os"
	"slices"
	"strings"

	"tautline/likelihood"
	"tautline/models"
	"tautline/models/registry"
	"tautline/runconfig"
)

// demoFS holds the embedded demo data sets. They are simulated: an invented
// array of invented pulsars (see each data set's provenance line), made with
// `tautline simulate` by the commands in demo/README.md.
//
//go:embed demo
var demoFS embed.FS

// loadData reads a data set from a path or from an embedded demo
// ("demo:NAME", NAME one of runconfig.Demos()).
func loadData(spec string) (*likelihood.Dataset, error) {
	if name, ok := strings.CutPrefix(spec, "demo:"); ok {
		if !slices.Contains(runconfig.Demos(), name) {
			return nil, fmt.Errorf("%w: data %q: no such demo; want one of demo:%s", errUsage, spec, strings.Join(runconfig.Demos(), ", demo:"))
		}
		sub, err := fs.Sub(demoFS, "demo/"+name)
		if err != nil {
			return nil, err
		}
		return likelihood.LoadFS(sub, name+".yaml")
	}
	if _, err := os.Stat(spec); err != nil {
		return nil, fmt.Errorf("data set %s: %w", spec, err)
	}
	return likelihood.Load(spec)
}

// modelAt builds the configured model and evaluates ln Omega_GW at freqs
// for the parameters given as NAME=VALUE (the rest from the registry's
// injection defaults).
func modelAt(cfg runconfig.Config, given []string, freqs []float64, logf func(string, ...any)) (models.Model, []float64, []float64, error) {
	m, err := registry.Build(cfg.ModelSettings(), logf)
	if err != nil {
		return nil, nil, nil, err
	}
	theta, ln, err := registry.Evaluate(m, given, freqs)
	return m, theta, ln, err
}

// buildProblem loads the data sets and model of cfg and joins them.
func buildProblem(cfg runconfig.Config, logf func(string, ...any)) (*runconfig.Problem, error) {
	return cfg.LoadProblem(loadData, logf)
}
