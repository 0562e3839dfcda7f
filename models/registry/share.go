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
