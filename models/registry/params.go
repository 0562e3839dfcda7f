package registry

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"tautline/models"
	"tautline/priors"
)

// InjectionDefaults are the parameter values used when none are given: a
// typical SMBHB amplitude with the circular-binary index, and a string
// network with Gmu = 2e-11, alpha = 0.1, P = 1 and, when metastable,
// sqrt(kappa) = 8 (the middle of its default prior).
func InjectionDefaults() map[string]float64 {
	return map[string]float64{
		"log10_A":      -14.6,
		"gamma":        13.0 / 3,
		"log10_Gmu":    math.Log10(2e-11),
		"log10_alpha":  -1,
		"log10_P":      0,
		"sqrt_kappa_m": 8,
	}
}

// ResolvePriors returns one prior per parameter of m: the model's default
// unless given names another (given maps a parameter name to a prior in the
// syntax of priors.Parse). A name m does not have is an ErrUsage error.
func ResolvePriors(m models.Model, given map[string]string) ([]priors.Prior, error) {
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
		return nil, fmt.Errorf("%w: model.priors: %q is not a parameter of model %s; its parameters are %s",
			ErrUsage, unknown[0], m.Name(), ParamList(m))
	}
	return out, nil
}

// ParseNumber reads a finite float or a fraction such as 13/3.
func ParseNumber(s string) (float64, error) {
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

// ParamValues returns a full parameter vector for m from the NAME=VALUE
// pairs of the --param option, filling the rest from InjectionDefaults.
func ParamValues(m models.Model, given []string) ([]float64, error) {
	ps := m.Params()
	def := InjectionDefaults()
	idx := map[string]int{}
	theta := make([]float64, len(ps))
	for i, p := range ps {
		idx[p.Name] = i
		v, ok := def[p.Name]
		if !ok {
			v = math.NaN()
		}
		theta[i] = v
	}
	for _, g := range given {
		k, v, ok := strings.Cut(g, "=")
		if !ok {
			return nil, fmt.Errorf("%w: --param %q: want NAME=VALUE", ErrUsage, g)
		}
		i, ok := idx[strings.TrimSpace(k)]
		if !ok {
			return nil, fmt.Errorf("%w: --param %q: model %s has no parameter %q; its parameters are %s", ErrUsage, g, m.Name(), k, ParamList(m))
		}
		x, err := ParseNumber(v)
		if err != nil {
			return nil, fmt.Errorf("%w: --param %s: %v", ErrUsage, k, err)
		}
		theta[i] = x
	}
	for i, p := range ps {
		if math.IsNaN(theta[i]) {
			return nil, fmt.Errorf("%w: parameter %s has no default value; give it with --param %s=VALUE", ErrUsage, p.Name, p.Name)
		}
	}
	return theta, nil
}

// ParamList is m's parameter names, comma-separated.
func ParamList(m models.Model) string {
	var names []string
	for _, p := range m.Params() {
		names = append(names, p.Name)
	}
	return strings.Join(names, ", ")
}

// DescribeTheta renders parameter values as "name=value, ...".
func DescribeTheta(ps []models.Param, theta []float64) string {
	parts := make([]string, len(ps))
	for i, p := range ps {
		parts[i] = fmt.Sprintf("%s=%.6g", p.Name, theta[i])
	}
	return strings.Join(parts, ", ")
}
