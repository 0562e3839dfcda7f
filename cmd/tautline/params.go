package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"tautline/models"
)

// injectionDefaults are the parameter values `simulate` and `spectrum` use
// when none are given: a typical SMBHB amplitude with the circular-binary
// index, and a string network with Gmu = 2e-11, alpha = 0.1, P = 1.
var injectionDefaults = map[string]float64{
	"log10_A":     -14.6,
	"gamma":       13.0 / 3,
	"log10_Gmu":   math.Log10(2e-11),
	"log10_alpha": -1,
	"log10_P":     0,
}

// parseNumber reads a float or a fraction such as 13/3.
func parseNumber(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if a, b, ok := strings.Cut(s, "/"); ok {
		x, err1 := strconv.ParseFloat(strings.TrimSpace(a), 64)
		y, err2 := strconv.ParseFloat(strings.TrimSpace(b), 64)
		if err1 != nil || err2 != nil || y == 0 {
			return 0, fmt.Errorf("%q is not a number or a fraction", s)
		}
		return x / y, nil
	}
	x, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a finite number", s)
	}
	return x, nil
}

// paramValues returns a full parameter vector for m from NAME=VALUE pairs,
// filling the rest from injectionDefaults.
func paramValues(m models.Model, given []string) ([]float64, error) {
	ps := m.Params()
	idx := map[string]int{}
	theta := make([]float64, len(ps))
	for i, p := range ps {
		idx[p.Name] = i
		v, ok := injectionDefaults[p.Name]
		if !ok {
			v = math.NaN()
		}
		theta[i] = v
	}
	for _, g := range given {
		k, v, ok := strings.Cut(g, "=")
		if !ok {
			return nil, fmt.Errorf("%w: --param %q: want NAME=VALUE", errUsage, g)
		}
		i, ok := idx[strings.TrimSpace(k)]
		if !ok {
			return nil, fmt.Errorf("%w: --param %q: model %s has no parameter %q; its parameters are %s", errUsage, g, m.Name(), k, paramList(m))
		}
		x, err := parseNumber(v)
		if err != nil {
			return nil, fmt.Errorf("%w: --param %s: %v", errUsage, k, err)
		}
		theta[i] = x
	}
	for i, p := range ps {
		if math.IsNaN(theta[i]) {
			return nil, fmt.Errorf("%w: parameter %s has no default value; give it with --param %s=VALUE", errUsage, p.Name, p.Name)
		}
	}
	return theta, nil
}

func paramList(m models.Model) string {
	var names []string
	for _, p := range m.Params() {
		names = append(names, p.Name)
	}
	return strings.Join(names, ", ")
}

// describeTheta renders parameter values as "name=value, ...".
func describeTheta(ps []models.Param, theta []float64) string {
	parts := make([]string, len(ps))
	for i, p := range ps {
		parts[i] = fmt.Sprintf("%s=%.6g", p.Name, theta[i])
	}
	return strings.Join(parts, ", ")
}

// modelAt builds the configured model and evaluates ln Omega_GW at freqs
// for the parameters given as NAME=VALUE (the rest from injectionDefaults).
func modelAt(cfg Config, given []string, freqs []float64, logf func(string, ...any)) (models.Model, []float64, []float64, error) {
	m, err := buildModel(cfg, logf)
	if err != nil {
		return nil, nil, nil, err
	}
	theta, err := paramValues(m, given)
	if err != nil {
		return nil, nil, nil, err
	}
	sp, err := m.At(freqs)
	if err != nil {
		return nil, nil, nil, err
	}
	ln := make([]float64, len(freqs))
	if err := sp.LnOmega(theta, ln); err != nil {
		return nil, nil, nil, fmt.Errorf("model %s at %s: %w", m.Name(), describeTheta(m.Params(), theta), err)
	}
	return m, theta, ln, nil
}
