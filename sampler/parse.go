package sampler

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ParseCriteria reads convergence criteria written as comma-separated
// KEY=VALUE pairs, e.g. "ess=5000,tau=50,rhat=1.01": ess is the least
// effective sample size, tau the least chain length in autocorrelation
// times, rhat the largest split R-hat (above 1). An empty text sets no
// criterion. Errors say what is wrong with which pair, not where the text
// came from.
func ParseCriteria(s string) (Criteria, error) {
	var c Criteria
	if strings.TrimSpace(s) == "" {
		return c, nil
	}
	for _, part := range strings.Split(s, ",") {
		k, v, ok := strings.Cut(strings.TrimSpace(part), "=")
		if !ok {
			return c, fmt.Errorf("%q is not KEY=VALUE (keys: ess, tau, rhat)", part)
		}
		x, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
		if err != nil || !(x > 0) || math.IsInf(x, 0) {
			return c, fmt.Errorf("%s must be a positive number, got %q", k, v)
		}
		switch strings.TrimSpace(k) {
		case "ess":
			c.ESS = x
		case "tau":
			c.TauMultiple = x
		case "rhat":
			if x <= 1 {
				return c, fmt.Errorf("rhat must be above 1, got %g", x)
			}
			c.Rhat = x
		default:
			return c, fmt.Errorf("unknown criterion %q (keys: ess, tau, rhat)", k)
		}
	}
	return c, nil
}

// ParseMoves reads a move mixture for a target of dim dimensions:
// "stretch" (the stretch move, A = 2), "de" (differential evolution with
// its default scale for dim) or a weighted mix such as
// "stretch:0.8,de:0.2". An empty text or "stretch" gives nil, the
// Config.Moves default.
func ParseMoves(s string, dim int) ([]WeightedMove, error) {
	if strings.TrimSpace(s) == "" || strings.TrimSpace(s) == "stretch" {
		return nil, nil
	}
	var out []WeightedMove
	for _, part := range strings.Split(s, ",") {
		name, ws, hasW := strings.Cut(strings.TrimSpace(part), ":")
		w := 1.0
		if hasW {
			x, err := strconv.ParseFloat(ws, 64)
			if err != nil || !(x > 0) {
				return nil, fmt.Errorf("weight of %s must be a positive number, got %q", name, ws)
			}
			w = x
		}
		var m Move
		switch name {
		case "stretch":
			m = Stretch{A: 2}
		case "de":
			m = DefaultDiffEvolution(dim)
		default:
			return nil, fmt.Errorf("unknown move %q; want stretch or de", name)
		}
		out = append(out, WeightedMove{Move: m, Weight: w})
	}
	return out, nil
}
