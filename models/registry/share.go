package registry

import (
	"fmt"
	"strings"

	"tautline/models"
)

// SharePriors splits priors, keyed by parameter name, among the models
// built for a comparison: a prior applies to every model with that
// parameter. It returns each model's share, in the order of built, and an
// ErrUsage error naming a prior that no model can use.
func SharePriors(names []string, built []models.Model, priors map[string]string) ([]map[string]string, error) {
	shares := make([]map[string]string, len(built))
	used := map[string]bool{}
	for i, m := range built {
		shares[i] = map[string]string{}
		for _, p := range m.Params() {
			if v, ok := priors[p.Name]; ok {
				shares[i][p.Name] = v
				used[p.Name] = true
			}
		}
	}
	for k := range priors {
		if !used[k] {
			return nil, fmt.Errorf("%w: prior for %q: none of the models %s has that parameter", ErrUsage, k, strings.Join(names, ", "))
		}
	}
	return shares, nil
}

// ParseSpecs reads NAME=SPEC pairs, such as repeated prior options, into
// the map ResolvePriors takes; names and specs are trimmed, a later pair
// replaces an earlier one of the same name, and SPEC is not read here.
// Errors start with the pair at fault.
func ParseSpecs(list []string) (map[string]string, error) {
	out := map[string]string{}
	for _, s := range list {
		name, spec, ok := strings.Cut(s, "=")
		if !ok || strings.TrimSpace(name) == "" {
			return nil, fmt.Errorf("%q: want NAME=SPEC", s)
		}
		out[strings.TrimSpace(name)] = strings.TrimSpace(spec)
	}
	return out, nil
}

// ParseAssignments reads NAME=VALUE pairs into a map; VALUE is a number as
// ParseNumber reads it (a fraction such as 13/3 is allowed). Errors start
// with the pair or the name at fault.
func ParseAssignments(list []string) (map[string]float64, error) {
	out := map[string]float64{}
	for _, s := range list {
		name, val, ok := strings.Cut(s, "=")
		name, val = strings.TrimSpace(name), strings.TrimSpace(val)
		if !ok || name == "" || val == "" {
			return nil, fmt.Errorf("%q: want NAME=VALUE", s)
		}
		v, err := ParseNumber(val)
		if err != nil {
			return nil, fmt.Errorf("%s: %v", name, err)
		}
		out[name] = v
	}
	return out, nil
}

// Evaluate returns m's parameter vector for the NAME=VALUE pairs given (the
// rest from InjectionDefaults, as ParamValues) and ln Omega_GW at freqs
// for it.
func Evaluate(m models.Model, given []string, freqs []float64) (theta, lnOmega []float64, err error) {
	if theta, err = ParamValues(m, given); err != nil {
		return nil, nil, err
	}
	sp, err := m.At(freqs)
	if err != nil {
		return nil, nil, err
	}
	lnOmega = make([]float64, len(freqs))
	if err := sp.LnOmega(theta, lnOmega); err != nil {
		return nil, nil, fmt.Errorf("model %s at %s: %w", m.Name(), DescribeTheta(m.Params(), theta), err)
	}
	return theta, lnOmega, nil
}

// ParamMap returns theta keyed by m's parameter names.
func ParamMap(m models.Model, theta []float64) map[string]float64 {
	out := map[string]float64{}
	for i, p := range m.Params() {
		out[p.Name] = theta[i]
	}
	return out
}
